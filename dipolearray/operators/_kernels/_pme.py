"""Smooth particle-mesh Ewald for point dipoles: B-spline spreading and gathering on a periodic mesh.

Fractional coordinates ``u = K r / L`` per axis; body ``j`` touches the mesh points
``g = floor(u) - t`` for ``t = 0 .. n-1`` with weight ``M_n(u - g)`` (cardinal B-spline
of order ``n``) and derivative ``dM_n/du = M_{n-1}(x) - M_{n-1}(x - 1)``.

Layout
------
The weights depend on the geometry only, so :func:`pme_weights` computes them once per
operator, in reversed order: body ``j`` touches the *padded* mesh points
``floor(u) + t``, ``t = 0 .. n-1``, of a mesh with ``n - 1`` extra planes per axis
(padded index ``g + n - 1``). Spreading then writes ``n`` consecutive numbers along
the last axis and never wraps; the caller folds the padding back (``fold_padding``)
and, for gathering, fills it from the periodic mesh (``np.pad(mode="wrap")``).

Threads: gathering runs over bodies (no shared writes). Spreading sorts the bodies into
slabs of ``n`` planes along x; a body of slab ``b`` writes padded planes
``b n .. b n + 2n - 2``, so slabs of one parity never touch the same plane and each
parity runs its slabs in parallel.
"""

from __future__ import annotations

import numba
import numpy as np

from ._jit import JIT, JIT_PARALLEL


@numba.njit(**JIT)
def _bspline(x, n, out, dout):
    """``out[t] = M_n(x + t)``, ``dout[t] = M_n'(x + t)`` for ``t = 0 .. n-1``, ``0 <= x < 1``."""
    # Order-2 start, then the recursion M_k(y) = (y M_{k-1}(y) + (k - y) M_{k-1}(y - 1)) / (k - 1).
    m = np.zeros(n + 1)
    m[0] = x
    m[1] = 1.0 - x
    for k in range(3, n + 1):
        if k == n:
            for t in range(n):
                prev = m[t - 1] if t > 0 else 0.0
                dout[t] = m[t] - prev
        new = np.zeros(n + 1)
        for t in range(k):
            y = x + t
            a = m[t] if t < k - 1 else 0.0
            b = m[t - 1] if t > 0 else 0.0
            new[t] = (y * a + (k - y) * b) / (k - 1)
        m = new
    for t in range(n):
        out[t] = m[t]


@numba.njit(**JIT)
def pme_weights(u, n, scale):
    """Start index ``floor(u)`` (N, 3), weights and scaled derivatives (N, 3, n), reversed order."""
    nb = u.shape[0]
    start = np.empty((nb, 3), dtype=np.int64)
    w = np.empty((nb, 3, n))
    d = np.empty((nb, 3, n))
    tw = np.empty(n)
    td = np.empty(n)
    for j in range(nb):
        for ax in range(3):
            f = int(np.floor(u[j, ax]))
            start[j, ax] = f
            _bspline(u[j, ax] - f, n, tw, td)
            for t in range(n):
                w[j, ax, t] = tw[n - 1 - t]
                d[j, ax, t] = td[n - 1 - t] * scale[ax]
    return start, w, d


@numba.njit(**JIT)
def _spread_one(j, start, w, d, p, Q):
    n = w.shape[2]
    ix = start[j, 0]
    iy = start[j, 1]
    iz = start[j, 2]
    for q in range(p.shape[2]):
        p0 = p[j, 0, q]
        p1 = p[j, 1, q]
        p2 = p[j, 2, q]
        for a in range(n):
            wxa = w[j, 0, a]
            dxa = d[j, 0, a]
            for b in range(n):
                s = p0 * dxa * w[j, 1, b] + p1 * wxa * d[j, 1, b]
                c2 = p2 * wxa * w[j, 1, b]
                row = Q[q, ix + a, iy + b]
                for c in range(n):
                    row[iz + c] += s * w[j, 2, c] + c2 * d[j, 2, c]


@numba.njit(**JIT_PARALLEL)
def pme_spread(start, w, d, order, slabs, p, Q):
    """``Q[g] += sum_j p_j . grad W(r_j - g)`` on the padded mesh ``Q`` (R, K0+n-1, K1+n-1, K2+n-1).

    ``order`` lists the bodies slab by slab along x, ``slabs[s] .. slabs[s+1]`` being
    slab ``s`` (bodies with ``floor(u_x) // n == s``).
    """
    ns = slabs.shape[0] - 1
    for parity in range(2):
        half = (ns - parity + 1) // 2
        for h in numba.prange(half):
            s = 2 * h + parity
            for k in range(slabs[s], slabs[s + 1]):
                _spread_one(order[k], start, w, d, p, Q)


@numba.njit(**JIT_PARALLEL)
def pme_gather(start, w, d, order, Phi, out):
    """``out[i] -= sum_g grad W(r_i - g) Phi[g]`` from the padded mesh potential ``Phi``.

    Bodies are visited in ``order`` (spatially sorted, for cache reuse).
    """
    nb = start.shape[0]
    n = w.shape[2]
    kk = Phi.shape[0]
    for k in numba.prange(nb):
        i = order[k]
        ix = start[i, 0]
        iy = start[i, 1]
        iz = start[i, 2]
        for q in range(kk):
            ox = 0.0
            oy = 0.0
            oz = 0.0
            for a in range(n):
                wxa = w[i, 0, a]
                dxa = d[i, 0, a]
                for b in range(n):
                    row = Phi[q, ix + a, iy + b]
                    tz = 0.0
                    tdz = 0.0
                    for c in range(n):
                        v = row[iz + c]
                        tz += w[i, 2, c] * v
                        tdz += d[i, 2, c] * v
                    ox += dxa * w[i, 1, b] * tz
                    oy += wxa * d[i, 1, b] * tz
                    oz += wxa * w[i, 1, b] * tdz
            out[i, 0, q] -= ox
            out[i, 1, q] -= oy
            out[i, 2, q] -= oz
