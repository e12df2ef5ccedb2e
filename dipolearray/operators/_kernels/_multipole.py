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
    """In place: the z-rotation ``Z(gamma)`` on degrees 1..order of ``u`` (K, M)."""
    k = u.shape[0]
    for m in range(1, order + 1):
        c = math.cos(m * gamma)
        s = math.sin(m * gamma)
        for l in range(m, order + 1):
            ip = _pos(l, m)
            im = _pos(l, -m)
            for r in range(k):
                a = u[r, ip]
                b = u[r, im]
                u[r, ip] = c * a + s * b
                u[r, im] = -s * a + c * b


@njit(**JIT)
def _xrot(u, order, XT, tmp):  # pragma: no cover - compiled
    """In place: ``u_l <- X_l u_l`` on degrees 1..order, given ``XT[l-1] = X_l^T`` (axpy form)."""
    k = u.shape[0]
    for l in range(1, order + 1):
        a0 = l * l - 1
        w = 2 * l + 1
        Xt = XT[l - 1]
        for r in range(k):
            for p in range(w):
                tmp[p] = 0.0
            for q in range(w):
                c = u[r, a0 + q]
                for p in range(w):
                    tmp[p] += Xt[q, p] * c
            for p in range(w):
                u[r, a0 + p] = tmp[p]


@njit(**JIT_PARALLEL)
def near_field(pos, orders, offsets, neighbours, pair_orders, X, XT, A, x, out):  # pragma: no cover
    """Subtract from ``out`` the multipole potential coefficients of the near pairs.

    ``out[i] -= D(A) T_z D(A)^T x[j]`` summed over the neighbours j of i, where ``D(A)``
    rotates the pair axis onto z and ``T_z`` is the axial translation (irregular at j to
    regular at i); ``A[m, j, l]`` is the signed axial table with the dipole-dipole entries
    ``A[m, 1, 1]`` zeroed (the caller adds that term for every pair).
    Source degrees stop at ``min(orders[j], pair_order)``, target degrees at
    ``min(orders[i], pair_order)``. ``XT`` holds the transposes of ``X``.
    """
    n = pos.shape[0]
    mtot = x.shape[1]
    k = x.shape[2]
    lmax = X.shape[0]
    for i in prange(n):
        u = np.empty((k, mtot))
        v = np.empty((k, mtot))
        acc = np.zeros((k, mtot))
        tmp = np.empty(2 * lmax + 1)
        inv_pow = np.empty(2 * lmax + 2)
        ul = np.empty(lmax + 2)
        nt_max = 0
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
            nt_max = max(nt_max, nt)
            for r in range(k):
                for a in range(ns):
                    u[r, a] = x[j, a, r]
            # Into the frame where the pair axis is +z: X^T Z(-theta) X Z(phi).
            _zrot(u, ls, phi)
            _xrot(u, ls, XT, tmp)
            _zrot(u, ls, -theta)
            _xrot(u, ls, X, tmp)
            inv_d = 1.0 / d
            inv_pow[0] = 1.0
            for p in range(1, max(ls, lt) + 2):
                inv_pow[p] = inv_pow[p - 1] * inv_d
            for r in range(k):
                for a in range(nt):
                    v[r, a] = 0.0
            # Axial translation, m by m: v_j = d^-(j+1) sum_l A[m, j, l] d^-l u_l.
            for m in range(-min(ls, lt), min(ls, lt) + 1):
                am = abs(m)
                l0 = max(1, am)
                Am = A[am]
                for r in range(k):
                    for l in range(l0, ls + 1):
                        ul[l] = u[r, _pos(l, m)] * inv_pow[l]
                    for jj in range(l0, lt + 1):
                        accv = 0.0
                        for l in range(l0, ls + 1):
                            accv += Am[jj, l] * ul[l]
                        v[r, _pos(jj, m)] = accv * inv_pow[jj + 1]
            # Back to the lab frame: Z(-phi) X^T Z(theta) X.
            _xrot(v, lt, XT, tmp)
            _zrot(v, lt, theta)
            _xrot(v, lt, X, tmp)
            _zrot(v, lt, -phi)
            for r in range(k):
                for a in range(nt):
                    acc[r, a] += v[r, a]
        for a in range(nt_max):
            for r in range(k):
                out[i, a, r] -= acc[r, a]
