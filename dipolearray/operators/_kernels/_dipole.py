"""Pair kernels of the point-dipole coupling.

All kernels take plain contiguous float64 arrays in structure-of-arrays layout:
coordinates as separate ``x, y, z`` vectors, moments as ``(3*K, N)`` with row
``3*r + c`` holding component ``c`` of right-hand side ``r``. They write into
``out`` and know nothing of units or objects. Pairs at zero separation contribute
nothing (that is how a body's own moment is excluded).

The inverse distance is computed as a float32 estimate refined by one third-order
(Halley-type) step ``y <- y (1 + e/2 + 3 e^2/8)``, ``e = 1 - r^2 y^2``: from the
float32 error of about 1e-7 it reaches full float64 accuracy and vectorises better
than a float64 square root and division.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

from ._jit import JIT, JIT_PARALLEL


@njit(inline="always", **JIT)
def _inv_r(r2):
    y = np.float64(np.float32(1.0) / np.sqrt(np.float32(r2)))
    e = 1.0 - r2 * y * y
    y = y + y * e * (0.5 + 0.375 * e)
    return y if r2 > 0.0 else 0.0


@njit(**JIT_PARALLEL)
def field_1(tx, ty, tz, sx, sy, sz, m, out):  # pragma: no cover - compiled
    """Dipole field at targets for one right-hand side: ``out[c, i] += sum_j T_ij m_j``."""
    ns = sx.shape[0]
    for i in prange(tx.shape[0]):
        xi = tx[i]
        yi = ty[i]
        zi = tz[i]
        ax = 0.0
        ay = 0.0
        az = 0.0
        for j in range(ns):
            dx = xi - sx[j]
            dy = yi - sy[j]
            dz = zi - sz[j]
            inv = _inv_r(dx * dx + dy * dy + dz * dz)
            inv2 = inv * inv
            inv3 = inv2 * inv
            px = m[0, j]
            py = m[1, j]
            pz = m[2, j]
            s = 3.0 * (dx * px + dy * py + dz * pz) * inv2
            ax += inv3 * (s * dx - px)
            ay += inv3 * (s * dy - py)
            az += inv3 * (s * dz - pz)
        out[0, i] = ax
        out[1, i] = ay
        out[2, i] = az


@njit(**JIT_PARALLEL)
def field_3(tx, ty, tz, sx, sy, sz, m, out):  # pragma: no cover - compiled
    """Dipole field at targets for three right-hand sides sharing the geometry."""
    ns = sx.shape[0]
    for i in prange(tx.shape[0]):
        xi = tx[i]
        yi = ty[i]
        zi = tz[i]
        a0 = 0.0
        a1 = 0.0
        a2 = 0.0
        a3 = 0.0
        a4 = 0.0
        a5 = 0.0
        a6 = 0.0
        a7 = 0.0
        a8 = 0.0
        for j in range(ns):
            dx = xi - sx[j]
            dy = yi - sy[j]
            dz = zi - sz[j]
            inv = _inv_r(dx * dx + dy * dy + dz * dz)
            inv2 = 3.0 * inv * inv
            inv3 = inv * inv * inv
            ux = dx * inv3
            uy = dy * inv3
            uz = dz * inv3
            s = (dx * m[0, j] + dy * m[1, j] + dz * m[2, j]) * inv2
            a0 += s * ux - inv3 * m[0, j]
            a1 += s * uy - inv3 * m[1, j]
            a2 += s * uz - inv3 * m[2, j]
            s = (dx * m[3, j] + dy * m[4, j] + dz * m[5, j]) * inv2
            a3 += s * ux - inv3 * m[3, j]
            a4 += s * uy - inv3 * m[4, j]
            a5 += s * uz - inv3 * m[5, j]
            s = (dx * m[6, j] + dy * m[7, j] + dz * m[8, j]) * inv2
            a6 += s * ux - inv3 * m[6, j]
            a7 += s * uy - inv3 * m[7, j]
            a8 += s * uz - inv3 * m[8, j]
        out[0, i] = a0
        out[1, i] = a1
        out[2, i] = a2
        out[3, i] = a3
        out[4, i] = a4
        out[5, i] = a5
        out[6, i] = a6
        out[7, i] = a7
        out[8, i] = a8


@njit(**JIT_PARALLEL)
def assemble_dense(x, y, z, out):  # pragma: no cover - compiled
    """Write the ``(3N, 3N)`` coupling matrix ``T`` (zero 3x3 blocks on the diagonal)."""
    n = x.shape[0]
    for i in prange(n):
        for j in range(n):
            dx = x[i] - x[j]
            dy = y[i] - y[j]
            dz = z[i] - z[j]
            r2 = dx * dx + dy * dy + dz * dz
            if r2 == 0.0:
                for a in range(3):
                    for b in range(3):
                        out[3 * i + a, 3 * j + b] = 0.0
                continue
            inv = 1.0 / np.sqrt(r2)
            inv3 = inv * inv * inv
            d = (dx * inv, dy * inv, dz * inv)
            for a in range(3):
                for b in range(3):
                    v = 3.0 * d[a] * d[b]
                    if a == b:
                        v -= 1.0
                    out[3 * i + a, 3 * j + b] = v * inv3


@njit(**JIT_PARALLEL)
def pair_forces(x, y, z, p, out):  # pragma: no cover - compiled
    """Forces between point dipoles, ``K`` right-hand sides.

    ``out[3r+c, i] = sum_j f_c(p_i, p_j, r_i - r_j)`` with
    ``f = 3/r^4 [ (p_i.u) p_j + (p_j.u) p_i + (p_i.p_j) u - 5 (p_i.u)(p_j.u) u ]``,
    ``u`` the unit vector from j to i.
    """
    n = x.shape[0]
    k = p.shape[0] // 3
    for i in prange(n):
        for r in range(k):
            fx = 0.0
            fy = 0.0
            fz = 0.0
            pix = p[3 * r, i]
            piy = p[3 * r + 1, i]
            piz = p[3 * r + 2, i]
            for j in range(n):
                dx = x[i] - x[j]
                dy = y[i] - y[j]
                dz = z[i] - z[j]
                r2 = dx * dx + dy * dy + dz * dz
                if r2 == 0.0:
                    continue
                inv = 1.0 / np.sqrt(r2)
                ux = dx * inv
                uy = dy * inv
                uz = dz * inv
                pjx = p[3 * r, j]
                pjy = p[3 * r + 1, j]
                pjz = p[3 * r + 2, j]
                a = pix * ux + piy * uy + piz * uz
                b = pjx * ux + pjy * uy + pjz * uz
                c = pix * pjx + piy * pjy + piz * pjz
                g = 3.0 * inv * inv * inv * inv
                h = c - 5.0 * a * b
                fx += g * (a * pjx + b * pix + h * ux)
                fy += g * (a * pjy + b * piy + h * uy)
                fz += g * (a * pjz + b * piz + h * uz)
            out[3 * r, i] = fx
            out[3 * r + 1, i] = fy
            out[3 * r + 2, i] = fz
