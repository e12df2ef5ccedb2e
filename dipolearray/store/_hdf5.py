from __future__ import annotations

import datetime as _dt
import math
import os
import tempfile
from pathlib import Path

import numpy as np

from .._version import __version__
from ..errors import InputError, SchemaError
from ..units import SCALE_KINDS, si_factor
from ._schema import CONVENTION, FORMAT_NAME, REDUCED_UNITS, SCHEMA_VERSION

_CHUNK_MIN = 4096


def _h5py():
    import h5py

    return h5py


def _nan(v):
    return float("nan") if v is None else float(v)


def _unit_attrs(ds, kind, scene):
    ds.attrs["unit"] = REDUCED_UNITS[kind]
    ds.attrs["si_unit"] = SCALE_KINDS.get(kind, "1")
    if kind in ("1", "dimensionless"):
        ds.attrs["si_factor"] = 1.0
    elif scene.length_unit_m is not None and scene.field_V_per_m is not None:
        f = si_factor(
            kind, length_m=scene.length_unit_m, field_V_per_m=scene.field_V_per_m, eps_host=scene.eps_host
        )
        ds.attrs["si_factor"] = f


def _dataset(group, name, data, kind, scene):
    data = np.asarray(data)
    opts = {}
    if data.size > _CHUNK_MIN and data.ndim >= 1:
        chunk = list(data.shape)
        chunk[0] = max(1, min(data.shape[0], 65536 // max(1, int(np.prod(data.shape[1:])))))
        opts = dict(chunks=tuple(chunk), compression="gzip", compression_opts=4, shuffle=True)
    ds = group.create_dataset(name, data=data, **opts)
    _unit_attrs(ds, kind, scene)
    return ds


def model_record(sol):
    """``(model, model_error, closest_gap_ratio)`` of a solution (None where unknown)."""
    if sol.multipoles is not None:
        est = sol.extra.get("model_error")
        err = None if est is None else max(est["body_moment_error"], est["far_field_bound"])
        return "multipole", err, sol.extra.get("closest_gap_ratio")
    near = sol.extra.get("near_contact")
    if near is None:
        return "dipole", None, None
    return "dipole", near["dipole_error"], near["gap_ratio"]


def save_result(path, solution, *, observables=(), config_text=None, overwrite=False):
    """Write a solution to an HDF5 file atomically.

    Parameters
    ----------
    path : str or Path
        Target file; its folder is created if missing.
    solution : Solution
    observables : iterable of str or dict
        Names from :data:`~dipolearray.observables.OBSERVABLES` to compute and store,
        or a mapping name -> precomputed array.
    config_text : str, optional
        The config that produced the run, stored verbatim.
    overwrite : bool
        Replace an existing file (default: refuse, so results are never lost).

    Returns
    -------
    Path
        The written file.
    """
    from ..observables import OBSERVABLES

    path = Path(path)
    if path.exists() and not overwrite:
        raise InputError(f"output: {path} exists; pass overwrite=True (--overwrite) to replace it", "output")
    if isinstance(observables, dict):
        computed = dict(observables)
    else:
        names = list(observables)
        unknown = [n for n in names if n not in OBSERVABLES]
        if unknown:
            raise InputError(
                f"observables: unknown name {unknown[0]!r}; allowed: {', '.join(OBSERVABLES)}",
                "observables",
            )
        computed = {n: OBSERVABLES[n].compute(solution) for n in names}

    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        _write(tmp, solution, computed, config_text)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.remove(tmp)
        raise
    return path


def _write(tmp, sol, computed, config_text):
    from ..observables import OBSERVABLES

    h5py = _h5py()
    scene = sol.scene
    with h5py.File(tmp, "w") as f:
        f.attrs["format"] = FORMAT_NAME
        f.attrs["schema_version"] = SCHEMA_VERSION
        f.attrs["package_version"] = __version__
        f.attrs["created_utc"] = _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
        f.attrs["convention"] = CONVENTION
        g = f.create_group("scene")
        g.attrs["boundary"] = scene.boundary
        g.attrs["host_name"] = scene.host.name
        g.attrs["eps_host"] = complex(scene.eps_host)
        g.attrs["sample_radius"] = _nan(scene.sample_radius)
        g.attrs["box"] = np.full(3, np.nan) if scene.box is None else np.asarray(scene.box, dtype=float)
        g.attrs["length_unit_m"] = _nan(scene.length_unit_m)
        g.attrs["field_V_per_m"] = _nan(scene.field_V_per_m)
        _dataset(g, "positions", scene.positions, "length", scene)
        _dataset(g, "population_index", scene.population_index, "1", scene)
        _dataset(g, "scale", scene.scale, "1", scene)
        _dataset(g, "rotations", scene.rotations, "1", scene)
        _dataset(g, "field", scene.field, "field", scene)
        pg = g.create_group("populations")
        for i, pop in enumerate(scene.populations):
            q = pg.create_group(str(i))
            q.attrs["name"] = pop.name
            q.attrs["shape"] = pop.shape.kind
            q.attrs["semi_axes"] = np.array(pop.shape.semi_axes, dtype=float)
            q.attrs["material_name"] = pop.material.name
            q.attrs["eps"] = complex(pop.material.eps)
        s = f.create_group("solution")
        for key in ("converged", "reason", "method", "method_reason", "backend", "iterations", "n_applies"):
            s.attrs[key] = getattr(sol, key)
        s.attrs["spectral_radius"] = _nan(sol.spectral_radius)
        s.attrs["wall_s"] = float(sol.wall_s)
        s.attrs["rtol"] = float(sol.rtol)
        s.attrs["atol"] = float(sol.atol)
        _dataset(s, "moments", sol.moments, "moment", scene)
        _dataset(s, "residual_history", sol.residual_history, "1", scene)
        _dataset(s, "residual", sol.residual, "1", scene)
        model, model_err, gap = model_record(sol)
        s.attrs["model"] = model
        s.attrs["model_error"] = _nan(model_err)
        s.attrs["closest_gap"] = _nan(gap)
        if sol.multipoles is not None:
            orders = np.asarray(sol.extra.get("orders", np.ones(scene.n_bodies)), dtype=np.int64)
            _dataset(s, "orders", orders, "1", scene)
            _dataset(s, "multipoles", sol.multipoles, "1", scene)
        o = f.create_group("observables")
        for name, value in computed.items():
            kind = OBSERVABLES[name].unit if name in OBSERVABLES else "1"
            ds = _dataset(o, name, np.asarray(value), kind, scene)
            if name in OBSERVABLES:
                ds.attrs["description"] = OBSERVABLES[name].description
        if config_text is not None:
            f.create_dataset("config", data=str(config_text), dtype=h5py.string_dtype())


def _open(path):
    h5py = _h5py()
    path = Path(path)
    if not path.exists():
        raise InputError(f"path: no such file {path}", "path")
    try:
        f = h5py.File(path, "r")
    except OSError as exc:
        raise SchemaError(f"{path}: not an HDF5 file ({exc})") from None
    fmt = f.attrs.get("format")
    ver = f.attrs.get("schema_version")
    if fmt != FORMAT_NAME:
        f.close()
        raise SchemaError(f"{path}: not a dipolearray result (format attribute {fmt!r})")
    if ver is None or int(ver) > SCHEMA_VERSION or int(ver) < 1:
        f.close()
        raise SchemaError(
            f"{path}: schema version {ver!r} is not readable by this version "
            f"(reads 1..{SCHEMA_VERSION}); upgrade dipolearray"
        )
    return f


def _opt(v):
    v = float(v)
    return None if math.isnan(v) else v


def _eps(v):
    c = complex(v)
    return c.real if c.imag == 0 else c


def _str(v):
    return v.decode() if isinstance(v, bytes) else str(v)


def load_result(path):
    """Read a result file back into a :class:`~dipolearray.solvers.Solution`.

    Raises
    ------
    SchemaError
        When the file is not a dipolearray result or its schema version is newer.
    """
    from ..materials import Material
    from ..scene import Population, Scene
    from ..shapes import Ellipsoid, Sphere, Spheroid
    from ..solvers import Solution

    with _open(path) as f:
        try:
            g = f["scene"]
            pops = []
            pg = g["populations"]
            for i in range(len(pg)):
                q = pg[str(i)]
                a = np.asarray(q.attrs["semi_axes"], dtype=float)
                kind = _str(q.attrs["shape"])
                if kind == "sphere":
                    shape = Sphere(float(a[0]))
                elif kind == "spheroid":
                    shape = Spheroid(polar=float(a[2]), equatorial=float(a[0]))
                else:
                    shape = Ellipsoid(*map(float, a))
                mat = Material(_eps(q.attrs["eps"]), name=_str(q.attrs["material_name"]))
                pops.append(Population(shape, mat, name=_str(q.attrs["name"])))
            scene = Scene(
                positions=g["positions"][...],
                populations=tuple(pops),
                population_index=g["population_index"][...],
                host=Material(_eps(g.attrs["eps_host"]), name=_str(g.attrs["host_name"])),
                field=g["field"][...],
                scale=g["scale"][...],
                rotations=g["rotations"][...],
                boundary=_str(g.attrs["boundary"]),
                sample_radius=_opt(g.attrs["sample_radius"]),
                box=_box(g.attrs.get("box")),
                length_unit_m=_opt(g.attrs["length_unit_m"]),
                field_V_per_m=_opt(g.attrs["field_V_per_m"]),
                check_overlap=False,
            )
            s = f["solution"]
            return Solution(
                scene=scene,
                moments=s["moments"][...],
                converged=bool(s.attrs["converged"]),
                reason=_str(s.attrs["reason"]),
                method=_str(s.attrs["method"]),
                method_reason=_str(s.attrs["method_reason"]),
                backend=_str(s.attrs["backend"]),
                iterations=int(s.attrs["iterations"]),
                n_applies=int(s.attrs["n_applies"]),
                residual_history=s["residual_history"][...],
                residual=s["residual"][...],
                spectral_radius=_opt(s.attrs["spectral_radius"]),
                wall_s=float(s.attrs["wall_s"]),
                rtol=float(s.attrs["rtol"]),
                atol=float(s.attrs["atol"]),
                multipoles=s["multipoles"][...] if "multipoles" in s else None,
                extra=_stored_extra(s),
            )
        except KeyError as exc:
            raise SchemaError(f"{path}: missing entry ({exc})") from None


def _stored_extra(s):
    extra = {"model": _str(s.attrs.get("model", "dipole"))}
    err = s.attrs.get("model_error")
    if err is not None and not math.isnan(float(err)):
        extra["stored_model_error"] = float(err)
    if "orders" in s:
        extra["orders"] = s["orders"][...]
    return extra


def read_observables(path) -> dict:
    """Stored observables as ``{name: ndarray}`` (reduced units)."""
    with _open(path) as f:
        return {k: f["observables"][k][...] for k in f["observables"]}


def read_config_text(path) -> str | None:
    """The config text stored with the run, or ``None``."""
    with _open(path) as f:
        if "config" not in f:
            return None
        return _str(f["config"][()])


def describe(path) -> str:
    """A human-readable summary of what a result file holds."""
    lines = []
    with _open(path) as f:
        lines.append(
            f"{path}: {FORMAT_NAME} schema {int(f.attrs['schema_version'])}, written by dipolearray "
            f"{_str(f.attrs['package_version'])} at {_str(f.attrs['created_utc'])}"
        )
        g = f["scene"]
        n = g["positions"].shape[0]
        k = g["field"].shape[0]
        pops = g["populations"]
        names = ", ".join(
            f"{_str(pops[i].attrs['name'])} ({_str(pops[i].attrs['shape'])}, "
            f"eps {complex(pops[i].attrs['eps'])})"
            for i in sorted(pops, key=int)
        )
        lines.append(f"scene: {n} bodies, {k} applied field(s), host eps {complex(g.attrs['eps_host'])}")
        lines.append(f"populations: {names}")
        lu, fv = _opt(g.attrs["length_unit_m"]), _opt(g.attrs["field_V_per_m"])
        if lu is not None and fv is not None:
            lines.append(f"units: reduced length = {lu:.4g} m, |E0| = {fv:.4g} V/m")
        s = f["solution"]
        state = "converged" if bool(s.attrs["converged"]) else f"NOT converged ({_str(s.attrs['reason'])})"
        lines.append(
            f"solution: {_str(s.attrs['method'])} (backend {_str(s.attrs['backend'])}), {state}, "
            f"{int(s.attrs['iterations'])} iterations, max residual {float(np.max(s['residual'][...])):.2e}, "
            f"{float(s.attrs['wall_s']):.3g} s"
        )
        for name in f["observables"]:
            ds = f["observables"][name]
            lines.append(f"observable {name}: shape {ds.shape}, unit {_str(ds.attrs['unit'])}")
        if "config" in f:
            lines.append("config: stored")
    return "\n".join(lines)


def _box(value):
    if value is None:
        return None
    arr = np.asarray(value, dtype=float)
    return None if np.all(np.isnan(arr)) else arr
