"""Smooth particle-mesh Ewald for point dipoles: B-spline spreading and gathering on a periodic mesh.

Fractional coordinates ``u = K r / L`` per axis; body ``j`` touches the mesh points
``g = floor(u) - t`` for ``t = 0 .. n-1`` with weight ``M_n(u - g)`` (cardinal B-spline
of order ``n``) and derivative ``dM_n/du = M_{n-1}(x) - M_{n-1}(x - 1)``.
"""

from __future__ import annotations

import numba
import numpy as np

from ._jit import JIT


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
def pme_spread(u, p, K, n, scale, Q):
    """``Q[g] += sum_j p_j . grad W(r_j - g)`` for every right-hand side (``Q`` is (R, K0, K1, K2))."""
    nb = u.shape[0]
    kk = p.shape[2]
    wx = np.empty(n)
    wy = np.empty(n)
    wz = np.empty(n)
    dx = np.empty(n)
    dy = np.empty(n)
    dz = np.empty(n)
    for j in range(nb):
        fx = int(np.floor(u[j, 0]))
        fy = int(np.floor(u[j, 1]))
        fz = int(np.floor(u[j, 2]))
        _bspline(u[j, 0] - fx, n, wx, dx)
        _bspline(u[j, 1] - fy, n, wy, dy)
        _bspline(u[j, 2] - fz, n, wz, dz)
        for a in range(n):
            gx = (fx - a) % K[0]
            for b in range(n):
                gy = (fy - b) % K[1]
                for c in range(n):
                    gz = (fz - c) % K[2]
                    g0 = dx[a] * wy[b] * wz[c] * scale[0]
                    g1 = wx[a] * dy[b] * wz[c] * scale[1]
                    g2 = wx[a] * wy[b] * dz[c] * scale[2]
                    for q in range(kk):
                        Q[q, gx, gy, gz] += p[j, 0, q] * g0 + p[j, 1, q] * g1 + p[j, 2, q] * g2


@numba.njit(**JIT)
def pme_gather(u, Phi, K, n, scale, out):
    """``out[i] -= sum_g grad W(r_i - g) Phi[g]`` (the field of the mesh potential at every body)."""
    nb = u.shape[0]
    kk = Phi.shape[0]
    wx = np.empty(n)
    wy = np.empty(n)
    wz = np.empty(n)
    dx = np.empty(n)
    dy = np.empty(n)
    dz = np.empty(n)
    for i in range(nb):
        fx = int(np.floor(u[i, 0]))
        fy = int(np.floor(u[i, 1]))
        fz = int(np.floor(u[i, 2]))
        _bspline(u[i, 0] - fx, n, wx, dx)
        _bspline(u[i, 1] - fy, n, wy, dy)
        _bspline(u[i, 2] - fz, n, wz, dz)
        for a in range(n):
            gx = (fx - a) % K[0]
            for b in range(n):
                gy = (fy - b) % K[1]
                for c in range(n):
                    gz = (fz - c) % K[2]
                    g0 = dx[a] * wy[b] * wz[c] * scale[0]
                    g1 = wx[a] * dy[b] * wz[c] * scale[1]
                    g2 = wx[a] * wy[b] * dz[c] * scale[2]
                    for q in range(kk):
                        v = Phi[q, gx, gy, gz]
                        out[i, 0, q] -= g0 * v
                        out[i, 1, q] -= g1 * v
                        out[i, 2, q] -= g2 * v
