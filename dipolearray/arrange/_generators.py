from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from .._validate import as_float_array, as_int, as_positive, check_choice
from ..errors import InputError

REGIONS = ("sphere", "cube", "slab", "periodic")


@dataclass(frozen=True, eq=False)
class Arrangement:
    """Geometry for a scene: where the bodies are, how big, which way they point.

    Attributes
    ----------
    positions : (N, 3) ndarray of float, reduced length
        Centres. Periodic samples keep them in ``[0, box)``.
    radii : (N,) ndarray of float
        Sphere radius, or for other shapes the bounding radius (largest semi-axis).
    sample_radius : float or None
        Radius of the spherical sample the bodies fill (``region == "sphere"``).
    description : str
    box : (3,) ndarray or None
        Edges of the periodic box (``region == "periodic"``).
    semi_axes : (N, 3) ndarray or None
        Body semi-axes in the body frame; ``None`` means spheres of ``radii``.
    rotations : (N, 3, 3) ndarray or None
        Columns are the body axes in the lab frame (the third is a spheroid's symmetry
        axis); ``None`` means the identity.
    labels : (N,) ndarray of int or None
        Population index of each body (``None``: one population).
    groups : (N,) ndarray of int or None
        Cluster, chain or group each body was built in (-1: none), as generated; a
        record of construction, not a measurement (see :func:`clusters`).
    region : {"sphere", "cube", "slab", "periodic"} or None
        Sample the bodies fill; ``None`` for a free-standing group (a chain).
    edges : (3,) ndarray or None
        Edges of an open cube or slab sample centred on the origin.
    """

    positions: np.ndarray
    radii: np.ndarray
    sample_radius: float | None
    description: str
    box: np.ndarray | None = None
    semi_axes: np.ndarray | None = None
    rotations: np.ndarray | None = None
    labels: np.ndarray | None = None
    groups: np.ndarray | None = None
    region: str | None = None
    edges: np.ndarray | None = None

    def __post_init__(self):
        region = self.region
        if region is None:
            if self.box is not None:
                region = "periodic"
            elif self.sample_radius is not None:
                region = "sphere"
            object.__setattr__(self, "region", region)
        if region is not None:
            check_choice(region, "region", REGIONS)

    @property
    def n_bodies(self) -> int:
        """Number of bodies."""
        return int(self.positions.shape[0])

    @property
    def body_semi_axes(self) -> np.ndarray:
        """(N, 3) semi-axes of every body (spheres repeat their radius)."""
        if self.semi_axes is not None:
            return self.semi_axes
        return np.repeat(np.asarray(self.radii, dtype=float)[:, None], 3, axis=1)

    @property
    def body_rotations(self) -> np.ndarray:
        """(N, 3, 3) body-to-lab rotations (identity when none are set)."""
        if self.rotations is not None:
            return self.rotations
        return np.broadcast_to(np.eye(3), (self.n_bodies, 3, 3))

    @property
    def body_volumes(self) -> np.ndarray:
        """(N,) body volumes."""
        return 4.0 / 3.0 * math.pi * np.prod(self.body_semi_axes, axis=1)

    @property
    def sample_volume(self) -> float | None:
        """Volume of the sample region (``None`` for a free-standing group)."""
        if self.region == "sphere":
            return 4.0 / 3.0 * math.pi * float(self.sample_radius) ** 3
        if self.region == "periodic":
            return float(np.prod(self.box))
        if self.region in ("cube", "slab") and self.edges is not None:
            return float(np.prod(self.edges))
        return None

    @property
    def volume_fraction(self) -> float | None:
        """Body volume over sample volume (``None`` without a sample region)."""
        v = self.sample_volume
        if v is None:
            return None
        return float(np.sum(self.body_volumes) / v)

    def scaled(self, factor) -> Arrangement:
        """The same arrangement with every length multiplied by ``factor`` (a change of unit)."""
        f = as_positive(factor, "factor")

        def mul(v):
            return None if v is None else np.asarray(v, dtype=float) * f

        return replace(
            self,
            positions=self.positions * f,
            radii=np.asarray(self.radii) * f,
            sample_radius=None if self.sample_radius is None else float(self.sample_radius) * f,
            box=mul(self.box),
            semi_axes=mul(self.semi_axes),
            edges=mul(self.edges),
        )

    def replace(self, **changes) -> Arrangement:
        """A copy with some fields changed."""
        return replace(self, **changes)


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
