"""Solve one TOML config and write its HDF5 result.

Builds the scene the config describes, solves the moment equations for every
applied field direction, prints a summary (effective permittivity, mixing rules at
the same fraction, field enhancement, breakdown warnings, solver record) and writes
the result under runs/ (or where run.output or --output says).

example:
  dipolearray solve configs/capacitor_film.toml --overwrite
  dipolearray solve my_run.toml --output runs/trial.h5 --json
  dipolearray solve my_run.toml --set arrangement.n_bodies=500 --set arrangement.seed=3
"""

from __future__ import annotations

import json
import sys


def add_arguments(p):
    """Arguments of ``solve``."""
    from ._common import add_set_argument

    p.add_argument("config", help="TOML run description")
    p.add_argument("--output", help="HDF5 file to write (default: run.output or runs/<name>.h5)")
    p.add_argument("--overwrite", action="store_true", help="replace an existing output file")
    p.add_argument("--quiet", action="store_true", help="no progress bar, no summary")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    p.add_argument(
        "--save-unconverged",
        action="store_true",
        help="write the result even when the solve did not converge",
    )
    add_set_argument(p)


def print_summary(info, name=None):
    """Human-readable lines of a :func:`~dipolearray.report.run_summary` dict."""
    from ..report import CAUTION

    if name:
        print(f"run: {name}")
    print(f"bodies: {info['n_bodies']}, field directions: {info['n_fields']}, boundary: {info['boundary']}")
    if "volume_fraction" in info:
        print(f"volume fraction: {info['volume_fraction']:.4f}")
    print(
        f"solve: {info['method']} ({info['backend']}), "
        f"{'converged' if info['converged'] else 'NOT converged'} in {info['iterations']} iterations, "
        f"max relative residual {info['max_relative_residual']:.2e}, {info['wall_s']:.3g} s"
    )
    print(f"  why: {info['method_reason']}")
    model = info.get("model")
    if model:
        err = model["model_error"]
        gap = model["closest_gap_ratio"]
        line = f"model: {model['model']}"
        if model["model"] == "multipole":
            line += f" (orders up to {model['max_order']}, mean {model['mean_order']:.3g})"
        if err is not None:
            line += f", estimated model error of the dipole moments {err:.2g}"
        if gap is not None:
            line += f", closest gap {gap:.3g} radii"
        print(line)
    if "eps_eff_isotropic" in info:
        re, loss = info["eps_eff_isotropic"]
        what = "bulk, periodic box" if info.get("boundary") == "periodic" else "spherical sample"
        print(f"effective permittivity ({what}, isotropic part): {re:.5g} - j {loss:.4g}")
        if "eps_eff_tensor_real" in info:
            rows = info["eps_eff_tensor_real"]
            print("  tensor eps': " + "; ".join(" ".join(f"{v:9.5f}" for v in r) for r in rows))
        mix = info.get("mixing")
        if mix:
            rules = ", ".join(f"{k} {v[0]:.5g}" for k, v in mix["rules"].items())
            print(f"  mixing rules at this fraction: {rules}")
            lo, hi = mix["bounds"]["Hashin-Shtrikman (isotropic, eps')"]
            print(f"  Hashin-Shtrikman bounds: [{lo:.5g}, {hi:.5g}]")
    st = info["field_enhancement"]
    print(
        f"field / E0: local max {st['local']['max']:.4g}; host surface p99 {st['surface']['p99']:.4g}, "
        f"max {st['surface']['max']:.4g} (body {st['surface']['argmax_body']})"
    )
    if info.get("peak_host_field_V_per_m"):
        print(
            f"  peak host field about {info['peak_host_field_V_per_m'] / 1e6:.4g} kV/mm at "
            f"{info['applied_field_V_per_m'] / 1e6:.4g} kV/mm applied "
            f"({'multipole' if (model or {}).get('model') == 'multipole' else 'point-dipole'} estimate)"
        )
    for note in info["breakdown_notes"]:
        print(note)
    print(CAUTION)


def run(args) -> int:
    """Run ``solve``."""
    from ..config import run_config
    from ..report import run_summary
    from ._common import load
    from ._main import EXIT_NOT_CONVERGED, EXIT_OK
    from ._progress import StageBar

    cfg = load(args)
    stages = StageBar(enabled=not args.quiet and not args.json)
    bar = None
    callback = None
    if not args.quiet and not args.json:
        from tqdm import tqdm

        bar = tqdm(total=cfg.solver["maxiter"], desc="solve", unit="it", file=sys.stderr, leave=False)

        def callback(it, res):
            bar.update(1)
            bar.set_postfix_str(f"residual {float(max(res)):.2e}")

        print(f"building scene from {args.config} ...", file=sys.stderr)
    try:
        sol, path = run_config(
            cfg,
            output=args.output,
            overwrite=args.overwrite,
            callback=callback,
            save_unconverged=args.save_unconverged,
            progress=stages,
        )
    finally:
        stages.close()
        if bar is not None:
            bar.close()
    info = run_summary(sol)
    info["output"] = str(path) if path else None
    if args.json:
        print(json.dumps(info, indent=2))
    elif not args.quiet:
        print_summary(info, cfg.run["name"])
        print(f"wrote: {path}" if path else "wrote: nothing (solve did not converge)")
        if path:
            print(f"next: dipolearray report {path}")
    if not sol.converged:
        print(f"error: {sol.summary()}", file=sys.stderr)
        return EXIT_NOT_CONVERGED
    return EXIT_OK
