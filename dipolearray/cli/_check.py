"""Check a TOML config without solving: keys, units, ranges, the sweep and the arrangement.

Builds the scene (so overlaps and impossible packings are found) and prints what
would be solved; with a [sweep] section, every state point's config is checked too.

example:
  dipolearray check configs/capacitor_film.toml
  dipolearray check configs/fraction_sweep.toml --no-build
"""

from __future__ import annotations

import json


def add_arguments(p):
    """Arguments of ``check``."""
    from ._common import add_set_argument

    p.add_argument("config", help="TOML run description")
    p.add_argument(
        "--no-build", action="store_true", help="check keys and units only, do not build the scene"
    )
    p.add_argument("--json", action="store_true", help="print what was checked as JSON")
    add_set_argument(p)


def run(args) -> int:
    """Run ``check``."""
    from ..config import build_scene
    from ._common import load

    cfg = load(args)
    info = {"config": args.config, "valid": True}
    if cfg.sweep is not None:
        info["sweep_points"] = len(cfg.sweep_points)
        info["sweep_parameter"] = cfg.sweep["parameter"]
        info["sweep_realizations"] = cfg.sweep["realizations"]
    if not args.no_build:
        scene = build_scene(cfg)
        info.update(
            n_bodies=scene.n_bodies,
            n_fields=scene.n_fields,
            boundary=scene.boundary,
            eps_host=[complex(scene.eps_host).real, -complex(scene.eps_host).imag],
            reference_length_m=scene.length_unit_m,
        )
    if args.json:
        print(json.dumps(info, indent=2))
        return 0
    if args.no_build:
        print(f"{args.config}: keys and units valid")
    else:
        print(
            f"{args.config}: valid; {scene.n_bodies} bodies, {scene.n_fields} field direction(s), "
            f"{scene.boundary} boundary, host eps {scene.eps_host}, "
            f"reference length {scene.length_unit_m:.4g} m"
        )
    if cfg.sweep is not None:
        what = f"over {cfg.sweep['parameter']}" if cfg.sweep["parameter"] else "ensemble"
        print(
            f"  sweep {what}: {info['sweep_points']} state point(s) x {info['sweep_realizations']} "
            "realization(s), every point checked"
        )
    return 0
