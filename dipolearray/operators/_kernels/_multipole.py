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
def _zrot_tab(u, order, cm, sm, sign):  # pragma: no cover - compiled
    """In place: ``Z(sign * gamma)`` on degrees 1..order of ``u`` (K, M).

    From the tables ``cm[m] = cos(m gamma)``, ``sm[m] = sin(m gamma)`` (no trigonometric calls).
    """
    k = u.shape[0]
    for m in range(1, order + 1):
        c = cm[m]
        s = sign * sm[m]
        for l in range(m, order + 1):
            ip = _pos(l, m)
            im = _pos(l, -m)
            for r in range(k):
                a = u[r, ip]
                b = u[r, im]
                u[r, ip] = c * a + s * b
                u[r, im] = -s * a + c * b


@njit(inline="always", **JIT)
def _angle_table(c1, s1, order, cm, sm):  # pragma: no cover - compiled
    """``cm[m] = cos(m g)``, ``sm[m] = sin(m g)`` for m <= order from ``cos g``, ``sin g``."""
    cm[0] = 1.0
    sm[0] = 0.0
    for m in range(1, order + 1):
        cm[m] = cm[m - 1] * c1 - sm[m - 1] * s1
        sm[m] = sm[m - 1] * c1 + cm[m - 1] * s1


@njit(**JIT)
def _xrot(u, order, start, rptr, rows, cols, vptr, vals, g, tmp):  # pragma: no cover - compiled
    """In place: the quarter turns on degrees 1..order of ``u`` (K, M), as dense blocks."""
    k = u.shape[0]
    for l in range(1, order + 1):
        a0 = l * l - 1
        for r in range(k):
            for b in range(start[l], start[l + 1]):
                r0 = rptr[b]
                nb = rptr[b + 1] - r0
                v0 = vptr[b]
                for c in range(nb):
                    g[c] = u[r, a0 + cols[r0 + c]]
                for p in range(nb):
                    acc = 0.0
                    base = v0 + p * nb
                    for c in range(nb):
                        acc += vals[base + c] * g[c]
                    tmp[rows[r0 + p]] = acc
            for p in range(2 * l + 1):
                u[r, a0 + p] = tmp[p]


@njit(**JIT_PARALLEL)
def near_field(pos, orders, offsets, neighbours, pair_orders, XB, XTB, A, x, out):  # pragma: no cover
    """Subtract from ``out`` the multipole potential coefficients of the near pairs.

    ``out[i] -= D(A) T_z D(A)^T x[j]`` summed over the neighbours j of i, where ``D(A)``
    rotates the pair axis onto z and ``T_z`` is the axial translation (irregular at j to
    regular at i); ``A[m, j, l]`` is the signed axial table with the dipole-dipole entries
    ``A[m, 1, 1]`` zeroed (the caller adds that term for every pair).
    Source degrees stop at ``min(orders[j], pair_order)``, target degrees at
    ``min(orders[i], pair_order)``. ``XB`` and ``XTB`` are the block tables of the quarter
    turns and of their transposes (``quarter_turn_blocks``).
    """
    n = pos.shape[0]
    mtot = x.shape[1]
    k = x.shape[2]
    lmax = XB[0].shape[0] - 2
    s0, s1, s2, s3, s4, s5 = XB
    t0, t1, t2, t3, t4, t5 = XTB
    for i in prange(n):
        u = np.empty((k, mtot))
        v = np.empty((k, mtot))
        acc = np.zeros((k, mtot))
        tmp = np.empty(2 * lmax + 1)
        g = np.empty(2 * lmax + 1)
        inv_pow = np.empty(2 * lmax + 2)
        ul = np.empty(lmax + 2)
        cp = np.empty(lmax + 1)
        sp = np.empty(lmax + 1)
        cth = np.empty(lmax + 1)
        sth = np.empty(lmax + 1)
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
            rho = math.sqrt(dx * dx + dy * dy)
            # cos and sin of the polar angle theta and the azimuth phi, and of their multiples.
            lm = max(ls, lt)
            if rho > 0.0:
                _angle_table(dx / rho, dy / rho, lm, cp, sp)
            else:
                _angle_table(1.0, 0.0, lm, cp, sp)
            _angle_table(dz / d, rho / d, lm, cth, sth)
            ns = ls * (ls + 2)
            nt = lt * (lt + 2)
            nt_max = max(nt_max, nt)
            for r in range(k):
                for a in range(ns):
                    u[r, a] = x[j, a, r]
            # Into the frame where the pair axis is +z: X^T Z(-theta) X Z(phi).
            _zrot_tab(u, ls, cp, sp, 1.0)
            _xrot(u, ls, s0, s1, s2, s3, s4, s5, g, tmp)
            _zrot_tab(u, ls, cth, sth, -1.0)
            _xrot(u, ls, t0, t1, t2, t3, t4, t5, g, tmp)
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
            _xrot(v, lt, s0, s1, s2, s3, s4, s5, g, tmp)
            _zrot_tab(v, lt, cth, sth, 1.0)
            _xrot(v, lt, t0, t1, t2, t3, t4, t5, g, tmp)
            _zrot_tab(v, lt, cp, sp, -1.0)
            for r in range(k):
                for a in range(nt):
                    acc[r, a] += v[r, a]
        for a in range(nt_max):
            for r in range(k):
                out[i, a, r] -= acc[r, a]


@njit(**JIT)
def _irregular(dx, dy, dz, order, out, inv_pow):  # pragma: no cover - compiled
    """Irregular solid harmonics ``I_lm`` at one point, degrees 1..order, flat layout.

    Same recurrences as ``solid_harmonics`` (Schmidt semi-normalised Legendre functions
    without the Condon-Shortley phase); ``cos(m phi)``, ``sin(m phi)`` by rotation.
    """
    r = math.sqrt(dx * dx + dy * dy + dz * dz)
    rho = math.sqrt(dx * dx + dy * dy)
    ct = dz / r
    st = rho / r
    if rho > 0.0:
        c1 = dx / rho
        s1 = dy / rho
    else:
        c1 = 1.0
        s1 = 0.0
    inv_r = 1.0 / r
    inv_pow[0] = 1.0
    for p in range(1, order + 2):
        inv_pow[p] = inv_pow[p - 1] * inv_r
    r2s = math.sqrt(2.0)
    pmm = 1.0
    cm = 1.0
    sm = 0.0
    for m in range(0, order + 1):
        if m > 0:
            pmm = pmm * st * math.sqrt((2 * m - 1) / (2.0 * m))
            cm, sm = cm * c1 - sm * s1, sm * c1 + cm * s1
        p_prev = 0.0
        p_cur = pmm
        for l in range(max(m, 1), order + 1):  # noqa: E741
            if l == m:
                p_cur = pmm
            elif l == m + 1:
                p_prev, p_cur = p_cur, math.sqrt(2 * m + 1.0) * ct * p_cur
            else:
                p_prev, p_cur = (
                    p_cur,
                    ((2 * l - 1) * ct * p_cur - math.sqrt((l - 1.0) ** 2 - m * m) * p_prev)
                    / math.sqrt(l * l - m * m * 1.0),
                )
            rad = inv_pow[l + 1]
            if m == 0:
                out[_pos(l, 0)] = p_cur * rad
            else:
                out[_pos(l, m)] = p_cur * cm * r2s * rad
                out[_pos(l, -m)] = p_cur * sm * r2s * rad


@njit(**JIT_PARALLEL)
def low_order_field(
    pos, offsets, neighbours, lt_arr, ls_arr, indptr, indices, data, mc, x, out
):  # pragma: no cover
    """Subtract from ``out`` the low-order pair couplings ``T(r) x[j]`` built from harmonics.

    ``T_ts(r) = sum_p C[ts, p] I_p(r)`` with the sparse translation tensor ``C`` in CSR
    form (rows ``t * mc + s``, ``mc = n_unknowns`` of the tensor's order); target degrees
    stop at ``lt_arr[e]``, source degrees at ``ls_arr[e]``. The dipole-dipole block has no
    entries in ``C`` (the dipole backend adds it). Cheaper than rotating for low orders.
    """
    n = pos.shape[0]
    k = x.shape[2]
    nh = indices.max() + 1 if indices.size else 1
    for i in prange(n):
        harm = np.zeros(nh)
        inv_pow = np.empty(64)
        acc = np.zeros((out.shape[1], k))
        nt_max = 0
        for e in range(offsets[i], offsets[i + 1]):
            j = neighbours[e]
            lt = lt_arr[e]
            ls = ls_arr[e]
            nt = lt * (lt + 2)
            ns = ls * (ls + 2)
            nt_max = max(nt_max, nt)
            _irregular(
                pos[i, 0] - pos[j, 0], pos[i, 1] - pos[j, 1], pos[i, 2] - pos[j, 2], lt + ls, harm, inv_pow
            )
            for t in range(nt):
                base = t * mc
                for s in range(ns):
                    row = base + s
                    tv = 0.0
                    for q in range(indptr[row], indptr[row + 1]):
                        tv += data[q] * harm[indices[q]]
                    if tv != 0.0:
                        for r in range(k):
                            acc[t, r] += tv * x[j, s, r]
        for a in range(nt_max):
            for r in range(k):
                out[i, a, r] -= acc[a, r]
