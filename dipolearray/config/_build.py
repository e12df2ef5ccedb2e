from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..arrange import chain, cubic_lattice_sphere, random_sequential_addition
from ..errors import ConfigError, InputError
from ..materials import Material
from ..scene import Population, Scene
from ..shapes import Ellipsoid, Sphere, Spheroid, rotation_to_axis


def _semi_axes_m(p):
    if p["shape"] == "sphere":
        return (p["radius"],) * 3
    if p["shape"] == "spheroid":
        return (p["equatorial"], p["equatorial"], p["polar"])
    return tuple(p["semi_axes"])


def _shape(p, length):
    a = [v / length for v in _semi_axes_m(p)]
    if p["shape"] == "sphere":
        return Sphere(a[0])
    if p["shape"] == "spheroid":
        return Spheroid(polar=a[2], equatorial=a[0])
    return Ellipsoid(*a)


def _eps(real, loss):
    return real if loss == 0 else complex(real, -loss)


def _counts(n, fractions):
    f = np.asarray(fractions, dtype=float)
    f = f / f.sum()
    raw = n * f
    base = np.floor(raw).astype(int)
    rest = n - base.sum()
    base[np.argsort(-(raw - base), kind="stable")[:rest]] += 1
    return base


def _random_rotations(n, rng):
    from scipy.spatial.transform import Rotation

    if n == 0:
        return np.zeros((0, 3, 3))
    return Rotation.random(n, random_state=rng).as_matrix()


def reference_length(cfg) -> float:
    """Reference length in metres: volume-equivalent radius of the first population."""
    a = _semi_axes_m(cfg.populations[0])
    if a[0] == a[1] == a[2]:
        return float(a[0])
    return float(np.prod(a)) ** (1.0 / 3.0)


def build_scene(cfg) -> Scene:
    """Build the :class:`Scene` a config describes (the same calls a Python user makes).

    Lengths become reduced by the reference length (the volume-equivalent radius of
    the first population, in metres, kept as ``scene.length_unit_m``).
    """
    length = reference_length(cfg)
    arr = cfg.arrangement
    rng = np.random.default_rng(arr["seed"])
    pops = tuple(
        Population(
            _shape(p, length),
            Material(_eps(p["eps"], p["eps_loss"]), name=p["name"]),
            name=p["name"],
        )
        for p in cfg.populations
    )
    bound = np.array([max(pop.shape.semi_axes) for pop in pops])
    try:
        if arr["kind"] == "random":
            counts = _counts(arr["n_bodies"], [p["fraction"] for p in cfg.populations])
            index = np.repeat(np.arange(len(pops)), counts)
            rng.shuffle(index)
            layout = random_sequential_addition(
                arr["n_bodies"], arr["volume_fraction"], radii=bound[index], region=arr["region"], rng=rng
            )
            # RSA packs bounding spheres; report the true sample radius for the bodies' volume.
            sample_radius = layout.sample_radius
            if sample_radius is not None:
                body_volume = sum(c * pop.shape.volume for c, pop in zip(counts, pops, strict=True))
                sample_radius = (3 * body_volume / (4 * math.pi * arr["volume_fraction"])) ** (1 / 3)
        elif arr["kind"] == "cubic":
            layout = cubic_lattice_sphere(
                arr["spacing"] / length, arr["cut_radius"] / length, radius=bound[0]
            )
            index = np.zeros(layout.n_bodies, dtype=np.int64)
            sample_radius = layout.sample_radius
        else:
            spacing = 2 * bound[0] + arr["gap"] / length
            layout = chain(arr["n_bodies"], spacing, axis=arr["axis"], radius=bound[0])
            index = np.zeros(layout.n_bodies, dtype=np.int64)
            sample_radius = None
    except InputError as exc:
        key = f"arrangement.{exc.key}" if exc.key else "arrangement"
        raise ConfigError(f"arrangement: {exc}", key) from None

    n = layout.n_bodies
    rotations = np.broadcast_to(np.eye(3), (n, 3, 3)).copy()
    for i, p in enumerate(cfg.populations):
        if p["shape"] == "sphere":
            continue
        mine = np.flatnonzero(index == i)
        if p["orientation"] == "aligned":
            rotations[mine] = rotation_to_axis(p["axis"])
        else:
            rotations[mine] = _random_rotations(mine.size, rng)

    directions = cfg.field["directions"]
    if directions == "all":
        field = np.eye(3)
    else:
        field = np.array(directions, dtype=float)
        field /= np.linalg.norm(field, axis=1, keepdims=True)
    return Scene(
        positions=layout.positions,
        populations=pops,
        population_index=index.astype(np.int64),
        host=Material(_eps(cfg.host["eps"], cfg.host["eps_loss"]), name=cfg.host["name"]),
        field=field,
        rotations=rotations,
        sample_radius=sample_radius,
        length_unit_m=length,
        field_V_per_m=cfg.field["strength"],
        check_overlap=True,
    )


def output_path(cfg, override=None) -> Path:
    """Where a run's HDF5 goes: the override, ``run.output``, or ``runs/<name>.h5``."""
    if override:
        return Path(override)
    if cfg.run["output"]:
        return Path(cfg.run["output"])
    safe = "".join(c if c.isalnum() or c in "-_." else "-" for c in cfg.run["name"])
    return Path("runs") / f"{safe}.h5"


def run_config(cfg, *, output=None, overwrite=False, callback=None, save=True, save_unconverged=False):
    """Build, solve and store one config.

    Returns
    -------
    (Solution, Path or None)
        The path is ``None`` when nothing was written (``save=False``, or the solve
        did not converge and ``save_unconverged`` is off).
    """
    from ..solvers import solve
    from ..store import save_result

    path = output_path(cfg, output)
    if save and path.exists() and not overwrite:
        raise InputError(f"output: {path} exists; pass --overwrite to replace it", "output")
    scene = build_scene(cfg)
    s = cfg.solver
    sol = solve(
        scene,
        s["method"],
        rtol=s["rtol"],
        atol=s["atol"],
        maxiter=s["maxiter"],
        relaxation=s["relaxation"],
        callback=callback,
    )
    if not save or (not sol.converged and not save_unconverged):
        return sol, None
    names = [n for n in cfg.output["observables"] if n != "effective_permittivity" or scene.sample_radius]
    save_result(path, sol, observables=names, config_text=cfg.text, overwrite=overwrite)
    return sol, path
