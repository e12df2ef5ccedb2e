"""Config: TOML run descriptions, validated into frozen records and built into scenes.

A config is read with :mod:`tomllib`; every key is declared once in
:data:`SECTIONS` with its kind, unit, default and allowed range. Unknown keys fail
with the dotted path and the nearest valid key. The same declaration renders the
reference table in ``docs/config.md``. :func:`build_scene` turns a checked config into
the same API calls a Python user makes; nothing here reads files by itself except
:func:`load_config`, which is handed a path, and ``kind = "file"`` arrangements,
read from the path the config names.

Public names
------------
load_config, parse_config
    Read and check a TOML file or text -> :class:`RunConfig`.
RunConfig
    The checked config (frozen).
build_arrangement, build_scene
    The :class:`~dipolearray.arrange.Arrangement`, and the
    :class:`~dipolearray.scene.Scene`, a :class:`RunConfig` describes.
run_config
    Build, solve and (optionally) store one config; returns the solution and path.
run_config_sweep, sweep_output_path, sweep_rule_inputs
    Run (or resume) a config's ``[sweep]``; where it goes; the abscissa, fractions and
    permittivities of its state points for the mixing rules.
run_config_spectrum, dispersion_of, frequency_grid, spectrum_output_path
    The dielectric spectrum of a config over its ``[frequency]`` grid (spectral
    representation of the arrangement, the phases' permittivity models).
parse_assignment
    ``"key=value"`` (command-line ``--set``) into a dotted override.
ConfigScene
    Picklable scene maker for sweeps: the config with dotted keys overridden per state
    point (``{"population.0.polar": "1.5 um"}``).
SECTIONS, config_markdown
    The key declarations and their rendering for the docs.
"""

from ._build import build_arrangement, build_scene, run_config
from ._schema import SECTIONS, RunConfig, config_markdown, load_config, parse_assignment, parse_config
from ._spectrum import dispersion_of, frequency_grid, run_config_spectrum, spectrum_output_path
from ._sweep import ConfigScene, run_config_sweep, sweep_output_path, sweep_rule_inputs

__all__ = [
    "load_config",
    "parse_config",
    "RunConfig",
    "build_arrangement",
    "build_scene",
    "run_config",
    "ConfigScene",
    "run_config_sweep",
    "sweep_output_path",
    "sweep_rule_inputs",
    "parse_assignment",
    "run_config_spectrum",
    "dispersion_of",
    "frequency_grid",
    "spectrum_output_path",
    "SECTIONS",
    "config_markdown",
]
