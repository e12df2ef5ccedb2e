"""Write a self-contained report of a result or sweep file (HTML, or Markdown with PNG files).

The report holds the inputs, the effective tensor with its uncertainty, the
comparison with mixing rules and bounds, field-enhancement statistics, every figure,
the solver record and the high-voltage cautions. HTML embeds the figures (and links
their PNG and SVG files, written to <report>_figures/); Markdown links them.

example:
  dipolearray report runs/capacitor-film.h5
  dipolearray report runs/fraction-sweep-sweep.h5 --format markdown --output runs/sweep.md
"""

from __future__ import annotations

import json


def add_arguments(p):
    """Arguments of ``report``."""
    p.add_argument("path", help="HDF5 result (dipolearray solve) or sweep (dipolearray sweep) file")
    p.add_argument("--output", help="report file (default: next to the input, .html or .md)")
    p.add_argument("--format", default="html", help="html (default, self-contained) or markdown")
    p.add_argument("--overwrite", action="store_true", help="replace an existing report")
    p.add_argument(
        "--resolution", type=int, default=161, help="field-slice grid points per side (default 161)"
    )
    p.add_argument("--quiet", action="store_true", help="no progress bar, no output")
    p.add_argument("--json", action="store_true", help="print the written paths as JSON")


def run(args) -> int:
    """Run ``report``."""
    from ..report import write_report
    from ._progress import StageBar

    bar = StageBar(enabled=not args.json and not args.quiet)
    try:
        out = write_report(
            args.path,
            args.output,
            format=args.format,
            overwrite=args.overwrite,
            resolution=args.resolution,
            progress=bar,
        )
    finally:
        bar.close()
    if args.json:
        print(
            json.dumps(
                {
                    "report": str(out["report"]),
                    "kind": out["kind"],
                    "figures": [
                        {"name": f["name"], "png": str(f["png"]), "svg": str(f["svg"])}
                        for f in out["figures"]
                    ],
                },
                indent=2,
            )
        )
    elif not args.quiet:
        print(f"wrote {out['report']} ({out['kind']} report, {len(out['figures'])} figure(s))")
    return 0
