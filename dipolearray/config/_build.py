from __future__ import annotations

from pathlib import Path

import numpy as np

from ..arrange import (
    chain,
    clustered,
    cubic_lattice_sphere,
    dense_packing,
    field_chains,
    lattice,
    lognormal_radii,
    orientations,
    random_sequential_addition,
    read_arrangement,
)
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


def _populations(cfg, length):
    return tuple(
        Population(
            _shape(p, length),
            Material(_eps(p["eps"], p["eps_loss"]), name=p["name"]),
            name=p["name"],
        )
        for p in cfg.populations
    )


def _orientations(p, n, rng):
    if p["shape"] == "sphere" or n == 0:
        return np.broadcast_to(np.eye(3), (n, 3, 3)).copy()
    if p["orientation"] == "aligned":
        return np.broadcast_to(rotation_to_axis(p["axis"]), (n, 3, 3)).copy()
    if p["orientation"] == "random":
        return _random_rotations(n, rng)
    return orientations(n, "nematic", axis=p["axis"], order_parameter=p["order_parameter"], rng=rng)


def build_arrangement(cfg, progress=None):
    """Generate (or read) the arrangement a config describes, in reduced units.

    Returns an :class:`~dipolearray.arrange.Arrangement` whose ``labels`` give each
    body's population and whose sizes are multiples of the population shapes.
    ``progress(stage, done, total)`` is called during long generator work.
    """
    length = reference_length(cfg)
    arr = cfg.arrangement
    kind = arr["kind"]
    rng = np.random.default_rng(arr["seed"])
    pops = _populations(cfg, length)
    semi0 = np.array([pop.shape.semi_axes for pop in pops], dtype=float)
    region = arr["region"]
    try:
        if kind in ("random", "dense"):
            counts = _counts(arr["n_bodies"], [p["fraction"] for p in cfg.populations])
            index = np.repeat(np.arange(len(pops)), counts)
            rng.shuffle(index)
            scale = np.ones(len(index))
            rot = np.zeros((len(index), 3, 3))
            for i, p in enumerate(cfg.populations):
                mine = np.flatnonzero(index == i)
                if p["size_spread"]:
                    scale[mine] = (
                        lognormal_radii(mine.size, 1.0, p["size_spread"], rng=rng) if mine.size else 1.0
                    )
                rot[mine] = _orientations(p, mine.size, rng)
            semi = semi0[index] * scale[:, None]
            common = dict(semi_axes=semi, rotations=rot, region=region, rng=rng)
            if region == "slab":
                raise InputError("region: random packings fill a sphere, cube or periodic box", "region")
            if kind == "random":
                layout = random_sequential_addition(arr["n_bodies"], arr["volume_fraction"], **common)
            else:
                layout = dense_packing(
                    arr["n_bodies"],
                    arr["volume_fraction"],
                    equilibration_sweeps=arr["equilibration_sweeps"],
                    progress=progress,
                    **common,
                )
            layout = layout.replace(labels=index.astype(np.int64))
        elif kind == "file":
            path = Path(arr["path"])
            if not path.is_absolute() and cfg.source not in ("<config>", ""):
                path = Path(cfg.source).parent / path
            layout = read_arrangement(path, length_unit_m=length)
        else:
            a = float(semi0[0, 0])
            if kind == "cubic":
                layout = cubic_lattice_sphere(arr["spacing"] / length, arr["cut_radius"] / length, radius=a)
            elif kind == "lattice":
                spec = (
                    dict(lattice_constant=arr["spacing"] / length)
                    if arr["spacing"] is not None
                    else dict(volume_fraction=arr["volume_fraction"])
                )
                layout = lattice(
                    arr["lattice"],
                    radius=a,
                    sample=region,
                    size=None if arr["size"] is None else arr["size"] / length,
                    cells=arr["cells"],
                    **spec,
                )
            elif kind == "chain":
                layout = chain(arr["n_bodies"], 2 * a + arr["gap"] / length, axis=arr["axis"], radius=a)
            elif kind == "clustered":
                layout = clustered(
                    arr["n_bodies"],
                    arr["volume_fraction"],
                    cluster_size=arr["cluster_size"],
                    fraction_clustered=arr["fraction_clustered"],
                    kind=arr["cluster_kind"],
                    radius=a,
                    gap=arr["gap"] / length,
                    local_fraction=arr["local_fraction"],
                    region=region,
                    rng=rng,
                )
            else:
                layout = field_chains(
                    arr["n_bodies"],
                    arr["volume_fraction"],
                    mean_length=arr["mean_length"],
                    distribution=arr["length_distribution"],
                    radius=a,
                    gap=arr["gap"] / length,
                    misalignment=arr["misalignment"],
                    axis=arr["axis"],
                    layout=arr["layout"],
                    chains_per_group=arr["chains_per_group"],
                    region=region,
                    rng=rng,
                    spanning=arr["spanning"],
                )
            layout = layout.replace(labels=np.zeros(layout.n_bodies, dtype=np.int64))
    except InputError as exc:
        key = f"arrangement.{exc.key}" if exc.key else "arrangement"
        raise ConfigError(f"arrangement: {exc}", key) from None
    return layout


def build_scene(cfg, progress=None) -> Scene:
    """Build the :class:`Scene` a config describes (the same calls a Python user makes).

    Lengths become reduced by the reference length (the volume-equivalent radius of
    the first population, in metres, kept as ``scene.length_unit_m``).
    """
    length = reference_length(cfg)
    layout = build_arrangement(cfg, progress=progress)
    directions = cfg.field["directions"]
    if directions == "all":
        field = np.eye(3)
    else:
        field = np.array(directions, dtype=float)
        field /= np.linalg.norm(field, axis=1, keepdims=True)
    try:
        return Scene.from_arrangement(
            layout,
            _populations(cfg, length),
            host=Material(_eps(cfg.host["eps"], cfg.host["eps_loss"]), name=cfg.host["name"]),
            field=field,
            length_unit_m=length,
            field_V_per_m=cfg.field["strength"],
            check_overlap=True,
        )
    except InputError as exc:
        if isinstance(exc, ConfigError):
            raise
        raise ConfigError(f"arrangement: {exc}", "arrangement") from None


def output_path(cfg, override=None) -> Path:
    """Where a run's HDF5 goes: the override, ``run.output``, or ``runs/<name>.h5``."""
    if override:
        return Path(override)
    if cfg.run["output"]:
        return Path(cfg.run["output"])
    safe = "".join(c if c.isalnum() or c in "-_." else "-" for c in cfg.run["name"])
    return Path("runs") / f"{safe}.h5"


def model_operator(cfg, scene):
    """The interaction operator the config's ``[solver] model`` asks for (None: the default)."""
    s = cfg.solver
    if s["model"] != "multipole":
        return None
    from ..operators import make_operator

    order = "auto" if s["multipole_order"] == 0 else int(s["multipole_order"])
    return make_operator(
        scene, "multipole", order=order, accuracy=s["model_accuracy"], max_order=s["max_order"]
    )


def run_config(
    cfg, *, output=None, overwrite=False, callback=None, save=True, save_unconverged=False, progress=None
):
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
    scene = build_scene(cfg, progress=progress)
    s = cfg.solver
    sol = solve(
        scene,
        s["method"],
        rtol=s["rtol"],
        atol=s["atol"],
        maxiter=s["maxiter"],
        relaxation=s["relaxation"],
        callback=callback,
        operator=model_operator(cfg, scene),
    )
    if not save or (not sol.converged and not save_unconverged):
        return sol, None
    periodic = scene.boundary == "periodic"
    names = [
        n
        for n in cfg.output["observables"]
        if (n != "effective_permittivity" or scene.sample_radius or periodic)
        and not (periodic and n == "forces")
    ]
    save_result(path, sol, observables=names, config_text=cfg.recorded_text, overwrite=overwrite)
    return sol, path
