from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._validate import as_float_array, as_int, as_positive, check_choice
from ..errors import InputError


@dataclass(frozen=True, eq=False)
class Arrangement:
    """Geometry for a scene.

    Attributes
    ----------
    positions : (N, 3) ndarray of float, reduced length
    radii : (N,) ndarray of float
        Per-body size (sphere radius, or the scale of a population's shape).
    sample_radius : float or None
        Radius of the spherical sample the bodies fill.
    description : str
    box : (3,) ndarray or None
        Edges of the periodic box (periodic samples only).
    """

    positions: np.ndarray
    radii: np.ndarray
    sample_radius: float | None
    description: str
    box: np.ndarray | None = None

    @property
    def n_bodies(self) -> int:
        """Number of bodies."""
        return int(self.positions.shape[0])

    @property
    def volume_fraction(self) -> float | None:
        """Body volume over sample volume (spherical samples only)."""
        if self.sample_radius is None:
            return None
        return float(np.sum(self.radii**3) / self.sample_radius**3)


def cubic_lattice_sphere(spacing, cut_radius, radius=1.0):
    """Simple cubic lattice points within a sphere.

    Parameters
    ----------
    spacing : float
        Lattice constant ``d`` (reduced length).
    cut_radius : float
        Keep points with ``|r| <= cut_radius``; the lattice has a point at the origin.
    radius : float
        Body radius (``<= spacing / 2`` so neighbours do not overlap).

    Returns
    -------
    Arrangement
        ``sample_radius`` is that of the sphere with the same volume as the N unit
        cells, ``R = (3 N / (4 pi))^(1/3) d``, so the sample's mean density is exact.
    """
    d = as_positive(spacing, "spacing")
    rc = as_positive(cut_radius, "cut_radius")
    a = as_positive(radius, "radius")
    if a > d / 2:
        raise InputError(f"radius: {a} exceeds half the spacing {d / 2}; bodies would overlap", "radius")
    m = int(math.floor(rc / d))
    g = np.arange(-m, m + 1) * d
    pts = np.stack(np.meshgrid(g, g, g, indexing="ij"), axis=-1).reshape(-1, 3)
    pts = pts[np.linalg.norm(pts, axis=1) <= rc * (1 + 1e-12)]
    n = pts.shape[0]
    R = (3.0 * n / (4.0 * math.pi)) ** (1.0 / 3.0) * d
    return Arrangement(pts, np.full(n, a), R, f"simple cubic, spacing {d:g}, cut at {rc:g}")


def chain(n_bodies, spacing, axis=(0.0, 0.0, 1.0), radius=1.0, centre=(0.0, 0.0, 0.0)):
    """``n_bodies`` bodies on a straight line, centred on ``centre``.

    Parameters
    ----------
    n_bodies : int
    spacing : float
        Centre-to-centre distance (``>= 2 radius``; equal means touching).
    axis : (3,) array_like
        Direction of the chain.
    radius : float
    """
    n = as_int(n_bodies, "n_bodies", minimum=1)
    d = as_positive(spacing, "spacing")
    a = as_positive(radius, "radius")
    if d < 2 * a * (1 - 1e-12):
        raise InputError(f"spacing: {d} is less than a diameter {2 * a}; bodies would overlap", "spacing")
    u = as_float_array(axis, "axis", (3,))
    if not np.linalg.norm(u):
        raise InputError("axis: must be a non-zero vector", "axis")
    u = u / np.linalg.norm(u)
    c = as_float_array(centre, "centre", (3,))
    t = (np.arange(n) - (n - 1) / 2.0) * d
    return Arrangement(c + t[:, None] * u, np.full(n, a), None, f"chain of {n}, spacing {d:g}")


def random_sequential_addition(
    n_bodies, volume_fraction, radius=1.0, *, radii=None, region="sphere", rng=None, max_attempts=2000
):
    """Random non-overlapping spheres by random sequential addition.

    Bodies are placed one at a time at uniformly random positions inside the region,
    rejecting a trial that overlaps an earlier body (checked on a cell list, so a
    trial costs O(1)). Larger bodies are placed first.

    Parameters
    ----------
    n_bodies : int
    volume_fraction : float
        Target body volume over region volume, ``0 < phi < 0.3`` (addition jams near
        0.38 for monodisperse spheres and slows long before).
    radius : float
        Radius of every body (ignored when ``radii`` is given).
    radii : (n_bodies,) array_like, optional
        Per-body radii (polydisperse).
    region : {"sphere", "cube"}
        Shape of the sample. Body centres keep a radius away from the boundary.
    rng : numpy.random.Generator or int, optional
    max_attempts : int
        Trials per body before giving up with an error.

    Returns
    -------
    Arrangement
        Bodies in their original order (``radii`` order when given).
    """
    n = as_int(n_bodies, "n_bodies", minimum=1)
    phi = as_positive(volume_fraction, "volume_fraction")
    if phi >= 0.3:
        raise InputError(
            f"volume_fraction: {phi} is too dense for random sequential addition (allowed < 0.3)",
            "volume_fraction",
        )
    check_choice(region, "region", ("sphere", "cube"))
    if radii is None:
        r = np.full(n, as_positive(radius, "radius"))
    else:
        r = as_float_array(radii, "radii", (n,))
        if np.any(r <= 0):
            raise InputError("radii: every radius must be > 0", "radii")
    rng = np.random.default_rng(rng)
    total = float(np.sum(4.0 / 3.0 * math.pi * r**3))
    volume = total / phi
    if region == "sphere":
        R = (3.0 * volume / (4.0 * math.pi)) ** (1.0 / 3.0)
        half = R
    else:
        R = None
        half = volume ** (1.0 / 3.0) / 2.0
    rmax = float(r.max())
    cell = 2.0 * rmax
    ncell = max(1, int(math.ceil(2.0 * half / cell)))
    grid: dict[tuple, list] = {}
    pos = np.empty((n, 3))

    def clear(c, ri, key):
        for dx in (-1, 0, 1):
            for dy in (-1, 0, 1):
                for dz in (-1, 0, 1):
                    for j in grid.get((key[0] + dx, key[1] + dy, key[2] + dz), ()):
                        dv = c - pos[j]
                        if dv @ dv < (ri + r[j]) ** 2:
                            return False
        return True

    for placed, idx in enumerate(np.argsort(-r, kind="stable")):
        ri = r[idx]
        lim = half - ri
        if lim <= 0:
            raise InputError("radii: a body is larger than the sample region", "radii")
        for _attempt in range(max_attempts):
            c = rng.uniform(-lim, lim, 3)
            if region == "sphere" and c @ c > lim * lim:
                continue
            key = tuple(np.minimum(((c + half) / cell).astype(int), ncell - 1))
            if clear(c, ri, key):
                pos[idx] = c
                grid.setdefault(key, []).append(idx)
                break
        else:
            raise InputError(
                f"volume_fraction: placed {placed} of {n} bodies, then {max_attempts} attempts "
                f"failed at fraction {phi}; lower the fraction",
                "volume_fraction",
            )
    desc = f"random sequential addition, {n} bodies, fraction {phi:g}, {region}"
    return Arrangement(pos, r, R, desc)
