"""Compiled hard-body geometry: cell lists, exact ellipsoid contact, addition, Monte Carlo, relaxation.

Plain arrays in, plain arrays out. A body is described at its *final* size by

* ``pos (N, 3)`` centre,
* ``bnd (N,)`` bounding radius and ``inr (N,)`` inscribed radius,
* ``q6 (N, 6)`` the shape matrix ``R diag(a^2) R^T`` as ``xx, yy, zz, xy, xz, yz``,
* ``sph (N,)`` true for spheres (decided by centre distance alone).

Every body may be drawn at a common scale ``s`` (``s < 1`` while a packing grows).
Two bodies overlap at scale ``s`` iff their contact scale ``mu < s``, where
``mu = sqrt(max_lam F(lam))`` with the Perram-Wertheim function
``F(lam) = lam (1 - lam) d^T [(1 - lam) A + lam B]^-1 d`` (for spheres
``mu = |d| / (a + b)``): ``mu`` is the factor by which both bodies must be scaled
about their centres to just touch.

The container ``geo``: ``kind`` 0 periodic box of edges ``L`` (positions in
``[0, L)``), 1 open cube/box of edges ``L`` centred at the origin, 2 open sphere of
radius ``L[0] / 2`` centred at the origin. Walls keep a cube's body inside by its
support function ``sqrt(e_k^T A e_k)`` (exact) and a sphere's by its bounding radius.
"""

from __future__ import annotations

import math

import numba
import numpy as np

JIT = dict(cache=True, nogil=True)

_GOLD = 0.6180339887498949
_PW_ITER = 48


@numba.njit(**JIT)
def _pw_value(lam, dx, dy, dz, qa, qb):
    m = 1.0 - lam
    a = m * qa[0] + lam * qb[0]
    b = m * qa[1] + lam * qb[1]
    c = m * qa[2] + lam * qb[2]
    d = m * qa[3] + lam * qb[3]
    e = m * qa[4] + lam * qb[4]
    f = m * qa[5] + lam * qb[5]
    i00 = b * c - f * f
    i01 = e * f - d * c
    i02 = d * f - b * e
    i11 = a * c - e * e
    i12 = d * e - a * f
    i22 = a * b - d * d
    det = a * i00 + d * i01 + e * i02
    quad = (
        i00 * dx * dx + i11 * dy * dy + i22 * dz * dz + 2.0 * (i01 * dx * dy + i02 * dx * dz + i12 * dy * dz)
    )
    return lam * m * quad / det


@numba.njit(**JIT)
def pw_max(dx, dy, dz, qa, qb):
    """``(max_lam F, argmax)`` by golden section (``F`` is concave on ``[0, 1]``)."""
    lo = 0.0
    hi = 1.0
    x1 = hi - _GOLD * (hi - lo)
    x2 = lo + _GOLD * (hi - lo)
    f1 = _pw_value(x1, dx, dy, dz, qa, qb)
    f2 = _pw_value(x2, dx, dy, dz, qa, qb)
    for _ in range(_PW_ITER):
        if f1 < f2:
            lo = x1
            x1 = x2
            f1 = f2
            x2 = lo + _GOLD * (hi - lo)
            f2 = _pw_value(x2, dx, dy, dz, qa, qb)
        else:
            hi = x2
            x2 = x1
            f2 = f1
            x1 = hi - _GOLD * (hi - lo)
            f1 = _pw_value(x1, dx, dy, dz, qa, qb)
    if f1 > f2:
        return f1, x1
    return f2, x2


@numba.njit(**JIT)
def _pw_gradient(lam, dx, dy, dz, qa, qb, out):
    """``dF/dd = 2 lam (1 - lam) C^-1 d`` at the maximiser (envelope theorem)."""
    m = 1.0 - lam
    a = m * qa[0] + lam * qb[0]
    b = m * qa[1] + lam * qb[1]
    c = m * qa[2] + lam * qb[2]
    d = m * qa[3] + lam * qb[3]
    e = m * qa[4] + lam * qb[4]
    f = m * qa[5] + lam * qb[5]
    i00 = b * c - f * f
    i01 = e * f - d * c
    i02 = d * f - b * e
    i11 = a * c - e * e
    i12 = d * e - a * f
    i22 = a * b - d * d
    det = a * i00 + d * i01 + e * i02
    g = 2.0 * lam * m / det
    out[0] = g * (i00 * dx + i01 * dy + i02 * dz)
    out[1] = g * (i01 * dx + i11 * dy + i12 * dz)
    out[2] = g * (i02 * dx + i12 * dy + i22 * dz)


@numba.njit(**JIT)
def _cell_of(x, y, z, geo_f, geo_i):
    n0 = geo_i[1]
    n1 = geo_i[2]
    n2 = geo_i[3]
    c0 = int(math.floor((x - geo_f[3]) / geo_f[6]))
    c1 = int(math.floor((y - geo_f[4]) / geo_f[7]))
    c2 = int(math.floor((z - geo_f[5]) / geo_f[8]))
    c0 = min(max(c0, 0), n0 - 1)
    c1 = min(max(c1, 0), n1 - 1)
    c2 = min(max(c2, 0), n2 - 1)
    return c0, c1, c2


@numba.njit(**JIT)
def _axis_cells(c, n, periodic):
    """Up to three distinct neighbour cells of cell ``c`` along one axis: ``(count, k0, k1, k2)``."""
    if n < 3:
        return n, 0, 1, 2
    lo = c - 1
    hi = c + 1
    if periodic:
        if lo < 0:
            lo += n
        if hi >= n:
            hi -= n
        return 3, lo, c, hi
    if lo < 0:
        if hi >= n:
            return 1, c, c, c
        return 2, c, hi, hi
    if hi >= n:
        return 2, lo, c, c
    return 3, lo, c, hi


@numba.njit(**JIT)
def _pick(k, a, b, c):
    if k == 0:
        return a
    if k == 1:
        return b
    return c


@numba.njit(**JIT)
def build_cells(pos, count, geo_f, geo_i, head, nxt):
    """Linked-list cell list of the first ``count`` bodies."""
    head[:] = -1
    n1 = geo_i[2]
    n2 = geo_i[3]
    for i in range(count):
        c0, c1, c2 = _cell_of(pos[i, 0], pos[i, 1], pos[i, 2], geo_f, geo_i)
        c = (c0 * n1 + c1) * n2 + c2
        nxt[i] = head[c]
        head[c] = i


@numba.njit(**JIT)
def _wrap(v, L):
    return v - L * math.floor(v / L)


@numba.njit(**JIT)
def _min_image(d, L):
    return d - L * math.floor(d / L + 0.5)


@numba.njit(**JIT)
def _wall_ok(x, y, z, i, s, bnd, q6, geo_f, geo_i):
    kind = geo_i[0]
    if kind == 1:
        if abs(x) + s * math.sqrt(q6[i, 0]) > 0.5 * geo_f[0]:
            return False
        if abs(y) + s * math.sqrt(q6[i, 1]) > 0.5 * geo_f[1]:
            return False
        if abs(z) + s * math.sqrt(q6[i, 2]) > 0.5 * geo_f[2]:
            return False
    elif kind == 2:
        if math.sqrt(x * x + y * y + z * z) + s * bnd[i] > 0.5 * geo_f[0]:
            return False
    return True


@numba.njit(**JIT)
def is_clear(x, y, z, i, s, pos, bnd, inr, q6, sph, geo_f, geo_i, head, nxt):
    """True when body ``i`` placed at ``(x, y, z)`` at scale ``s`` overlaps no listed body."""
    periodic = geo_i[0] == 0
    L0 = geo_f[0]
    L1 = geo_f[1]
    L2 = geo_f[2]
    n1 = geo_i[2]
    n2 = geo_i[3]
    c0, c1, c2 = _cell_of(x, y, z, geo_f, geo_i)
    k0, x0, x1, x2 = _axis_cells(c0, geo_i[1], periodic)
    k1, y0, y1, y2 = _axis_cells(c1, geo_i[2], periodic)
    k2, z0, z1, z2 = _axis_cells(c2, geo_i[3], periodic)
    for u in range(k0):
        for v in range(k1):
            for w in range(k2):
                j = head[(_pick(u, x0, x1, x2) * n1 + _pick(v, y0, y1, y2)) * n2 + _pick(w, z0, z1, z2)]
                while j >= 0:
                    if j != i:
                        dx = pos[j, 0] - x
                        dy = pos[j, 1] - y
                        dz = pos[j, 2] - z
                        if periodic:
                            dx = _min_image(dx, L0)
                            dy = _min_image(dy, L1)
                            dz = _min_image(dz, L2)
                        d2 = dx * dx + dy * dy + dz * dz
                        lim = s * (bnd[i] + bnd[j])
                        if d2 < lim * lim:
                            if sph[i] and sph[j]:
                                return False
                            lin = s * (inr[i] + inr[j])
                            if d2 < lin * lin:
                                return False
                            f, _ = pw_max(dx, dy, dz, q6[i], q6[j])
                            if f < s * s:
                                return False
                    j = nxt[j]
    return True


@numba.njit(**JIT)
def rsa_fill(pos, order, start, s, bnd, inr, q6, sph, geo_f, geo_i, head, nxt, uni, fails, max_fails, at):
    """Random sequential addition of bodies ``order[start:]`` from the uniforms ``uni (M, 3)``.

    ``pos`` rows are bodies; the cell list holds the bodies placed so far (``order[:k]``).
    ``at[k]`` receives the attempt index (into ``uni``) that placed ``order[k]``. Returns
    ``(bodies placed, uniforms used, consecutive failures)``; stops when ``uni`` runs out
    or ``fails`` reaches ``max_fails``.
    """
    n = order.shape[0]
    k = start
    used = 0
    m = uni.shape[0]
    kind = geo_i[0]
    n1 = geo_i[2]
    n2 = geo_i[3]
    while k < n and used < m and fails < max_fails:
        b = order[k]
        u0 = uni[used, 0]
        u1 = uni[used, 1]
        u2 = uni[used, 2]
        used += 1
        if kind == 0:
            x = u0 * geo_f[0]
            y = u1 * geo_f[1]
            z = u2 * geo_f[2]
        elif kind == 1:
            x = (u0 - 0.5) * (geo_f[0] - 2.0 * s * math.sqrt(q6[b, 0]))
            y = (u1 - 0.5) * (geo_f[1] - 2.0 * s * math.sqrt(q6[b, 1]))
            z = (u2 - 0.5) * (geo_f[2] - 2.0 * s * math.sqrt(q6[b, 2]))
        else:
            lim = 0.5 * geo_f[0] - s * bnd[b]
            x = (2.0 * u0 - 1.0) * lim
            y = (2.0 * u1 - 1.0) * lim
            z = (2.0 * u2 - 1.0) * lim
            if x * x + y * y + z * z > lim * lim:
                continue
        if is_clear(x, y, z, b, s, pos, bnd, inr, q6, sph, geo_f, geo_i, head, nxt):
            pos[b, 0] = x
            pos[b, 1] = y
            pos[b, 2] = z
            c0, c1, c2 = _cell_of(x, y, z, geo_f, geo_i)
            c = (c0 * n1 + c1) * n2 + c2
            nxt[b] = head[c]
            head[c] = b
            at[k] = used - 1
            k += 1
            fails = 0
        else:
            fails += 1
    return k, used, fails


@numba.njit(**JIT)
def mc_sweeps(pos, s, delta, bnd, inr, q6, sph, geo_f, geo_i, head, nxt, rnd):
    """Hard-body Metropolis sweeps: ``rnd (S, N, 4)`` uniforms, one row per trial move.

    A trial moves a randomly chosen body by a uniform step in ``[-delta, delta]^3`` and
    is accepted iff the body overlaps nothing and stays inside the walls (hard bodies:
    every allowed configuration has the same weight). The cell list is rebuilt at the
    start of every sweep; the caller makes the cell edge at least
    ``2 s max(bnd) + 2 delta`` so bodies that moved during the sweep are still found.
    Returns the number of accepted moves.
    """
    n = pos.shape[0]
    periodic = geo_i[0] == 0
    accepted = 0
    for sweep in range(rnd.shape[0]):
        build_cells(pos, n, geo_f, geo_i, head, nxt)
        for t in range(n):
            i = min(int(rnd[sweep, t, 0] * n), n - 1)
            x = pos[i, 0] + delta * (2.0 * rnd[sweep, t, 1] - 1.0)
            y = pos[i, 1] + delta * (2.0 * rnd[sweep, t, 2] - 1.0)
            z = pos[i, 2] + delta * (2.0 * rnd[sweep, t, 3] - 1.0)
            if periodic:
                x = _wrap(x, geo_f[0])
                y = _wrap(y, geo_f[1])
                z = _wrap(z, geo_f[2])
            elif not _wall_ok(x, y, z, i, s, bnd, q6, geo_f, geo_i):
                continue
            if is_clear(x, y, z, i, s, pos, bnd, inr, q6, sph, geo_f, geo_i, head, nxt):
                pos[i, 0] = x
                pos[i, 1] = y
                pos[i, 2] = z
                accepted += 1
    return accepted


@numba.njit(**JIT)
def _soft_forces(pos, s, bnd, inr, q6, sph, geo_f, geo_i, head, nxt, frc):
    """Forces of the overlap energy ``sum (1 - mu/s)^2`` (pairs with ``mu < s``) plus walls.

    Returns ``(energy, overlapping pairs, bodies through a wall)``.
    """
    n = pos.shape[0]
    periodic = geo_i[0] == 0
    kind = geo_i[0]
    L0 = geo_f[0]
    L1 = geo_f[1]
    L2 = geo_f[2]
    n1 = geo_i[2]
    n2 = geo_i[3]
    g = np.empty(3)
    frc[:] = 0.0
    energy = 0.0
    pairs = 0
    walls = 0
    build_cells(pos, n, geo_f, geo_i, head, nxt)
    for i in range(n):
        x = pos[i, 0]
        y = pos[i, 1]
        z = pos[i, 2]
        c0, c1, c2 = _cell_of(x, y, z, geo_f, geo_i)
        k0, x0, x1, x2 = _axis_cells(c0, geo_i[1], periodic)
        k1, y0, y1, y2 = _axis_cells(c1, geo_i[2], periodic)
        k2, z0, z1, z2 = _axis_cells(c2, geo_i[3], periodic)
        for u in range(k0):
            for v in range(k1):
                for w in range(k2):
                    j = head[(_pick(u, x0, x1, x2) * n1 + _pick(v, y0, y1, y2)) * n2 + _pick(w, z0, z1, z2)]
                    while j >= 0:
                        if j > i:
                            dx = pos[j, 0] - x
                            dy = pos[j, 1] - y
                            dz = pos[j, 2] - z
                            if periodic:
                                dx = _min_image(dx, L0)
                                dy = _min_image(dy, L1)
                                dz = _min_image(dz, L2)
                            d2 = dx * dx + dy * dy + dz * dz
                            lim = s * (bnd[i] + bnd[j])
                            if d2 < lim * lim and d2 > 0.0:
                                if sph[i] and sph[j]:
                                    sig = bnd[i] + bnd[j]
                                    d = math.sqrt(d2)
                                    mu = d / sig
                                    g[0] = dx / (d * sig)
                                    g[1] = dy / (d * sig)
                                    g[2] = dz / (d * sig)
                                else:
                                    f, lam = pw_max(dx, dy, dz, q6[i], q6[j])
                                    mu = math.sqrt(f)
                                    _pw_gradient(lam, dx, dy, dz, q6[i], q6[j], g)
                                    for q in range(3):
                                        g[q] /= 2.0 * mu
                                if mu < s:
                                    ov = 1.0 - mu / s
                                    energy += ov * ov
                                    pairs += 1
                                    # dE/dd = -2 ov / s dmu/dd; d = p_j - p_i.
                                    for q in range(3):
                                        fq = 2.0 * ov / s * g[q]
                                        frc[j, q] += fq
                                        frc[i, q] -= fq
                        j = nxt[j]
        if kind == 1:
            for q in range(3):
                h = s * math.sqrt(q6[i, q])
                pen = abs(pos[i, q]) + h - 0.5 * geo_f[q]
                if pen > 0.0:
                    ov = pen / h
                    energy += ov * ov
                    walls += 1
                    sgn = 1.0 if pos[i, q] > 0 else -1.0
                    frc[i, q] -= 2.0 * ov / h * sgn
        elif kind == 2:
            rr = math.sqrt(x * x + y * y + z * z)
            h = s * bnd[i]
            pen = rr + h - 0.5 * geo_f[0]
            if pen > 0.0 and rr > 0.0:
                ov = pen / h
                energy += ov * ov
                walls += 1
                frc[i, 0] -= 2.0 * ov / h * x / rr
                frc[i, 1] -= 2.0 * ov / h * y / rr
                frc[i, 2] -= 2.0 * ov / h * z / rr
    return energy, pairs, walls


@numba.njit(**JIT)
def fire_relax(pos, s, bnd, inr, q6, sph, geo_f, geo_i, head, nxt, max_steps, dt0, dt_max):
    """Remove overlaps by minimising the overlap energy with FIRE.

    Stops as soon as no pair overlaps and no body crosses a wall at scale ``s``.
    Returns ``(steps, overlapping pairs, bodies through walls, energy)`` of the last
    evaluation.

    References
    ----------
    Bitzek, E., Koskinen, P., Gaehler, F., Moseler, M. and Gumbsch, P. (2006).
    Structural relaxation made simple. Phys. Rev. Lett. 97, 170201.
    """
    n = pos.shape[0]
    periodic = geo_i[0] == 0
    vel = np.zeros((n, 3))
    frc = np.zeros((n, 3))
    dt = dt0
    alpha = 0.1
    since_neg = 0
    energy, pairs, walls = _soft_forces(pos, s, bnd, inr, q6, sph, geo_f, geo_i, head, nxt, frc)
    step = 0
    while step < max_steps and (pairs > 0 or walls > 0):
        step += 1
        # Velocity Verlet half steps with FIRE mixing (unit masses).
        for i in range(n):
            for q in range(3):
                vel[i, q] += 0.5 * dt * frc[i, q]
        power = 0.0
        fn = 0.0
        vn = 0.0
        for i in range(n):
            for q in range(3):
                power += frc[i, q] * vel[i, q]
                fn += frc[i, q] * frc[i, q]
                vn += vel[i, q] * vel[i, q]
        fn = math.sqrt(fn)
        vn = math.sqrt(vn)
        if power > 0.0:
            if fn > 0.0:
                for i in range(n):
                    for q in range(3):
                        vel[i, q] = (1.0 - alpha) * vel[i, q] + alpha * vn * frc[i, q] / fn
            since_neg += 1
            if since_neg > 5:
                dt = min(dt * 1.1, dt_max)
                alpha *= 0.99
        else:
            since_neg = 0
            dt *= 0.5
            alpha = 0.1
            vel[:] = 0.0
        for i in range(n):
            for q in range(3):
                pos[i, q] += dt * vel[i, q]
            if periodic:
                for q in range(3):
                    pos[i, q] = _wrap(pos[i, q], geo_f[q])
        energy, pairs, walls = _soft_forces(pos, s, bnd, inr, q6, sph, geo_f, geo_i, head, nxt, frc)
        for i in range(n):
            for q in range(3):
                vel[i, q] += 0.5 * dt * frc[i, q]
    return step, pairs, walls, energy


@numba.njit(**JIT)
def min_contact_scale(pos, bnd, inr, q6, sph, geo_f, geo_i, head, nxt, cap):
    """Smallest contact scale over pairs (and walls) below ``cap``; ``cap`` when none is."""
    n = pos.shape[0]
    periodic = geo_i[0] == 0
    kind = geo_i[0]
    L0 = geo_f[0]
    L1 = geo_f[1]
    L2 = geo_f[2]
    n1 = geo_i[2]
    n2 = geo_i[3]
    best = cap
    build_cells(pos, n, geo_f, geo_i, head, nxt)
    for i in range(n):
        x = pos[i, 0]
        y = pos[i, 1]
        z = pos[i, 2]
        if kind == 1:
            for q in range(3):
                best = min(best, (0.5 * geo_f[q] - abs(pos[i, q])) / math.sqrt(q6[i, q]))
        elif kind == 2:
            best = min(best, (0.5 * geo_f[0] - math.sqrt(x * x + y * y + z * z)) / bnd[i])
        c0, c1, c2 = _cell_of(x, y, z, geo_f, geo_i)
        k0, x0, x1, x2 = _axis_cells(c0, geo_i[1], periodic)
        k1, y0, y1, y2 = _axis_cells(c1, geo_i[2], periodic)
        k2, z0, z1, z2 = _axis_cells(c2, geo_i[3], periodic)
        for u in range(k0):
            for v in range(k1):
                for w in range(k2):
                    j = head[(_pick(u, x0, x1, x2) * n1 + _pick(v, y0, y1, y2)) * n2 + _pick(w, z0, z1, z2)]
                    while j >= 0:
                        if j > i:
                            dx = pos[j, 0] - x
                            dy = pos[j, 1] - y
                            dz = pos[j, 2] - z
                            if periodic:
                                dx = _min_image(dx, L0)
                                dy = _min_image(dy, L1)
                                dz = _min_image(dz, L2)
                            d2 = dx * dx + dy * dy + dz * dz
                            lim = best * (bnd[i] + bnd[j])
                            if d2 < lim * lim:
                                if sph[i] and sph[j]:
                                    mu = math.sqrt(d2) / (bnd[i] + bnd[j])
                                else:
                                    f, _ = pw_max(dx, dy, dz, q6[i], q6[j])
                                    mu = math.sqrt(f)
                                best = min(best, mu)
                        j = nxt[j]
    return best


@numba.njit(**JIT)
def pair_contact_scales(i, j, d, bnd, q6, sph, out):
    """Contact scale ``mu`` of each listed pair with centre vectors ``d = p_j - p_i``."""
    for k in range(i.shape[0]):
        a = i[k]
        b = j[k]
        if sph[a] and sph[b]:
            out[k] = math.sqrt(d[k, 0] ** 2 + d[k, 1] ** 2 + d[k, 2] ** 2) / (bnd[a] + bnd[b])
        else:
            f, _ = pw_max(d[k, 0], d[k, 1], d[k, 2], q6[a], q6[b])
            out[k] = math.sqrt(f)


@numba.njit(**JIT)
def unwrap_tree(order, pred, pos, box, out):
    """Unwrap positions along a breadth-first tree: each node sits at its parent plus the minimum image."""
    for k in range(order.shape[0]):
        node = order[k]
        p = pred[node]
        if p < 0:
            for q in range(3):
                out[node, q] = pos[node, q]
        else:
            for q in range(3):
                out[node, q] = out[p, q] + _min_image(pos[node, q] - pos[p, q], box[q])
