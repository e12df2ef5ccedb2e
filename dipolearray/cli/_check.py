"""Check a TOML config without solving: keys, units, ranges and the arrangement.

Builds the scene (so overlaps and impossible packings are found) and prints what
would be solved.

example:
  dipolearray check configs/capacitor_film.toml
"""

from __future__ import annotations


def add_arguments(p):
    """Arguments of ``check``."""
    p.add_argument("config", help="TOML run description")
    p.add_argument(
        "--no-build", action="store_true", help="check keys and units only, do not build the scene"
    )


def run(args) -> int:
    """Run ``check``."""
    from ..config import build_scene, load_config

    cfg = load_config(args.config)
    if args.no_build:
        print(f"{args.config}: keys and units valid")
        return 0
    scene = build_scene(cfg)
    print(
        f"{args.config}: valid; {scene.n_bodies} bodies, {scene.n_fields} field direction(s), "
        f"host eps {scene.eps_host}, reference length {scene.length_unit_m:.4g} m"
    )
    return 0
