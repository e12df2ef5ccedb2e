"""Print what an HDF5 result file holds.

example:
  dipolearray inspect runs/capacitor-film.h5
  dipolearray inspect runs/capacitor-film.h5 --config
"""

from __future__ import annotations


def add_arguments(p):
    """Arguments of ``inspect``."""
    p.add_argument("path", help="HDF5 result file")
    p.add_argument("--config", action="store_true", help="also print the stored config text")


def run(args) -> int:
    """Run ``inspect``."""
    from ..store import describe, read_config_text

    print(describe(args.path))
    if args.config:
        text = read_config_text(args.path)
        print(text if text is not None else "(no config stored)")
    return 0
