"""Ewald summation of the point-dipole field in an orthorhombic periodic box (tin-foil boundary).

Real space: ``E(r) = -p B(r) + (p . r) C(r) r`` with
``B = [erfc(a r) + 2 a r/sqrt(pi) exp(-a^2 r^2)] / r^3`` and
``C = [3 erfc(a r) + 2 a r/sqrt(pi) (3 + 2 a^2 r^2) exp(-a^2 r^2)] / r^5``, minimum image,
``r < r_c <= L/2``. Reciprocal space: ``E_i = -sum_k w_k k Re[exp(i k.r_i) A(k)]`` over half
of k-space with ``w_k = 2 (4 pi/V) exp(-k^2/4a^2)/k^2`` and
``A(k) = sum_j (k . p_j) exp(-i k.r_j)``. Self term ``+4 a^3/(3 sqrt(pi)) p_i``.
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ._jit import JIT, JIT_PARALLEL

_TWO_OVER_SQRT_PI = 2.0 / math.sqrt(math.pi)


@numba.njit(**JIT)
def _axis_cells(c, n, out):
    if n < 3:
        for k in range(n):
            out[k] = k
        return n
    out[0] = c - 1 if c > 0 else n - 1
    out[1] = c
    out[2] = c + 1 if c < n - 1 else 0
    return 3


def screening_table(alpha, r_min, r_max, n):
    """Screening functions and their r-derivatives on a uniform r grid (cubic Hermite table).

    ``g1 = erfc(x) + 2x/sqrt(pi) e^-x^2`` and ``g2 = 3 erfc(x) + 2x/sqrt(pi) (3 + 2x^2) e^-x^2``
    with ``x = alpha r``; ``g1' = -4 alpha x^2/sqrt(pi) e^-x^2``, ``g2' = -8 alpha x^4/sqrt(pi) e^-x^2``.
    """
    from scipy.special import erfc

    r = np.linspace(r_min, r_max, n)
    x = alpha * r
    e = np.exp(-x * x)
    c = 2.0 / math.sqrt(math.pi)
    table = np.empty((n, 4))
    table[:, 0] = erfc(x) + c * x * e
    table[:, 1] = -2.0 * c * alpha * x * x * e
    table[:, 2] = 3.0 * erfc(x) + c * x * (3.0 + 2.0 * x * x) * e
    table[:, 3] = -4.0 * c * alpha * x**4 * e
    return np.ascontiguousarray(table)


@numba.njit(**JIT)
def _hermite(table, col, k, t, h):
    f0 = table[k, col]
    f1 = table[k + 1, col]
    d0 = table[k, col + 1] * h
    d1 = table[k + 1, col + 1] * h
    t2 = t * t
    t3 = t2 * t
    return (2 * t3 - 3 * t2 + 1) * f0 + (t3 - 2 * t2 + t) * d0 + (-2 * t3 + 3 * t2) * f1 + (t3 - t2) * d1


@numba.njit(**JIT_PARALLEL)
def ewald_real(pos, p, box, alpha, rc, cell_of, start, items, ncell, out, table, r_min, h):
    """Real-space part at every body from every other body within ``rc`` (minimum image).

    The screening functions come from ``table`` (cubic Hermite on a uniform grid from
    ``r_min`` in steps ``h``) for pairs at ``r >= r_min`` and exactly below.
    """
    n = pos.shape[0]
    kk = p.shape[2]
    rc2 = rc * rc
    a2 = alpha * alpha
    for si in numba.prange(n):
        i = items[si]  # cell by cell: consecutive bodies share their neighbours (cache reuse)
        ax = np.empty(3, np.int64)
        ay = np.empty(3, np.int64)
        az = np.empty(3, np.int64)
        acc = np.zeros((3, kk))
        nx = _axis_cells(cell_of[i, 0], ncell[0], ax)
        ny = _axis_cells(cell_of[i, 1], ncell[1], ay)
        nz = _axis_cells(cell_of[i, 2], ncell[2], az)
        for u in range(nx):
            for v in range(ny):
                for w in range(nz):
                    c = (ax[u] * ncell[1] + ay[v]) * ncell[2] + az[w]
                    for s in range(start[c], start[c + 1]):
                        j = items[s]
                        if j == i:
                            continue
                        dx = pos[i, 0] - pos[j, 0]
                        dy = pos[i, 1] - pos[j, 1]
                        dz = pos[i, 2] - pos[j, 2]
                        dx -= box[0] * math.floor(dx / box[0] + 0.5)
                        dy -= box[1] * math.floor(dy / box[1] + 0.5)
                        dz -= box[2] * math.floor(dz / box[2] + 0.5)
                        r2 = dx * dx + dy * dy + dz * dz
                        if r2 >= rc2:
                            continue
                        r = math.sqrt(r2)
                        pos_t = (r - r_min) / h
                        if pos_t >= 0.0:
                            node = int(pos_t)
                            frac = pos_t - node
                            g1 = _hermite(table, 0, node, frac, h)
                            g2 = _hermite(table, 2, node, frac, h)
                        else:
                            ar = alpha * r
                            g = _TWO_OVER_SQRT_PI * ar * math.exp(-a2 * r2)
                            e = math.erfc(ar)
                            g1 = e + g
                            g2 = 3.0 * e + g * (3.0 + 2.0 * a2 * r2)
                        B = g1 / (r2 * r)
                        C = g2 / (r2 * r2 * r)
                        for q in range(kk):
                            pr = p[j, 0, q] * dx + p[j, 1, q] * dy + p[j, 2, q] * dz
                            acc[0, q] += pr * C * dx - p[j, 0, q] * B
                            acc[1, q] += pr * C * dy - p[j, 1, q] * B
                            acc[2, q] += pr * C * dz - p[j, 2, q] * B
        for c3 in range(3):
            for q in range(kk):
                out[i, c3, q] = acc[c3, q]


@numba.njit(**JIT_PARALLEL)
def ewald_reciprocal(ex, ey, ez, ext, eyt, ezt, hkl, kvec, weight, p, out):
    """Reciprocal-space part: ``ex[i, h + H] = exp(i 2 pi h x_i / L_x)`` (and y, z); ``ext`` = ``ex.T``.

    The structure factors run over bodies with the transposed (contiguous in i) phases,
    the fields over k-vectors with the row-major ones.
    """
    n = p.shape[0]
    kk = p.shape[2]
    m = hkl.shape[0]
    A = np.zeros((m, kk), dtype=np.complex128)
    for t in numba.prange(m):
        h = hkl[t, 0]
        k = hkl[t, 1]
        l = hkl[t, 2]  # noqa: E741
        kx = kvec[t, 0]
        ky = kvec[t, 1]
        kz = kvec[t, 2]
        rx = ext[h]
        ry = eyt[k]
        rz = ezt[l]
        for i in range(n):
            cph = (rx[i] * ry[i] * rz[i]).conjugate()
            for q in range(kk):
                A[t, q] += (kx * p[i, 0, q] + ky * p[i, 1, q] + kz * p[i, 2, q]) * cph
    for i in numba.prange(n):
        for t in range(m):
            ph = ex[i, hkl[t, 0]] * ey[i, hkl[t, 1]] * ez[i, hkl[t, 2]]
            for q in range(kk):
                s = weight[t] * (ph * A[t, q]).real
                out[i, 0, q] -= s * kvec[t, 0]
                out[i, 1, q] -= s * kvec[t, 1]
                out[i, 2, q] -= s * kvec[t, 2]


@numba.njit(**JIT_PARALLEL)
def ewald_real_at(x, cell_x, pos, p, box, alpha, rc, start, items, ncell, out):
    """Real-space field at target points ``x`` (cell indices ``cell_x``) of all bodies (minimum image).

    Like :func:`ewald_real` with targets apart from the sources; coincident pairs are skipped.
    """
    m = x.shape[0]
    kk = p.shape[2]
    rc2 = rc * rc
    a2 = alpha * alpha
    for i in numba.prange(m):
        ax = np.empty(3, np.int64)
        ay = np.empty(3, np.int64)
        az = np.empty(3, np.int64)
        acc = np.zeros((3, kk))
        nx = _axis_cells(cell_x[i, 0], ncell[0], ax)
        ny = _axis_cells(cell_x[i, 1], ncell[1], ay)
        nz = _axis_cells(cell_x[i, 2], ncell[2], az)
        for u in range(nx):
            for v in range(ny):
                for w in range(nz):
                    c = (ax[u] * ncell[1] + ay[v]) * ncell[2] + az[w]
                    for s in range(start[c], start[c + 1]):
                        j = items[s]
                        dx = x[i, 0] - pos[j, 0]
                        dy = x[i, 1] - pos[j, 1]
                        dz = x[i, 2] - pos[j, 2]
                        dx -= box[0] * math.floor(dx / box[0] + 0.5)
                        dy -= box[1] * math.floor(dy / box[1] + 0.5)
                        dz -= box[2] * math.floor(dz / box[2] + 0.5)
                        r2 = dx * dx + dy * dy + dz * dz
                        if r2 >= rc2 or r2 == 0.0:
                            continue
                        r = math.sqrt(r2)
                        ar = alpha * r
                        g = _TWO_OVER_SQRT_PI * ar * math.exp(-a2 * r2)
                        e = math.erfc(ar)
                        B = (e + g) / (r2 * r)
                        C = (3.0 * e + g * (3.0 + 2.0 * a2 * r2)) / (r2 * r2 * r)
                        for q in range(kk):
                            pr = p[j, 0, q] * dx + p[j, 1, q] * dy + p[j, 2, q] * dz
                            acc[0, q] += pr * C * dx - p[j, 0, q] * B
                            acc[1, q] += pr * C * dy - p[j, 1, q] * B
                            acc[2, q] += pr * C * dz - p[j, 2, q] * B
        for c3 in range(3):
            for q in range(kk):
                out[i, c3, q] = acc[c3, q]


@numba.njit(**JIT_PARALLEL)
def structure_factors(ext, eyt, ezt, hkl, kvec, p):
    """``A(k) = sum_j (k . p_j) exp(-i k . r_j)`` for every k-vector, ``(n_k, K)``."""
    n = p.shape[0]
    kk = p.shape[2]
    m = hkl.shape[0]
    A = np.zeros((m, kk), dtype=np.complex128)
    for t in numba.prange(m):
        rx = ext[hkl[t, 0]]
        ry = eyt[hkl[t, 1]]
        rz = ezt[hkl[t, 2]]
        for i in range(n):
            cph = (rx[i] * ry[i] * rz[i]).conjugate()
            for q in range(kk):
                A[t, q] += (kvec[t, 0] * p[i, 0, q] + kvec[t, 1] * p[i, 1, q] + kvec[t, 2] * p[i, 2, q]) * cph
    return A


@numba.njit(**JIT_PARALLEL)
def ewald_reciprocal_at(ex, ey, ez, hkl, kvec, weight, A, out):
    """Reciprocal field at targets (phases ``ex[i, h + H]``) from structure factors ``A``, into ``out``."""
    m = ex.shape[0]
    kk = A.shape[1]
    for i in numba.prange(m):
        for t in range(hkl.shape[0]):
            ph = ex[i, hkl[t, 0]] * ey[i, hkl[t, 1]] * ez[i, hkl[t, 2]]
            for q in range(kk):
                s = weight[t] * (ph * A[t, q]).real
                out[i, 0, q] -= s * kvec[t, 0]
                out[i, 1, q] -= s * kvec[t, 1]
                out[i, 2, q] -= s * kvec[t, 2]
