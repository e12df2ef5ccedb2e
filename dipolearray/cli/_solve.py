"""Solve one TOML config and write its HDF5 result.

Builds the scene the config describes, solves the moment equations for every
applied field direction, prints a summary (effective permittivity, field
enhancement, solver record) and writes the result under runs/ (or where
run.output or --output says).

example:
  dipolearray solve configs/capacitor_film.toml --overwrite
  dipolearray solve my_run.toml --output runs/trial.h5 --json
"""

from __future__ import annotations

import json
import sys

CAUTION = (
    "caution: local fields are model estimates from a point-dipole calculation; they do not "
    "certify insulation or breakdown margins. High-voltage work (kV/mm fields, as in "
    "electrorheological devices) follows local electrical-safety codes and qualified practice."
)


def add_arguments(p):
    """Arguments of ``solve``."""
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


def summarize(sol, path):
    """Summary numbers of a solve as a plain dict (SI where the scene knows its units)."""
    import numpy as np

    from ..observables import effective_permittivity, interior_field

    scene = sol.scene
    out = {
        "n_bodies": scene.n_bodies,
        "n_fields": scene.n_fields,
        "method": sol.method,
        "method_reason": sol.method_reason,
        "converged": sol.converged,
        "reason": sol.reason,
        "iterations": sol.iterations,
        "max_relative_residual": float(np.max(sol.residual)),
        "wall_s": round(sol.wall_s, 4),
        "output": str(path) if path else None,
    }
    if scene.sample_radius or scene.boundary == "periodic":
        volume = (
            np.prod(scene.box) if scene.boundary == "periodic" else 4 / 3 * np.pi * scene.sample_radius**3
        )
        phi = float(scene.volumes.sum() / volume)
        out["boundary"] = scene.boundary
        out["volume_fraction"] = round(phi, 6)
        eff = effective_permittivity(sol)
        iso = complex(eff.isotropic)
        out["eps_eff_isotropic"] = [iso.real, -iso.imag]
        if eff.tensor is not None:
            out["eps_eff_tensor_real"] = np.real(eff.tensor).round(6).tolist()
            if np.iscomplexobj(eff.tensor):
                out["eps_eff_tensor_loss"] = (-np.imag(eff.tensor)).round(6).tolist()
        if iso.imag:
            out["loss_tangent_eff"] = -iso.imag / iso.real
    e_in = interior_field(sol)
    mag = np.linalg.norm(np.abs(e_in), axis=1) / np.linalg.norm(scene.field, axis=1)[None, :]
    out["interior_field_enhancement_max"] = float(mag.max())
    out["interior_field_enhancement_mean"] = float(mag.mean())
    return out


def run(args) -> int:
    """Run ``solve``."""
    from ..config import load_config, run_config
    from ._main import EXIT_NOT_CONVERGED, EXIT_OK
    from ._progress import StageBar

    cfg = load_config(args.config)
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
    info = summarize(sol, path)
    if args.json:
        print(json.dumps(info, indent=2))
    elif not args.quiet:
        print(f"run: {cfg.run['name']}")
        print(f"bodies: {info['n_bodies']}, field directions: {info['n_fields']}")
        if "volume_fraction" in info:
            print(f"volume fraction: {info['volume_fraction']:.4f}")
        print(f"solve: {sol.summary()}")
        print(f"  why: {sol.method_reason}")
        if "eps_eff_isotropic" in info:
            re, loss = info["eps_eff_isotropic"]
            what = "bulk, periodic box" if info.get("boundary") == "periodic" else "spherical sample"
            print(f"effective permittivity ({what}, isotropic part): {re:.5g} - j {loss:.4g}")
            if "eps_eff_tensor_real" in info:
                rows = info["eps_eff_tensor_real"]
                print("  tensor eps': " + "; ".join(" ".join(f"{v:9.5f}" for v in r) for r in rows))
        print(
            f"interior field / E0: mean {info['interior_field_enhancement_mean']:.4g}, "
            f"max {info['interior_field_enhancement_max']:.4g}"
        )
        print(f"wrote: {path}" if path else "wrote: nothing (solve did not converge)")
        print(CAUTION)
    if not sol.converged:
        print(f"error: {sol.summary()}", file=sys.stderr)
        return EXIT_NOT_CONVERGED
    return EXIT_OK
