from __future__ import annotations

import math

import numpy as np

from .._validate import as_float_array, as_int, as_positive, check_choice
from ..errors import InputError
from ._generators import Arrangement

#: Lattice kinds: (orthorhombic cell edges in units of a, fractional basis, default c/a).
_HCP_C = math.sqrt(8.0 / 3.0)
_CELLS = {
    "sc": ((1.0, 1.0, 1.0), [(0, 0, 0)]),
    "bcc": ((1.0, 1.0, 1.0), [(0, 0, 0), (0.5, 0.5, 0.5)]),
    "fcc": ((1.0, 1.0, 1.0), [(0, 0, 0), (0.5, 0.5, 0), (0.5, 0, 0.5), (0, 0.5, 0.5)]),
    "hcp": (
        (1.0, math.sqrt(3.0), _HCP_C),
        [(0, 0, 0), (0.5, 0.5, 0), (0.5, 5.0 / 6.0, 0.5), (0, 1.0 / 3.0, 0.5)],
    ),
    # Body-centred tetragonal: the proposed electrorheological ground state has
    # a = sqrt(6) r, c = 2 r (c/a = sqrt(2/3)), touching chains along z.
    "bct": ((1.0, 1.0, math.sqrt(2.0 / 3.0)), [(0, 0, 0), (0.5, 0.5, 0.5)]),
}
LATTICES = tuple(_CELLS)
SAMPLES = ("sphere", "cube", "slab", "periodic")


def _cell(kind, a, c_over_a):
    edges, basis = _CELLS[kind]
    edges = np.array(edges, dtype=float) * a
    if c_over_a is not None:
        if kind not in ("bct",):
            raise InputError(f"c_over_a: only the 'bct' lattice takes c_over_a, not {kind!r}", "c_over_a")
        edges[2] = as_positive(c_over_a, "c_over_a") * a
    return edges, np.array(basis, dtype=float)


def _nearest_distance(edges, basis):
    pts = []
    for shift in np.ndindex(3, 3, 3):
        s = (np.array(shift) - 1) * edges
        pts.append(basis * edges + s)
    pts = np.concatenate(pts)
    d = np.linalg.norm(pts[:, None, :] - (basis * edges)[None, :, :], axis=2)
    return float(d[d > 1e-12].min())


def touching_fraction(kind, c_over_a=None):
    """Volume fraction of a lattice of touching equal spheres.

    Examples
    --------
    >>> round(touching_fraction("fcc"), 6), round(touching_fraction("bct"), 6)
    (0.74048, 0.698132)
    """
    check_choice(kind, "kind", LATTICES)
    edges, basis = _cell(kind, 1.0, c_over_a)
    r = _nearest_distance(edges, basis) / 2.0
    return len(basis) * 4.0 / 3.0 * math.pi * r**3 / float(np.prod(edges))


def lattice(
    kind,
    *,
    lattice_constant=None,
    volume_fraction=None,
    radius=1.0,
    c_over_a=None,
    sample="sphere",
    size=None,
    cells=None,
):
    """Bodies on a lattice, cut as a finite sample or as a periodic box.

    Parameters
    ----------
    kind : {"sc", "bcc", "fcc", "hcp", "bct"}
    lattice_constant : float, optional
        Edge ``a`` of the conventional cell (reduced length).
    volume_fraction : float, optional
        Instead of ``lattice_constant``: scale the lattice to this filler fraction
        (at most the touching fraction of the lattice).
    radius : float
        Body radius.
    c_over_a : float, optional
        Axial ratio of the ``bct`` cell (default ``sqrt(2/3)``, touching chains).
    sample : {"sphere", "cube", "slab", "periodic"}
        Sphere of radius ``size``, cube of edge ``size``, slab of thickness ``size``
        along z (lateral edge ``4 * size``), or a periodic box of ``cells`` cells.
    size : float
        Sample size for the finite cuts (reduced length).
    cells : int or (3,) ints
        Number of conventional cells per axis for ``sample = "periodic"``.

    Returns
    -------
    Arrangement
        ``sample_radius`` (sphere: equal-volume radius of the N Wigner-Seitz cells),
        ``box`` for periodic samples (positions in ``[0, box)``).

    References
    ----------
    Tao, R. and Sun, J. M. (1991). Three-dimensional structure of induced
    electrorheological solid. Phys. Rev. Lett. 67, 398 (the bct ground state).
    """
    check_choice(kind, "kind", LATTICES)
    check_choice(sample, "sample", SAMPLES)
    r = as_positive(radius, "radius")
    if (lattice_constant is None) == (volume_fraction is None):
        raise InputError(
            "lattice_constant: give exactly one of lattice_constant or volume_fraction", "lattice_constant"
        )
    edges1, basis = _cell(kind, 1.0, c_over_a)
    if lattice_constant is not None:
        a = as_positive(lattice_constant, "lattice_constant")
    else:
        phi = as_positive(volume_fraction, "volume_fraction")
        limit = touching_fraction(kind, c_over_a)
        if phi > limit * (1 + 1e-12):
            raise InputError(
                f"volume_fraction: {phi} exceeds the touching fraction {limit:.6f} of {kind!r}",
                "volume_fraction",
            )
        a = (len(basis) * 4.0 / 3.0 * math.pi * r**3 / (phi * float(np.prod(edges1)))) ** (1.0 / 3.0)
    edges = edges1 * a
    if _nearest_distance(edges, basis) < 2 * r * (1 - 1e-12):
        raise InputError(
            f"lattice_constant: {a:g} is too small; bodies of radius {r:g} would overlap", "lattice_constant"
        )
    cell_volume = float(np.prod(edges)) / len(basis)

    if sample == "periodic":
        n = np.broadcast_to(np.asarray(cells if cells is not None else 4), (3,))
        n = np.array([as_int(int(v), "cells", minimum=1) for v in n])
        grid = np.stack(np.meshgrid(*[np.arange(k) for k in n], indexing="ij"), -1).reshape(-1, 3)
        pts = ((grid[:, None, :] + basis[None, :, :]) * edges).reshape(-1, 3)
        box = n * edges
        return Arrangement(
            pts, np.full(len(pts), r), None, f"{kind} periodic {tuple(n)} cells, a {a:g}", box=box
        )

    L = as_positive(size, "size")
    half = {"sphere": L, "cube": L / 2, "slab": 2 * L}[sample]
    m = np.ceil(half / edges).astype(int) + 1
    grid = np.stack(np.meshgrid(*[np.arange(-k, k + 1) for k in m], indexing="ij"), -1).reshape(-1, 3)
    pts = ((grid[:, None, :] + basis[None, :, :]) * edges).reshape(-1, 3)
    tol = 1e-9 * L
    if sample == "sphere":
        keep = np.linalg.norm(pts, axis=1) <= L + tol
    elif sample == "cube":
        keep = np.all(np.abs(pts) <= L / 2 + tol, axis=1)
    else:
        keep = (np.abs(pts[:, 2]) <= L / 2 + tol) & np.all(np.abs(pts[:, :2]) <= 2 * L + tol, axis=1)
    pts = pts[keep]
    if len(pts) == 0:
        raise InputError(f"size: {L:g} is too small to hold a lattice site", "size")
    R = (3.0 * len(pts) * cell_volume / (4.0 * math.pi)) ** (1.0 / 3.0) if sample == "sphere" else None
    edges_out = {"sphere": None, "cube": np.full(3, L), "slab": np.array([4 * L, 4 * L, L])}[sample]
    return Arrangement(
        pts,
        np.full(len(pts), r),
        R,
        f"{kind} {sample} cut, size {L:g}, a {a:g}",
        region=sample,
        edges=edges_out,
    )


def chain_array(n_x, n_y, n_per_chain, *, radius=1.0, gap=0.0, chain_spacing, axis=(0.0, 0.0, 1.0)):
    """A square array of straight chains along ``axis``.

    Parameters
    ----------
    n_x, n_y : int
        Chains across the two transverse directions.
    n_per_chain : int
        Bodies per chain.
    radius, gap : float
        Body radius and surface-to-surface gap along a chain.
    chain_spacing : float
        Centre-to-centre distance between neighbouring chains (``>= 2 radius``).
    axis : (3,) array_like
        Chain direction.
    """
    from ..shapes import rotation_to_axis

    nx = as_int(n_x, "n_x", minimum=1)
    ny = as_int(n_y, "n_y", minimum=1)
    nc = as_int(n_per_chain, "n_per_chain", minimum=1)
    r = as_positive(radius, "radius")
    g = as_positive(gap, "gap", allow_zero=True)
    s = as_positive(chain_spacing, "chain_spacing")
    if s < 2 * r * (1 - 1e-12):
        raise InputError(f"chain_spacing: {s} is less than a diameter {2 * r}", "chain_spacing")
    R = rotation_to_axis(as_float_array(axis, "axis", (3,)))
    ix, iy, iz = np.meshgrid(np.arange(nx), np.arange(ny), np.arange(nc), indexing="ij")
    local = np.stack(
        [(ix - (nx - 1) / 2) * s, (iy - (ny - 1) / 2) * s, (iz - (nc - 1) / 2) * (2 * r + g)], -1
    ).reshape(-1, 3)
    return Arrangement(local @ R.T, np.full(len(local), r), None, f"{nx}x{ny} chains of {nc}, gap {g:g}")
