"""Free-space particle-mesh summation: spreading and gathering with separable Gaussians.

Body ``j`` at mesh coordinate ``u = (x - origin) / h`` (per axis) touches the ``P``
mesh points ``g = start + t``, ``t = 0 .. P-1``, ``start = floor(u) - P/2 + 1``, with
the weight ``w = G(x_j - g h)`` of the one-dimensional normalised Gaussian
``G(x) = exp(-x^2 / 2 sigma^2) / sqrt(2 pi sigma^2)`` and its derivative with respect
to the body's coordinate ``d = -(x_j - g h) / sigma^2 G``; the three-dimensional
weight is the product over axes. Weights are recomputed in every call (3 P
exponentials a body against P^3 mesh updates), so nothing of size N x P is stored.

Threads: gathering runs over bodies (no shared writes). Spreading sorts the bodies into
slabs of ``P`` planes along x by ``start_x // P``; a body of slab ``b`` writes planes
``b P .. b P + 2P - 2``, so slabs of one parity never touch the same plane and each
parity runs its slabs in parallel (as in ``_pme.py``).
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ._jit import JIT, JIT_PARALLEL


@numba.njit(inline="always", **JIT)
def _weights(u, n_points, h, norm, inv2s2, invs2, w, d):
    f = int(math.floor(u))
    s = f - n_points // 2 + 1
    for t in range(n_points):
        x = (u - (s + t)) * h
        g = norm * math.exp(-x * x * inv2s2)
        w[t] = g
        d[t] = -x * invs2 * g
    return s


@numba.njit(inline="always", **JIT)
def _constants(sigma):
    """Normalisation, ``1/(2 sigma^2)`` and ``1/sigma^2`` of the one-dimensional Gaussian."""
    return 1.0 / math.sqrt(2.0 * math.pi * sigma * sigma), 0.5 / (sigma * sigma), 1.0 / (sigma * sigma)


@numba.njit(**JIT_PARALLEL)
def mesh_starts(u, n_points):
    """First mesh index ``floor(u) - P/2 + 1`` of every body and axis, (N, 3) int64."""
    nb = u.shape[0]
    out = np.empty((nb, 3), dtype=np.int64)
    for j in numba.prange(nb):
        for ax in range(3):
            out[j, ax] = int(math.floor(u[j, ax])) - n_points // 2 + 1
    return out


@numba.njit(**JIT)
def _spread_one(j, u, p, n_points, h, norm, inv2s2, invs2, wx, dx, wy, dy, wz, dz, Q):
    ix = _weights(u[j, 0], n_points, h, norm, inv2s2, invs2, wx, dx)
    iy = _weights(u[j, 1], n_points, h, norm, inv2s2, invs2, wy, dy)
    iz = _weights(u[j, 2], n_points, h, norm, inv2s2, invs2, wz, dz)
    p0 = p[j, 0]
    p1 = p[j, 1]
    p2 = p[j, 2]
    n1 = Q.shape[1]
    n2 = Q.shape[2]
    flat = Q.reshape(-1)
    for a in range(n_points):
        wxa = wx[a]
        dxa = dx[a]
        for b in range(n_points):
            s = p0 * dxa * wy[b] + p1 * wxa * dy[b]
            c2 = p2 * wxa * wy[b]
            base = ((ix + a) * n1 + iy + b) * n2 + iz
            for c in range(n_points):
                flat[base + c] += s * wz[c] + c2 * dz[c]


@numba.njit(**JIT_PARALLEL)
def mesh_spread(u, p, n_points, h, sigma, order, slabs, Q):
    """``Q[g] += sum_j p_j . grad_j G(r_j - g h)`` for one right-hand side ``p`` (N, 3).

    ``order`` lists the bodies slab by slab along x, ``slabs[s] .. slabs[s+1]`` being
    slab ``s``.
    """
    norm, inv2s2, invs2 = _constants(sigma)
    ns = slabs.shape[0] - 1
    for parity in range(2):
        half = (ns - parity + 1) // 2
        for hs in numba.prange(half):
            t = np.empty((6, n_points))  # weights and derivatives along x, y, z
            s = 2 * hs + parity
            for k in range(slabs[s], slabs[s + 1]):
                _spread_one(
                    order[k], u, p, n_points, h, norm, inv2s2, invs2, t[0], t[1], t[2], t[3], t[4], t[5], Q
                )


@numba.njit(**JIT_PARALLEL)
def mesh_gather(u, n_points, h, sigma, order, Phi, out):
    """``out[i] -= sum_g grad_i G(r_i - g h) Phi[g]`` for one right-hand side (``out`` (N, 3))."""
    norm, inv2s2, invs2 = _constants(sigma)
    nb = u.shape[0]
    n1 = Phi.shape[1]
    n2 = Phi.shape[2]
    flat = Phi.reshape(-1)
    for k in numba.prange(nb):
        i = order[k]
        t = np.empty((8, n_points))  # weights and derivatives along x, y, z; two z vectors
        wx, dx, wy, dy, wz, dz, U, V = t[0], t[1], t[2], t[3], t[4], t[5], t[6], t[7]
        ix = _weights(u[i, 0], n_points, h, norm, inv2s2, invs2, wx, dx)
        iy = _weights(u[i, 1], n_points, h, norm, inv2s2, invs2, wy, dy)
        iz = _weights(u[i, 2], n_points, h, norm, inv2s2, invs2, wz, dz)
        ox = 0.0
        oy = 0.0
        oz = 0.0
        for a in range(n_points):
            # Contract y first into vectors along z: vector multiply-adds, no reductions
            # in the innermost loop.
            for c in range(n_points):
                U[c] = 0.0
                V[c] = 0.0
            for b in range(n_points):
                base = ((ix + a) * n1 + iy + b) * n2 + iz
                wyb = wy[b]
                dyb = dy[b]
                for c in range(n_points):
                    v = flat[base + c]
                    U[c] += wyb * v
                    V[c] += dyb * v
            su = 0.0
            sv = 0.0
            sd = 0.0
            for c in range(n_points):
                su += wz[c] * U[c]
                sv += wz[c] * V[c]
                sd += dz[c] * U[c]
            ox += dx[a] * su
            oy += wx[a] * sv
            oz += wx[a] * sd
        out[i, 0] -= ox
        out[i, 1] -= oy
        out[i, 2] -= oz


@numba.njit(**JIT_PARALLEL)
def open_real(x, y, z, p, rc, cell_of, start, ncell, stencil, table, r_min, h, out):
    """Short-range (``erfc``) part of the dipole field between bodies closer than ``rc``, no images.

    Bodies are given in cell order (structure of arrays ``x, y, z``; ``p`` (K, 3, N) in
    the same order), ``start[c] .. start[c+1]`` being cell ``c``; ``stencil`` (S, 3)
    lists the cell offsets that can hold a body within ``rc``. The screening functions
    come from the cubic Hermite ``table`` (see ``_ewald.py``); pairs closer than
    ``r_min`` do not occur in a validated scene (bodies do not overlap) and are
    evaluated from the table's first node outward all the same. ``out`` is (K, 3, N).
    """
    n = x.shape[0]
    kk = p.shape[0]
    rc2 = rc * rc
    n_nodes = table.shape[0]
    for i in numba.prange(n):
        acc = np.zeros((kk, 3))
        cx = cell_of[i, 0]
        cy = cell_of[i, 1]
        cz = cell_of[i, 2]
        xi = x[i]
        yi = y[i]
        zi = z[i]
        for t in range(stencil.shape[0]):
            ax = cx + stencil[t, 0]
            ay = cy + stencil[t, 1]
            az = cz + stencil[t, 2]
            if ax < 0 or ay < 0 or az < 0 or ax >= ncell[0] or ay >= ncell[1] or az >= ncell[2]:
                continue
            c = (ax * ncell[1] + ay) * ncell[2] + az
            for j in range(start[c], start[c + 1]):
                dx = xi - x[j]
                dy = yi - y[j]
                dz = zi - z[j]
                r2 = dx * dx + dy * dy + dz * dz
                if r2 >= rc2 or j == i:
                    continue
                r = math.sqrt(r2)
                pos_t = max((r - r_min) / h, 0.0)
                node = min(int(pos_t), n_nodes - 2)
                frac = pos_t - node
                f2 = frac * frac
                f3 = f2 * frac
                h00 = 2 * f3 - 3 * f2 + 1
                h10 = (f3 - 2 * f2 + frac) * h
                h01 = -2 * f3 + 3 * f2
                h11 = (f3 - f2) * h
                g1 = (
                    h00 * table[node, 0]
                    + h10 * table[node, 1]
                    + h01 * table[node + 1, 0]
                    + h11 * table[node + 1, 1]
                )
                g2 = (
                    h00 * table[node, 2]
                    + h10 * table[node, 3]
                    + h01 * table[node + 1, 2]
                    + h11 * table[node + 1, 3]
                )
                inv = 1.0 / r
                inv2 = inv * inv
                B = g1 * inv2 * inv
                C = g2 * inv2 * inv2 * inv
                for q in range(kk):
                    pr = p[q, 0, j] * dx + p[q, 1, j] * dy + p[q, 2, j] * dz
                    acc[q, 0] += pr * C * dx - p[q, 0, j] * B
                    acc[q, 1] += pr * C * dy - p[q, 1, j] * B
                    acc[q, 2] += pr * C * dz - p[q, 2, j] * B
        for q in range(kk):
            for c3 in range(3):
                out[q, c3, i] = acc[q, c3]
