from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputError
from ._build import build_scene, output_path
from ._schema import SECTIONS, _section, parse_config


@dataclass(frozen=True)
class ConfigScene:
    """Scene maker from a TOML config: each state point overrides dotted config keys.

    ``ConfigScene(text)({"arrangement.volume_fraction": 0.2, "population.0.polar": "1.5 um"}, seed)``
    builds the config's scene with those keys replaced and ``arrangement.seed = seed``,
    so any config parameter (fraction, contrast, aspect ratio, clustering, chain
    length, ...) can be swept. Picklable (it holds only text and pairs).

    Attributes
    ----------
    text : str
        The TOML config.
    overrides : tuple of (str, value)
        Dotted-key overrides applied before each point's own.
    """

    text: str
    overrides: tuple = ()

    def config(self, point, seed=None):
        """The checked config of one state point (and seed)."""
        over = dict(self.overrides)
        over.update(point)
        if seed is not None:
            over["arrangement.seed"] = int(seed) % (2**31)
        return parse_config(self.text, "<sweep>", overrides=over, check_sweep=False)

    def __call__(self, point, seed):
        """The scene of one realization."""
        return build_scene(self.config(point, seed))


def sweep_settings(cfg):
    """The ``[sweep]`` section of a config, or its defaults when the config has none."""
    return cfg.sweep if cfg.sweep is not None else _section({}, "sweep", "sweep")


def sweep_output_path(cfg, override=None) -> Path:
    """Where a sweep goes: the override, ``sweep.output``, or ``runs/<name>-sweep.h5``."""
    if override:
        return Path(override)
    sw = sweep_settings(cfg)
    if sw["output"]:
        return Path(sw["output"])
    stem = output_path(cfg).with_suffix("")
    return stem.with_name(stem.name + "-sweep.h5")


def run_config_sweep(
    cfg, *, output=None, overwrite=False, realizations=None, workers=None, scheduler=None, progress=True
):
    """Run (or resume) the sweep a config's ``[sweep]`` section describes.

    Every state point and realization is one solve of the config with the swept key
    replaced and the arrangement seed derived from ``sweep.seed``; results go to one
    HDF5 file as they finish (rerunning resumes). Arguments left ``None`` come from
    the config.

    Returns
    -------
    (SweepResult, Path)
    """
    from ..sweep import run_sweep

    sw = sweep_settings(cfg)
    path = sweep_output_path(cfg, output)
    if path.exists() and overwrite:
        path.unlink()
    s = cfg.solver
    opts = dict(
        method=s["method"], rtol=s["rtol"], atol=s["atol"], maxiter=s["maxiter"], relaxation=s["relaxation"]
    )
    if s["model"] == "multipole":
        opts["backend"] = "multipole"
        opts["backend_options"] = {
            "order": "auto" if s["multipole_order"] == 0 else int(s["multipole_order"]),
            "accuracy": s["model_accuracy"],
            "max_order": s["max_order"],
        }
    n_r = sw["realizations"] if realizations is None else realizations
    n_w = sw["workers"] if workers is None else workers
    addr = (sw["scheduler"] or None) if scheduler is None else (scheduler or None)
    what = f"over {sw['parameter']}" if sw["parameter"] else "ensemble"
    result = run_sweep(
        path,
        ConfigScene(cfg.text, cfg.overrides),
        cfg.sweep_points,
        n_r,
        seed=sw["seed"],
        solve_options=opts,
        workers=n_w,
        scheduler=addr,
        progress=progress,
        config_text=cfg.text,
        description=json.dumps({"kind": "config sweep", "what": what, "overrides": list(cfg.overrides)}),
    )
    return result, path


def sweep_rule_inputs(result, config_text, overrides=()):
    """Per state point: abscissa, realized fraction and the phases' permittivities for the mixing rules.

    Parameters
    ----------
    result : SweepResult
        A config sweep (points ``{parameter: value}`` or ``{}``).
    config_text : str
        The sweep's config.
    overrides : sequence of (str, value)

    Returns
    -------
    dict
        ``parameter`` (str or ``""``), ``x`` (``(P,)`` float: the value, SI for
        quantities), ``x_label``, ``fraction`` (realized mean per point), and
        ``eps_inclusion``, ``eps_host`` (``(P,)`` complex, first population).
    """
    from ._schema import quantity

    maker = ConfigScene(config_text, tuple(tuple(o) for o in overrides))
    xs, phis, ei, eh = [], [], [], []
    param = ""
    label = "state point"
    for p, recs in zip(result.points, result.records, strict=True):
        cfg = maker.config(p)
        pop = cfg.populations[0]
        ei.append(complex(pop["eps"], -pop["eps_loss"]))
        eh.append(complex(cfg.host["eps"], -cfg.host["eps_loss"]))
        phis.append(float(np.mean([r["volume_fraction"] for r in recs])) if recs else np.nan)
        if not p:
            xs.append(float(len(xs)))
            continue
        ((param, value),) = p.items()
        section, key = param.split(".")[0], param.split(".")[-1]
        kind = SECTIONS[section][key].kind
        if kind in ("length", "field"):
            si = quantity(value, kind, param)
            unit = "um" if kind == "length" else "kV/mm"
            xs.append(si * 1e6 if kind == "length" else si / 1e6)
            label = f"{param} ({unit})"
        elif isinstance(value, str):
            raise InputError(f"{param}: cannot plot the text value {value!r} on an axis", param)
        else:
            xs.append(float(value))
            label = f"{param} (1)" if key in ("volume_fraction", "eps", "eps_loss") else param
    if param == "arrangement.volume_fraction":
        label = "filler volume fraction (1)"
    return {
        "parameter": param,
        "x": np.array(xs),
        "x_label": label,
        "fraction": np.array(phis),
        "eps_inclusion": np.array(ei),
        "eps_host": np.array(eh),
    }
