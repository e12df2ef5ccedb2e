"""Make the figures of a result or sweep file, as PNG and SVG.

A result gets: bodies in 3D coloured by moment magnitude with moment arrows; the
field magnitude on a slice through the sample with the bodies' outlines (open
scenes); the residual history; the histogram of host field enhancement. A sweep
gets the effective permittivity over the swept parameter with error bars, mixing
rules and Hashin-Shtrikman bounds.

example:
  dipolearray figures runs/capacitor-film.h5
  dipolearray figures runs/capacitor-film.h5 --output-dir runs/film-figures
"""

from __future__ import annotations

import json


def add_arguments(p):
    """Arguments of ``figures``."""
    p.add_argument("path", help="HDF5 result or sweep file")
    p.add_argument("--output-dir", help="folder for the figures (default: <file>_figures next to it)")
    p.add_argument(
        "--resolution", type=int, default=161, help="field-slice grid points per side (default 161)"
    )
    p.add_argument("--quiet", action="store_true", help="no progress bar, no output")
    p.add_argument("--json", action="store_true", help="print the written files as JSON")


def run(args) -> int:
    """Run ``figures``."""
    from ..report import write_figures
    from ._progress import StageBar

    bar = StageBar(enabled=not args.json and not args.quiet)
    try:
        figs = write_figures(args.path, args.output_dir, resolution=args.resolution, progress=bar)
    finally:
        bar.close()
    if args.json:
        print(
            json.dumps(
                [{"name": f["name"], "png": str(f["png"]), "svg": str(f["svg"])} for f in figs], indent=2
            )
        )
    elif not args.quiet:
        for f in figs:
            print(f"wrote {f['png']} and {f['svg'].name}")
    return 0
