"""Generate (or read) the arrangement of a config, describe it, and optionally save it.

Prints the descriptors of the microstructure (volume fraction, nearest-neighbour gaps,
coordination, clusters and percolation at a contact gap) without solving anything,
and writes the bodies to CSV or extended XYZ (lengths in micrometres) with --output.

example:
  dipolearray arrange configs/capacitor_film.toml
  dipolearray arrange my_fluid.toml --output runs/fluid.xyz --contact-gap 0.02 --json
"""

from __future__ import annotations

import json

import numpy as np


def add_arguments(p):
    """Arguments of ``arrange``."""
    p.add_argument("config", help="TOML run description")
    p.add_argument("--output", help="write the bodies to this .csv, .xyz or .extxyz file (micrometres)")
    p.add_argument("--overwrite", action="store_true", help="replace an existing output file")
    p.add_argument(
        "--contact-gap",
        type=float,
        default=0.01,
        help="surface gap, in units of the mean radius, below which bodies count as touching (default 0.01)",
    )
    p.add_argument("--json", action="store_true", help="print the descriptors as JSON")
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    from ._common import add_set_argument

    add_set_argument(p)


def describe(arr, contact_gap):
    """Descriptors of an arrangement as a plain dict (reduced lengths, gaps over the mean radius)."""
    from ..arrange import clusters, coordination, nearest_gaps

    mean_r = float(np.mean(arr.radii))
    gaps = nearest_gaps(arr) / mean_r
    finite = gaps[np.isfinite(gaps)]
    rep = clusters(arr, contact_gap * mean_r)
    out = {
        "n_bodies": arr.n_bodies,
        "region": arr.region,
        "volume_fraction": arr.volume_fraction,
        "mean_radius": mean_r,
        "nearest_gap_median_over_radius": float(np.median(finite)) if finite.size else None,
        "nearest_gap_min_over_radius": float(finite.min()) if finite.size else None,
        "contact_gap_over_radius": contact_gap,
        "mean_coordination": float(coordination(arr, contact_gap * mean_r).mean()),
        "n_clusters": rep.n_clusters,
        "largest_cluster": rep.largest,
        "percolates_xyz": [bool(v) for v in rep.percolates],
        "description": arr.description,
    }
    return out


def run(args) -> int:
    """Run ``arrange``."""
    from ..arrange import write_arrangement
    from ..config import build_arrangement
    from ..config._build import reference_length
    from ..errors import InputError
    from ._common import load

    if not args.contact_gap >= 0:
        raise InputError(f"--contact-gap: must be >= 0, got {args.contact_gap}", "contact-gap")
    from ._progress import StageBar

    cfg = load(args)
    stages = StageBar(enabled=not args.quiet and not args.json)
    try:
        arr = build_arrangement(cfg, progress=stages)
    finally:
        stages.close()
    info = describe(arr, args.contact_gap)
    length = reference_length(cfg)
    info["reference_length_m"] = length
    if args.output:
        path = write_arrangement(
            args.output, arr.scaled(length / 1e-6), length_unit="um", overwrite=args.overwrite
        )
        info["output"] = str(path)
    if args.json:
        print(json.dumps(info, indent=2))
        return 0
    print(f"{args.config}: {info['description']}")
    print(
        f"  bodies {info['n_bodies']}, region {info['region']}, volume fraction {info['volume_fraction']:.4g}"
    )
    if info["nearest_gap_median_over_radius"] is not None:
        print(
            f"  nearest surface gap / radius: median {info['nearest_gap_median_over_radius']:.3g}, "
            f"min {info['nearest_gap_min_over_radius']:.3g}"
        )
    print(
        f"  at contact gap {args.contact_gap:g} radius: mean coordination {info['mean_coordination']:.3g}, "
        f"{info['n_clusters']} clusters, largest {info['largest_cluster']}, "
        f"percolates x/y/z {info['percolates_xyz']}"
    )
    if args.output:
        print(f"  wrote {info['output']} (micrometres)")
    return 0
