"""Sweep files: one HDF5 file, one group per state point and realization, written as results arrive."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from .._version import __version__
from ..errors import InputError, SchemaError
from ._hdf5 import _h5py
from ._schema import CONVENTION, SWEEP_FORMAT_NAME, SWEEP_SCHEMA_VERSION

SWEEP_FORMAT = SWEEP_FORMAT_NAME
SWEEP_VERSION = SWEEP_SCHEMA_VERSION
#: Optional per-realization field-enhancement attributes (``|E|/|E0|``).
ENHANCEMENT_KEYS = ("enhancement_surface_p99", "enhancement_surface_max", "enhancement_local_max")


def _point_json(points):
    try:
        return json.dumps(list(points), sort_keys=True)
    except TypeError as exc:
        raise InputError(f"points: state points must be JSON-serialisable dicts ({exc})", "points") from None


class SweepStore:
    """A sweep's HDF5 file: ``/points/p0000/r0000`` groups with the effective tensor and solve record.

    Opening an existing file checks that it holds the same state points (resuming a
    sweep), so finished realizations are kept and never redone; each new one is written
    and flushed as soon as it arrives.
    """

    def __init__(self, path, points, n_realizations, description="", config_text=None):
        self.path = Path(path)
        self.points = list(points)
        self.n_realizations = int(n_realizations)
        text = _point_json(self.points)
        h5py = _h5py()
        if self.path.exists():
            with h5py.File(self.path, "r") as f:
                if f.attrs.get("format") != SWEEP_FORMAT:
                    raise SchemaError(f"{self.path}: not a dipolearray sweep file")
                if f.attrs["points_json"] != text:
                    raise InputError(
                        f"points: {self.path} holds a sweep over other state points; choose another "
                        "output or delete the file",
                        "points",
                    )
        else:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            with h5py.File(self.path, "w") as f:
                f.attrs["format"] = SWEEP_FORMAT
                f.attrs["schema_version"] = SWEEP_VERSION
                f.attrs["package_version"] = __version__
                f.attrs["convention"] = CONVENTION
                f.attrs["points_json"] = text
                f.attrs["description"] = description
                if config_text is not None:
                    f.create_dataset("config", data=str(config_text), dtype=h5py.string_dtype())
                g = f.create_group("points")
                for i, p in enumerate(self.points):
                    g.create_group(f"p{i:04d}").attrs["point_json"] = json.dumps(p, sort_keys=True)

    def config_text(self):
        """The config text the sweep was made from, or ``None``."""
        with _h5py().File(self.path, "r") as f:
            if "config" not in f:
                return None
            v = f["config"][()]
            return v.decode() if isinstance(v, bytes) else str(v)

    def description(self):
        """The file's ``description`` attribute."""
        with _h5py().File(self.path, "r") as f:
            v = f.attrs.get("description", "")
            return v.decode() if isinstance(v, bytes) else str(v)

    def done(self):
        """Set of finished ``(point, realization)`` pairs."""
        out = set()
        with _h5py().File(self.path, "r") as f:
            for name, g in f["points"].items():
                i = int(name[1:])
                out.update((i, int(r[1:])) for r in g)
        return out

    def write(self, i, r, record):
        """Store one realization (``record`` from the sweep task) and flush."""
        with _h5py().File(self.path, "a") as f:
            g = f["points"][f"p{i:04d}"].create_group(f"r{r:04d}")
            g.create_dataset("eps_tensor", data=np.asarray(record["eps_tensor"], dtype=np.complex128))
            g["eps_tensor"].attrs["unit"] = "1"
            for key in ("seed", "n_bodies", "iterations", "converged", "wall_s", "method", "volume_fraction"):
                g.attrs[key] = record[key]
            for key in ENHANCEMENT_KEYS:
                if key in record:
                    g.attrs[key] = float(record[key])
            f.flush()

    def read(self):
        """``(points, tensors, records)``: per point a ``(n, 3, 3)`` array and the attribute dicts."""
        tensors, records = [], []
        with _h5py().File(self.path, "r") as f:
            for i in range(len(self.points)):
                g = f["points"][f"p{i:04d}"]
                names = sorted(g)
                tensors.append(np.array([g[n]["eps_tensor"][...] for n in names]).reshape(-1, 3, 3))
                records.append([dict(g[n].attrs) for n in names])
        return self.points, tensors, records


def open_sweep(path, points, n_realizations, description="", config_text=None):
    """Create or reopen (resume) a sweep file; see :class:`SweepStore`."""
    return SweepStore(path, points, n_realizations, description, config_text)


def read_sweep(path):
    """Open an existing sweep file for reading (its own state points)."""
    p = Path(path)
    if not p.exists():
        raise InputError(f"path: no such file {str(p)!r}", "path")
    with _h5py().File(p, "r") as f:
        if f.attrs.get("format") != SWEEP_FORMAT:
            raise SchemaError(f"{p}: not a dipolearray sweep file")
        points = json.loads(f.attrs["points_json"])
    return SweepStore(p, points, 0)
