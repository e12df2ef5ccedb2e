"""Near-pair multipole coupling by rotate - translate along z - rotate back.

Plain-array kernels for :class:`dipolearray.operators.MultipoleOperator`. Coefficient
layout, rotations and the axial translation are defined in ``operators/_harmonics.py``;
each ordered pair costs O(L^3) per right-hand side instead of O(L^4) for a general
translation.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

from ._jit import JIT, JIT_PARALLEL


@njit(inline="always", **JIT)
def _pos(l, m):  # pragma: no cover - compiled
    """Position of (l, m) in the flat body vector (l = 1 in Cartesian order x, y, z)."""
    if l == 1:
        if m == 1:
            return 0
        if m == -1:
            return 1
        return 2
    return l * l - 1 + l + m


@njit(**JIT)
def _zrot(u, order, gamma):  # pragma: no cover - compiled
    """In place: the z-rotation ``Z(gamma)`` on degrees 1..order of ``u`` (M, K)."""
    k = u.shape[1]
    for l in range(1, order + 1):
        for m in range(1, l + 1):
            c = math.cos(m * gamma)
            s = math.sin(m * gamma)
            ip = _pos(l, m)
            im = _pos(l, -m)
            for r in range(k):
                a = u[ip, r]
                b = u[im, r]
                u[ip, r] = c * a + s * b
                u[im, r] = -s * a + c * b


@njit(**JIT)
def _xrot(u, order, X, transpose, tmp):  # pragma: no cover - compiled
    """In place: the quarter turn ``X_l`` (or its transpose) on degrees 1..order."""
    k = u.shape[1]
    for l in range(1, order + 1):
        a0 = l * l - 1
        w = 2 * l + 1
        Xl = X[l - 1]
        for p in range(w):
            for r in range(k):
                tmp[p, r] = 0.0
        for p in range(w):
            for q in range(w):
                x = Xl[q, p] if transpose else Xl[p, q]
                if x != 0.0:
                    for r in range(k):
                        tmp[p, r] += x * u[a0 + q, r]
        for p in range(w):
            for r in range(k):
                u[a0 + p, r] = tmp[p, r]


@njit(**JIT_PARALLEL)
def near_field(pos, orders, offsets, neighbours, pair_orders, X, A, x, out):  # pragma: no cover
    """Subtract from ``out`` the multipole potential coefficients of the near pairs.

    ``out[i] -= D(A) T_z D(A)^T x[j]`` summed over the neighbours j of i, where ``D(A)``
    rotates the pair axis onto z and ``T_z`` is the axial translation (irregular at j to
    regular at i) with the dipole-dipole term left out (the caller adds it for every pair).
    Source degrees stop at ``min(orders[j], pair_order)``, target degrees at
    ``min(orders[i], pair_order)``.
    """
    n = pos.shape[0]
    mtot = x.shape[1]
    k = x.shape[2]
    lmax = X.shape[0]
    for i in prange(n):
        u = np.empty((mtot, k))
        v = np.empty((mtot, k))
        tmp = np.empty((2 * lmax + 1, k))
        inv_pow = np.empty(2 * lmax + 2)
        for e in range(offsets[i], offsets[i + 1]):
            j = neighbours[e]
            lp = pair_orders[e]
            ls = min(orders[j], lp)
            lt = min(orders[i], lp)
            if ls < 1 or lt < 1:
                continue
            dx = pos[i, 0] - pos[j, 0]
            dy = pos[i, 1] - pos[j, 1]
            dz = pos[i, 2] - pos[j, 2]
            d = math.sqrt(dx * dx + dy * dy + dz * dz)
            theta = math.acos(min(1.0, max(-1.0, dz / d)))
            phi = math.atan2(dy, dx)
            ns = ls * (ls + 2)
            nt = lt * (lt + 2)
            for a in range(ns):
                for r in range(k):
                    u[a, r] = x[j, a, r]
            # Into the frame where the pair axis is +z: X^T Z(-theta) X Z(phi).
            _zrot(u, ls, phi)
            _xrot(u, ls, X, False, tmp)
            _zrot(u, ls, -theta)
            _xrot(u, ls, X, True, tmp)
            inv_d = 1.0 / d
            inv_pow[0] = 1.0
            for p in range(1, ls + lt + 2):
                inv_pow[p] = inv_pow[p - 1] * inv_d
            for a in range(nt):
                for r in range(k):
                    v[a, r] = 0.0
            for jj in range(1, lt + 1):
                for m in range(-jj, jj + 1):
                    am = abs(m)
                    t = _pos(jj, m)
                    for l in range(max(1, am), ls + 1):
                        if jj == 1 and l == 1:
                            continue
                        c = A[jj, l, am] * inv_pow[l + jj + 1]
                        s = _pos(l, m)
                        for r in range(k):
                            v[t, r] += c * u[s, r]
            # Back to the lab frame: Z(-phi) X^T Z(theta) X.
            _xrot(v, lt, X, False, tmp)
            _zrot(v, lt, theta)
            _xrot(v, lt, X, True, tmp)
            _zrot(v, lt, -phi)
            for a in range(nt):
                for r in range(k):
                    out[i, a, r] -= v[a, r]
