"""Dielectric spectrum of a config: eps' and eps'' of the composite over its [frequency] grid.

Builds the arrangement, computes its spectral representation once (geometry only:
dense eigendecomposition for small scenes, block Lanczos otherwise) and evaluates the
effective tensor for the phases' permittivity models (constant, debye, cole_cole,
havriliak_negami, drude, each with an optional conductivity) at every frequency.
Prints the loss peak (frequency and width) against Maxwell Garnett for the same
phases and writes the spectrum and the response to HDF5.

example:
  dipolearray spectrum configs/interfacial_loss.toml
  dipolearray spectrum configs/interfacial_loss.toml --set arrangement.fraction_clustered=0 --json
"""

from __future__ import annotations

import json


def add_arguments(p):
    """Arguments of ``spectrum``."""
    from ._common import add_set_argument

    p.add_argument("config", help="TOML run description (phases with model = ..., a [frequency] section)")
    p.add_argument(
        "--output", help="spectrum HDF5 file (default: frequency.output or runs/<name>-spectrum.h5)"
    )
    p.add_argument("--overwrite", action="store_true", help="replace an existing output file")
    p.add_argument("--quiet", action="store_true", help="no progress bar, no summary")
    p.add_argument("--json", action="store_true", help="print the summary as JSON")
    add_set_argument(p)


def _peak_of(f, eps):
    import numpy as np

    from ..spectra import loss_peak

    e = np.asarray(eps)
    iso = np.trace(e, axis1=1, axis2=2) / 3 if e.ndim == 3 else e
    return loss_peak(f, -iso.imag)


def summary(out):
    """JSON-ready numbers of a :func:`~dipolearray.config.run_config_spectrum` result."""
    import numpy as np

    sp = out["spectrum"]
    iso = np.trace(out["eps_tensor"], axis1=1, axis2=2) / 3
    scene = out["scene"]
    info = {"n_bodies": scene.n_bodies, "boundary": scene.boundary}
    if sp is not None:
        info.update(
            volume_fraction=sp.volume_fraction,
            method=sp.method,
            n_poles=len(sp.poles),
            n_applies=sp.n_applies,
            converged=sp.converged,
            residue_sum_isotropic=float(np.trace(sp.residue_sum()) / 3),
        )
    else:
        from ..report import volume_fraction

        info.update(volume_fraction=volume_fraction(scene), method="frequency by frequency (warm starts)")
    info.update(
        {
            "frequency_range_Hz": [float(out["frequency_hz"][0]), float(out["frequency_hz"][-1])],
            "eps_low": [float(iso[0].real), float(-iso[0].imag)],
            "eps_high": [float(iso[-1].real), float(-iso[-1].imag)],
            "loss_peak": out["peak"],
            "output": str(out["path"]) if out["path"] else None,
        }
    )
    if out["maxwell_garnett"] is not None:
        info["maxwell_garnett_loss_peak"] = _peak_of(out["frequency_hz"], out["maxwell_garnett"])
    return info


def run(args) -> int:
    """Run ``spectrum``."""
    from ..config import run_config_spectrum
    from ..report import CAUTION
    from ._common import load
    from ._progress import StageBar

    cfg = load(args)
    bar = StageBar(enabled=not args.quiet and not args.json)
    try:
        out = run_config_spectrum(cfg, output=args.output, overwrite=args.overwrite, progress=bar)
    finally:
        bar.close()
    info = summary(out)
    if args.json:
        print(json.dumps(info, indent=2))
        return 0
    if args.quiet:
        return 0
    pk = info["loss_peak"]
    print(f"spectrum: {cfg.run['name']}, {info['n_bodies']} bodies, fraction {info['volume_fraction']:.4g}")
    if "n_poles" in info:
        print(
            f"  decomposition: {info['method']}, {info['n_poles']} poles, {info['n_applies']} applies, "
            f"converged {info['converged']}, residues sum to {info['residue_sum_isotropic']:.6g}"
        )
    else:
        print(f"  several filler materials: solved {info['method']}")
    lo, hi = info["frequency_range_Hz"]
    print(f"  eps at {lo:.3g} Hz: {info['eps_low'][0]:.5g} - j {info['eps_low'][1]:.4g}")
    print(f"  eps at {hi:.3g} Hz: {info['eps_high'][0]:.5g} - j {info['eps_high'][1]:.4g}")
    where = "" if pk["inside"] else " (at the edge of the grid: widen [frequency])"
    print(
        f"  loss peak: {pk['frequency_hz']:.4g} Hz, eps'' {pk['eps_loss']:.4g}, "
        f"{pk['width_decades']:.3g} decades{where}"
    )
    if "maxwell_garnett_loss_peak" in info:
        m = info["maxwell_garnett_loss_peak"]
        print(
            f"  Maxwell Garnett: {m['frequency_hz']:.4g} Hz, eps'' {m['eps_loss']:.4g}, "
            f"{m['width_decades']:.3g} decades"
        )
    print(f"wrote: {info['output']}")
    print(CAUTION)
    return 0
