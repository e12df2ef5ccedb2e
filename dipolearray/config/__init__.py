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
ConfigScene
    Picklable scene maker for sweeps: the config with dotted keys overridden per state
    point (``{"population.0.polar": "1.5 um"}``).
SECTIONS, config_markdown
    The key declarations and their rendering for the docs.
"""

from ._build import build_arrangement, build_scene, run_config
from ._schema import SECTIONS, RunConfig, config_markdown, load_config, parse_config
from ._sweep import ConfigScene

__all__ = [
    "load_config",
    "parse_config",
    "RunConfig",
    "build_arrangement",
    "build_scene",
    "run_config",
    "ConfigScene",
    "SECTIONS",
    "config_markdown",
]
