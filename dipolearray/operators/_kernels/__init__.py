"""Compiled kernels (the only place numba is imported) and their array-level drivers.

Drivers take ``(N, 3)`` coordinates and ``(N, 3, K)`` real moments, lay them out as
the kernels want and return ``(M, 3, K)`` results.
"""

from __future__ import annotations

import numpy as np

from ._dipole import assemble_dense, field_1, field_3, pair_forces
from ._ewald import (
    ewald_real,
    ewald_real_at,
    ewald_reciprocal,
    ewald_reciprocal_at,
    screening_table,
    structure_factors,
)
from ._jit import get_num_threads, set_num_threads
from ._mesh import mesh_gather, mesh_spread, mesh_starts, open_real
from ._multipole import low_order_field as multipole_low_order_field
from ._multipole import near_field as multipole_near_field
from ._pme import pme_gather, pme_spread, pme_weights

__all__ = [
    "dipole_field",
    "dense_coupling",
    "dipole_pair_forces",
    "ewald_field",
    "ewald_field_at",
    "multipole_near_field",
    "multipole_low_order_field",
    "pme_spread",
    "pme_gather",
    "pme_weights",
    "mesh_spread",
    "mesh_gather",
    "mesh_starts",
    "open_real",
    "screening_table",
    "set_num_threads",
    "get_num_threads",
]


def _soa(points):
    pts = np.ascontiguousarray(points, dtype=np.float64)
    return (
        np.ascontiguousarray(pts[:, 0]),
        np.ascontiguousarray(pts[:, 1]),
        np.ascontiguousarray(pts[:, 2]),
    )


def _rows(moments):
    """(N, 3, K) -> (3K, N) with row 3r + c."""
    n, _, k = moments.shape
    return np.ascontiguousarray(moments.transpose(2, 1, 0).reshape(3 * k, n))


def dipole_field(targets, sources, moments):
    """Field at ``targets`` of point dipoles at ``sources``, zero-separation pairs skipped.

    Parameters
    ----------
    targets : (M, 3) ndarray of float
    sources : (N, 3) ndarray of float
    moments : (N, 3, K) ndarray of float

    Returns
    -------
    (M, 3, K) ndarray of float
        ``sum_j T(t_i - s_j) p_j`` with ``T(r) = (3 r^ r^ - I)/r^3``.
    """
    m_pts = targets.shape[0]
    k = moments.shape[2]
    t = _soa(targets)
    s = _soa(sources)
    rows = _rows(moments)
    out = np.empty((3 * k, m_pts))
    r = 0
    while r < k:
        left = k - r
        if left >= 2:
            block = rows[3 * r : 3 * r + 9]
            width = block.shape[0] // 3
            if width < 3:
                block = np.concatenate([block, np.zeros((9 - block.shape[0], block.shape[1]))])
            res = np.empty((9, m_pts))
            field_3(*t, *s, np.ascontiguousarray(block), res)
            out[3 * r : 3 * r + 3 * width] = res[: 3 * width]
            r += width
        else:
            res = np.empty((3, m_pts))
            field_1(*t, *s, np.ascontiguousarray(rows[3 * r : 3 * r + 3]), res)
            out[3 * r : 3 * r + 3] = res
            r += 1
    return np.ascontiguousarray(out.reshape(k, 3, m_pts).transpose(2, 1, 0))


def dense_coupling(positions):
    """The ``(3N, 3N)`` matrix of ``T(r_i - r_j)`` blocks, zero on the diagonal blocks."""
    n = positions.shape[0]
    out = np.empty((3 * n, 3 * n))
    assemble_dense(*_soa(positions), out)
    return out


def dipole_pair_forces(positions, moments):
    """Sum of pairwise dipole-dipole forces ``(N, 3, K)`` for real moments ``(N, 3, K)``."""
    n, _, k = moments.shape
    out = np.empty((3 * k, n))
    pair_forces(*_soa(positions), _rows(moments), out)
    return np.ascontiguousarray(out.reshape(k, 3, n).transpose(2, 1, 0))


def ewald_field(op, moments):
    """Ewald field at every body of an ``EwaldOperator`` from ``(N, 3, K)`` moments."""
    p = np.ascontiguousarray(moments, dtype=np.float64)
    out = np.empty_like(p)
    ewald_real(
        op._pos, p, op.box, op.alpha, op.r_cut, op._cell_of, op._start, op._items, op._ncell, out,
        op._table, op._table_r0, op._table_h,
    )  # fmt: skip
    ex, ey, ez = op._phases
    ext, eyt, ezt = op._phases_t
    ewald_reciprocal(ex, ey, ez, ext, eyt, ezt, op._hkl, op._kvec, op._weight, p, out)
    out += op._self * p
    return out


def ewald_field_at(op, points, moments, chunk=4096):
    """Ewald field of an ``EwaldOperator``'s bodies at ``(M, 3)`` points (in the box) from real moments."""
    import math

    x = np.ascontiguousarray(points, dtype=np.float64)
    p = np.ascontiguousarray(moments, dtype=np.float64)
    L = op.box
    ncell = op._ncell
    out = np.empty((x.shape[0], 3, p.shape[2]))
    A = structure_factors(*op._phases_t, op._hkl, op._kvec, p)
    for a in range(0, x.shape[0], chunk):
        xb = x[a : a + chunk]
        cell = np.minimum((xb / (L / ncell)).astype(np.int64), ncell - 1)
        ob = np.empty((xb.shape[0], 3, p.shape[2]))
        ewald_real_at(xb, np.ascontiguousarray(cell), op._pos, p, L, op.alpha, op.r_cut, op._start, op._items,
                      ncell, ob)  # fmt: skip
        ph = [
            np.ascontiguousarray(np.exp(2j * math.pi * np.outer(xb[:, ax], np.arange(-h, h + 1)) / L[ax]))
            for ax, h in enumerate(op._H)
        ]
        ewald_reciprocal_at(*ph, op._hkl, op._kvec, op._weight, A, ob)
        out[a : a + chunk] = ob
    return out
