"""Run (or resume) the sweep of a config: realizations at every state point, into one HDF5 file.

The config's [sweep] section names the parameter to vary (any dotted config key),
its values, the realizations per point, the seed and where to run (this process, a
local Dask cluster of --workers processes, or a running Dask scheduler). Without a
[sweep] section (or without sweep.parameter) it runs an ensemble of the config as
written, for confidence intervals. Every finished realization is written at once;
rerunning the same command resumes an interrupted sweep.

example:
  dipolearray sweep configs/fraction_sweep.toml
  dipolearray sweep configs/fraction_sweep.toml --workers 2 --realizations 8
  dipolearray sweep my_run.toml --scheduler tcp://10.0.0.5:8786 --json
"""

from __future__ import annotations

import json


def add_arguments(p):
    """Arguments of ``sweep``."""
    from ._common import add_set_argument

    p.add_argument("config", help="TOML run description with a [sweep] section (or none: an ensemble)")
    p.add_argument("--output", help="sweep HDF5 file (default: sweep.output or runs/<name>-sweep.h5)")
    p.add_argument(
        "--overwrite", action="store_true", help="start afresh instead of resuming an existing file"
    )
    p.add_argument("--realizations", type=int, help="realizations per state point (default: from the config)")
    p.add_argument("--workers", type=int, help="0: this process; N: local Dask cluster of N processes")
    p.add_argument("--scheduler", help="address of a running Dask scheduler")
    p.add_argument("--quiet", action="store_true", help="no progress bar, no table")
    p.add_argument("--json", action="store_true", help="print the result table as JSON")
    add_set_argument(p)


def table(result, cfg_text, overrides=()):
    """Rows of the sweep: parameter value, realized fraction, mean, SE, interval and mixing rules."""
    import numpy as np

    from ..config import sweep_rule_inputs
    from ..sweep import SweepResult, comparison_table

    inputs = sweep_rule_inputs(result, cfg_text, overrides)
    aug = SweepResult(
        [
            {"volume_fraction": float(f), "eps_inclusion": float(np.real(ei)), "eps_host": float(np.real(eh))}
            for f, ei, eh in zip(inputs["fraction"], inputs["eps_inclusion"], inputs["eps_host"], strict=True)
        ],
        result.tensors,
        result.records,
    )
    rows = comparison_table(aug)
    ci = result.confidence_interval()
    out = []
    for i, (p, row) in enumerate(zip(result.points, rows, strict=True)):
        out.append(
            {
                "point": p,
                "x": float(inputs["x"][i]),
                "n": int(result.n[i]),
                "eps_loss_mean": float(-np.imag(result.isotropic_mean[i])),
                "ci95": [float(ci[i, 0]), float(ci[i, 1])],
                **{k: v for k, v in row.items() if k not in ("eps_inclusion", "eps_host")},
            }
        )
    return inputs["x_label"], out


def run(args) -> int:
    """Run ``sweep``."""
    from ..config import run_config_sweep
    from ..errors import InputError
    from ._common import load

    if args.realizations is not None and args.realizations < 1:
        raise InputError(f"--realizations: must be >= 1, got {args.realizations}", "realizations")
    if args.workers is not None and args.workers < 0:
        raise InputError(f"--workers: must be >= 0, got {args.workers}", "workers")
    cfg = load(args)
    result, path = run_config_sweep(
        cfg,
        output=args.output,
        overwrite=args.overwrite,
        realizations=args.realizations,
        workers=args.workers,
        scheduler=args.scheduler,
        progress=not args.quiet and not args.json,
    )
    label, rows = table(result, cfg.text, cfg.overrides)
    if args.json:
        print(json.dumps({"output": str(path), "x_label": label, "rows": rows}, indent=2))
        return 0
    if args.quiet:
        return 0
    print(f"sweep: {cfg.run['name']}, {len(rows)} state point(s), wrote {path}")
    print(f"  {label:>28}  {'phi':>7}  {'n':>3}  {'eps_eff':>9}  {'+/- SE':>8}  {'MG':>9}  {'Bruggeman':>9}")
    for r in rows:
        print(
            f"  {r['x']:>28.5g}  {r['volume_fraction']:7.4f}  {r['n']:3d}  {r['computed']:9.5g}  "
            f"{r['standard_error']:8.2g}  {r['maxwell_garnett']:9.5g}  {r['bruggeman']:9.5g}"
        )
    print(f"next: dipolearray report {path}")
    return 0
