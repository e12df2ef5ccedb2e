from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from .._validate import as_float_array, as_positive, check_choice
from ..errors import InputError, OverlapError
from ..materials import Material
from ..shapes import Ellipsoid, Sphere, Spheroid, interior_field_factors, polarizability_tensors
from ._overlap import find_overlaps

_SHAPES = (Sphere, Spheroid, Ellipsoid)
BOUNDARIES = ("open", "periodic")


@dataclass(frozen=True)
class Population:
    """A kind of inclusion: a reference shape and a material.

    Parameters
    ----------
    shape : Sphere, Spheroid or Ellipsoid
        Reference shape in reduced lengths; each body may scale it
        (``Scene.scale``) and orient it (``Scene.rotations``).
    material : Material
        The inclusion's permittivity.
    name : str
        Label carried into results.
    """

    shape: Sphere | Spheroid | Ellipsoid
    material: Material
    name: str = "filler"

    def __post_init__(self):
        if not isinstance(self.shape, _SHAPES):
            raise InputError(
                f"shape: expected Sphere, Spheroid or Ellipsoid, got {type(self.shape).__name__}",
                "shape",
            )
        if not isinstance(self.material, Material):
            raise InputError(f"material: expected a Material, got {type(self.material).__name__}", "material")


def _readonly(arr):
    arr = np.ascontiguousarray(arr)
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True, eq=False)
class Scene:
    """A validated system of polarizable bodies in a host (reduced units).

    Parameters
    ----------
    positions : (N, 3) array_like of float, reduced length
        Body centres.
    populations : Population or sequence of Population
        The kinds of body present.
    population_index : (N,) array_like of int, optional
        Which population each body belongs to (default: all in population 0).
    host : Material
        The matrix the bodies sit in.
    field : (K, 3) or (3,) array_like of float, optional
        Applied field vectors ``E0``, one per right-hand side, in units of the field
        strength (default: the three unit axes, which gives the full tensor).
    scale : (N,) array_like of float, optional
        Per-body multiplier of the population's semi-axes (polydispersity).
    rotations : (N, 3, 3) array_like of float, optional
        Per-body orientation; columns are the body axes in lab coordinates.
    boundary : {"open", "periodic"}
        A finite sample in an infinite host, or a periodic box (Ewald summation,
        conducting outer boundary) of edges ``box``.
    box : (3,) array_like of float, optional
        Edges of the orthorhombic periodic box (``boundary = "periodic"`` only).
    sample_radius : float, optional
        Radius of the spherical sample the bodies fill (reduced length), used to turn
        the total moment into an effective permittivity.
    length_unit_m : float, optional
        SI length of one reduced length unit (metadata for the store).
    field_V_per_m : float, optional
        SI strength of the applied field (metadata for the store).
    check_overlap : bool
        Reject overlapping bodies (default True).

    Examples
    --------
    >>> from dipolearray import Material, Sphere
    >>> pop = Population(Sphere(1.0), Material(10.0))
    >>> s = Scene([[0, 0, 0], [0, 0, 2.5]], pop, host=Material(2.0))
    >>> s.n_bodies, s.n_fields
    (2, 3)
    """

    positions: np.ndarray
    populations: tuple
    population_index: np.ndarray | None = None
    host: Material = field(default_factory=lambda: Material(1.0, name="vacuum"))
    field: np.ndarray | None = None
    scale: np.ndarray | None = None
    rotations: np.ndarray | None = None
    boundary: str = "open"
    sample_radius: float | None = None
    length_unit_m: float | None = None
    field_V_per_m: float | None = None
    check_overlap: bool = True
    box: np.ndarray | None = None

    def __post_init__(self):
        put = lambda k, v: object.__setattr__(self, k, v)  # noqa: E731
        pos = as_float_array(self.positions, "positions", (None, 3))
        n = pos.shape[0]
        if n == 0:
            raise InputError("positions: a scene needs at least one body, got shape (0, 3)", "positions")
        put("positions", _readonly(pos))

        pops = self.populations
        if isinstance(pops, Population):
            pops = (pops,)
        try:
            pops = tuple(pops)
        except TypeError:
            raise InputError(
                f"populations: expected a Population or a sequence of them, got {type(pops).__name__}",
                "populations",
            ) from None
        if not pops or not all(isinstance(p, Population) for p in pops):
            raise InputError("populations: expected one or more Population objects", "populations")
        put("populations", pops)

        if self.population_index is None:
            idx = np.zeros(n, dtype=np.int64)
        else:
            raw = np.asarray(self.population_index)
            if raw.shape != (n,) or raw.dtype.kind not in "iu":
                raise InputError(
                    f"population_index: expected {n} integers (one per body), got shape "
                    f"{raw.shape} of {raw.dtype}",
                    "population_index",
                )
            idx = raw.astype(np.int64)
            if idx.min() < 0 or idx.max() >= len(pops):
                bad = int(np.flatnonzero((idx < 0) | (idx >= len(pops)))[0])
                raise InputError(
                    f"population_index: body {bad} refers to population {int(idx[bad])}, "
                    f"allowed 0..{len(pops) - 1}",
                    "population_index",
                )
        put("population_index", _readonly(idx))

        if not isinstance(self.host, Material):
            raise InputError(f"host: expected a Material, got {type(self.host).__name__}", "host")

        if self.field is None:
            e0 = np.eye(3)
        else:
            e0 = as_float_array(self.field, "field")
            if e0.ndim == 1:
                e0 = e0[None, :]
            if e0.ndim != 2 or e0.shape[1] != 3 or e0.shape[0] == 0:
                raise InputError(f"field: expected shape (K, 3) or (3,), got {e0.shape}", "field")
            if np.any(np.linalg.norm(e0, axis=1) == 0):
                raise InputError("field: every applied field vector must be non-zero", "field")
        put("field", _readonly(e0))

        if self.scale is None:
            sc = np.ones(n)
        else:
            sc = as_float_array(self.scale, "scale", (n,))
            if np.any(sc <= 0):
                bad = int(np.flatnonzero(sc <= 0)[0])
                raise InputError(f"scale: sizes must be > 0, got {sc[bad]} for body {bad}", "scale")
        put("scale", _readonly(sc))

        if self.rotations is None:
            rot = np.broadcast_to(np.eye(3), (n, 3, 3)).copy()
        else:
            rot = as_float_array(self.rotations, "rotations", (n, 3, 3))
            err = np.abs(np.einsum("nki,nkj->nij", rot, rot) - np.eye(3)).max(axis=(1, 2))
            det = np.linalg.det(rot)
            bad = np.flatnonzero((err > 1e-8) | (det < 0))
            if bad.size:
                raise InputError(
                    f"rotations: body {int(bad[0])} is not a proper rotation matrix "
                    "(orthonormal columns, determinant +1)",
                    "rotations",
                )
        put("rotations", _readonly(rot))

        check_choice(self.boundary, "boundary", BOUNDARIES)
        if self.boundary == "periodic":
            if self.box is None:
                raise InputError("box: a periodic scene needs the box edges (3 lengths)", "box")
            box = as_float_array(self.box, "box", (3,))
            if np.any(box <= 0):
                raise InputError(f"box: edges must be > 0, got {tuple(box)}", "box")
            if 4.0 * float(self.semi_axes.max()) > float(box.min()):
                raise InputError(
                    f"box: the smallest edge {box.min():.4g} must be at least 4 bounding radii "
                    f"({4.0 * float(self.semi_axes.max()):.4g}) for minimum-image overlap checks",
                    "box",
                )
            put("box", _readonly(box))
            if self.sample_radius is not None:
                raise InputError(
                    "sample_radius: a periodic scene has a box, not a sample radius", "sample_radius"
                )
        elif self.box is not None:
            raise InputError("box: only boundary = 'periodic' takes a box", "box")
        for key in ("sample_radius", "length_unit_m", "field_V_per_m"):
            val = getattr(self, key)
            if val is not None:
                put(key, as_positive(val, key))

        if self.check_overlap:
            pairs = find_overlaps(self.positions, self.semi_axes, self.rotations, max_pairs=5, box=self.box)
            if pairs:
                i, j = pairs[0]
                d = float(np.linalg.norm(self.positions[i] - self.positions[j]))
                listed = ", ".join(f"({a}, {b})" for a, b in pairs)
                raise OverlapError(
                    f"positions: bodies overlap, first pairs {listed}; bodies {i} and {j} "
                    f"have centres {d:.6g} apart",
                    pairs,
                )

    # ----------------------------------------------------------------- derived data
    @property
    def n_bodies(self) -> int:
        """Number of bodies N."""
        return int(self.positions.shape[0])

    @property
    def n_fields(self) -> int:
        """Number of applied field vectors (right-hand sides) K."""
        return int(self.field.shape[0])

    @cached_property
    def semi_axes(self) -> np.ndarray:
        """(N, 3) semi-axes of every body, reduced length."""
        ref = np.array([p.shape.semi_axes for p in self.populations])
        return _readonly(ref[self.population_index] * self.scale[:, None])

    @cached_property
    def eps_inclusion(self) -> np.ndarray:
        """(N,) relative permittivity of every body (complex when any phase is lossy)."""
        eps = np.array([complex(p.material.eps) for p in self.populations])
        if not self.is_complex:
            eps = eps.real
        return _readonly(eps[self.population_index])

    @property
    def eps_host(self):
        """Relative permittivity of the host."""
        return self.host.eps

    @property
    def is_complex(self) -> bool:
        """True when any permittivity is complex (moments are then complex)."""
        return self.host.is_lossy or any(p.material.is_lossy for p in self.populations)

    @property
    def dtype(self):
        """Working dtype of moments: float64 or complex128."""
        return np.dtype(np.complex128 if self.is_complex else np.float64)

    @cached_property
    def polarizability(self) -> np.ndarray:
        """(N, 3, 3) lab-frame polarizability of each isolated body, reduced units."""
        a = polarizability_tensors(self.semi_axes, self.rotations, self.eps_inclusion, self.eps_host)
        return _readonly(a.astype(self.dtype))

    @cached_property
    def polarizability_sqrt(self) -> np.ndarray:
        """(N, 3, 3) principal square root ``R diag(alpha_k**0.5) R^T`` (real when it can be)."""
        a = polarizability_tensors(
            self.semi_axes, self.rotations, self.eps_inclusion, self.eps_host, power=0.5
        )
        if not np.any(a.imag):
            a = a.real
        return _readonly(a)

    @cached_property
    def interior_factor(self) -> np.ndarray:
        """(N, 3, 3) map from exciting field to each body's uniform interior field."""
        g = interior_field_factors(self.semi_axes, self.rotations, self.eps_inclusion, self.eps_host)
        return _readonly(g.astype(self.dtype))

    @cached_property
    def volumes(self) -> np.ndarray:
        """(N,) body volumes, reduced length cubed."""
        return _readonly(4.0 * np.pi / 3.0 * np.prod(self.semi_axes, axis=1))

    @cached_property
    def bounding_radii(self) -> np.ndarray:
        """(N,) radius of each body's enclosing sphere."""
        return _readonly(self.semi_axes.max(axis=1))

    @property
    def is_spherical(self) -> np.ndarray:
        """(N,) True for bodies whose semi-axes are all equal."""
        s = self.semi_axes
        return np.ptp(s, axis=1) <= 1e-12 * s.max(axis=1)

    @classmethod
    def from_arrangement(cls, arrangement, populations, *, boundary=None, **kwargs) -> Scene:
        """A scene from an :class:`~dipolearray.arrange.Arrangement` and the populations it uses.

        Each body's size and orientation come from the arrangement: its per-body
        semi-axes must be a uniform multiple of its population's shape (that multiple
        becomes ``scale``), its ``labels`` pick the population (all population 0 when
        absent), and a spherical sample's radius becomes ``sample_radius``.

        Parameters
        ----------
        arrangement : Arrangement
        populations : Population or sequence of Population
        boundary : {"open", "periodic"}, optional
            Default: ``"periodic"`` (with the arrangement's box) for a periodic
            arrangement, else ``"open"``. ``"open"`` on a periodic arrangement treats the
            box as a finite cube sample.
        **kwargs
            Any other :class:`Scene` field (``host``, ``field``, ``length_unit_m``, ...).

        Examples
        --------
        >>> from dipolearray import Material, Sphere
        >>> from dipolearray.arrange import random_sequential_addition
        >>> arr = random_sequential_addition(50, 0.1, radii=np.linspace(0.5, 1.0, 50), rng=0)
        >>> s = Scene.from_arrangement(arr, Population(Sphere(0.5), Material(8.0)))
        >>> float(s.scale.max()), s.sample_radius == arr.sample_radius
        (2.0, True)
        """
        arr = arrangement
        pops = (populations,) if isinstance(populations, Population) else tuple(populations)
        if boundary is None:
            boundary = "periodic" if arr.region == "periodic" else "open"
        if boundary == "periodic":
            if arr.box is None:
                raise InputError("boundary: 'periodic' needs a periodic arrangement (with a box)", "boundary")
            kwargs.setdefault("box", arr.box)
        n = arr.n_bodies
        index = np.zeros(n, dtype=np.int64) if arr.labels is None else np.asarray(arr.labels, dtype=np.int64)
        if index.size and (index.min() < 0 or index.max() >= len(pops)):
            raise InputError(
                f"populations: the arrangement labels bodies 0..{int(index.max())}, but "
                f"{len(pops)} population(s) were given",
                "populations",
            )
        semi = np.asarray(arr.body_semi_axes, dtype=float)
        shape = np.array([p.shape.semi_axes for p in pops], dtype=float)[index]
        ratio = semi / shape
        scale = ratio.mean(axis=1)
        bad = np.flatnonzero(np.ptp(ratio, axis=1) > 1e-9 * scale)
        if bad.size:
            k = int(bad[0])
            raise InputError(
                f"populations: body {k} has semi-axes {tuple(semi[k])}, not a multiple of its "
                f"population's {tuple(shape[k])}",
                "populations",
            )
        if boundary == "open":
            kwargs.setdefault("sample_radius", arr.sample_radius)
        return cls(
            positions=arr.positions,
            populations=pops,
            population_index=index,
            scale=scale,
            rotations=None if arr.rotations is None else arr.rotations,
            boundary=boundary,
            **kwargs,
        )

    def replace(self, **changes) -> Scene:
        """Return a new, re-validated scene with some fields changed."""
        unknown = set(changes) - {f.name for f in dataclasses.fields(self)}
        if unknown:
            key = sorted(unknown)[0]
            raise InputError(f"replace: unknown field {key!r}", key)
        return dataclasses.replace(self, **changes)

    def __repr__(self) -> str:
        names = ", ".join(p.name for p in self.populations)
        return (
            f"Scene(n_bodies={self.n_bodies}, populations=[{names}], eps_host={self.eps_host!r}, "
            f"n_fields={self.n_fields}, boundary={self.boundary!r})"
        )
