"""Summarize an HDF5 result, sweep or spectrum file: what it holds and its main numbers.

For a result: the scene, the solver record, the stored observables, the effective
permittivity, the field enhancement and any breakdown warning. For a sweep: the
state points, realizations and the mean effective permittivity per point. For a
spectrum: the decomposition and the loss peak.

example:
  dipolearray inspect runs/capacitor-film.h5
  dipolearray inspect runs/capacitor-film.h5 --config
  dipolearray inspect runs/fraction-sweep-sweep.h5 --json
"""

from __future__ import annotations

import json


def add_arguments(p):
    """Arguments of ``inspect``."""
    p.add_argument("path", help="HDF5 result or sweep file")
    p.add_argument("--config", action="store_true", help="also print the stored config text")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")


def run(args) -> int:
    """Run ``inspect``."""
    from ..report import file_kind

    kind = file_kind(args.path)
    if kind == "sweep":
        return _sweep(args)
    if kind == "spectrum":
        return _spectrum(args)
    from ..report import run_summary
    from ..store import describe, load_result, read_config_text
    from ._solve import print_summary

    info = run_summary(load_result(args.path))
    text = read_config_text(args.path)
    if args.json:
        info["kind"] = "result"
        if args.config:
            info["config"] = text
        print(json.dumps(info, indent=2))
        return 0
    print(describe(args.path))
    print_summary(info)
    if args.config:
        print(text if text is not None else "(no config stored)")
    return 0


def _sweep(args):
    from ..sweep import load_sweep

    res = load_sweep(args.path)
    mean = res.isotropic_mean
    se = res.standard_error
    rows = [
        {
            "point": p,
            "n": int(n),
            "eps_eff_isotropic": [float(m.real), float(-m.imag)],
            "standard_error": float(s.real) if s == s else None,
        }
        for p, n, m, s in zip(res.points, res.n, mean, se, strict=True)
    ]
    if args.json:
        out = {"kind": "sweep", "points": rows}
        if args.config:
            out["config"] = res.config_text
        print(json.dumps(out, indent=2))
        return 0
    print(f"{args.path}: sweep over {len(rows)} state point(s), {int(res.n.sum())} finished realization(s)")
    for r in rows:
        se_txt = "-" if r["standard_error"] is None else f"{r['standard_error']:.2g}"
        print(f"  {json.dumps(r['point'])}: n {r['n']}, eps' {r['eps_eff_isotropic'][0]:.5g} +/- {se_txt}")
    if args.config:
        print(res.config_text if res.config_text is not None else "(no config stored)")
    return 0


def _spectrum(args):
    import numpy as np

    from ..spectra import loss_peak
    from ..store import load_spectrum

    sp, resp, text = load_spectrum(args.path)
    info = {"kind": "spectrum"}
    if sp is not None:
        info.update(
            boundary=sp.boundary,
            volume_fraction=sp.volume_fraction,
            method=sp.method,
            n_poles=len(sp.poles),
            converged=sp.converged,
            residue_sum_isotropic=float(np.trace(sp.residue_sum()) / 3),
        )
    else:
        info.update(method="frequency by frequency", n_poles=0, volume_fraction=resp["volume_fraction"])
    if resp is not None:
        f = resp["frequency_Hz"]
        info["frequency_range_Hz"] = [float(f[0]), float(f[-1])]
        info["loss_peak"] = loss_peak(f, resp["eps_loss"])
    if args.config:
        info["config"] = text
    if args.json:
        print(json.dumps(info, indent=2))
        return 0
    if sp is not None:
        print(
            f"{args.path}: spectrum ({info['method']}, {info['n_poles']} poles, {info['boundary']}, "
            f"fraction {info['volume_fraction']:.4g}, residues sum {info['residue_sum_isotropic']:.6g})"
        )
    else:
        print(f"{args.path}: response solved frequency by frequency, fraction {info['volume_fraction']:.4g}")
    if resp is not None:
        pk = info["loss_peak"]
        print(
            f"  response {f[0]:.3g} - {f[-1]:.3g} Hz ({len(f)} points); "
            f"loss peak {pk['frequency_hz']:.4g} Hz, eps'' {pk['eps_loss']:.4g}, "
            f"{pk['width_decades']:.3g} decades"
        )
    if args.config:
        print(text if text is not None else "(no config stored)")
    return 0
