"""Compiled cluster-cluster aggregation and rigid-group placement (equal or per-body sphere radii)."""

from __future__ import annotations

import math

import numba
import numpy as np

from ._hard import JIT, _axis_cells, _cell_of, _min_image, _pick, _wall_ok, _wrap


@numba.njit(**JIT)
def _cell_index(x, y, z, geo_f, geo_i):
    c0, c1, c2 = _cell_of(x, y, z, geo_f, geo_i)
    return (c0 * geo_i[2] + c1) * geo_i[3] + c2


@numba.njit(**JIT)
def _cell_remove(i, c, items, count, slot):
    last = count[c] - 1
    k = slot[i]
    j = items[c, last]
    items[c, k] = j
    slot[j] = k
    count[c] = last


@numba.njit(**JIT)
def _cell_insert(i, c, items, count, slot):
    k = count[c]
    items[c, k] = i
    slot[i] = k
    count[c] = k + 1


@numba.njit(**JIT)
def dlca_init(pos, geo_f, geo_i, items, count, slot):
    """Put every particle in the fixed-capacity cell table."""
    count[:] = 0
    for i in range(pos.shape[0]):
        _cell_insert(i, _cell_index(pos[i, 0], pos[i, 1], pos[i, 2], geo_f, geo_i), items, count, slot)


@numba.njit(**JIT)
def dlca(
    pos,
    upos,
    contact,
    step,
    geo_f,
    geo_i,
    items,
    count,
    slot,
    state,
    label,
    head,
    nxt,
    tail,
    size,
    active,
    where,
    target,
    max_moves,
    rnd,
    hist,
):
    """Off-lattice diffusion-limited cluster-cluster aggregation of equal spheres in a periodic box.

    Every particle starts as its own cluster. A move picks a cluster uniformly at random
    (mobility independent of size) and translates it by ``step`` along a random
    direction, stopping at the first contact (centre distance ``contact``) with another
    cluster, which then joins it irreversibly. ``pos`` holds wrapped positions (in
    ``[0, L)``), ``upos`` unwrapped ones (consistent within each cluster).

    The cluster bookkeeping (``label``, member lists ``head/nxt/tail``, ``size``, the
    ``active`` list and its inverse ``where``, and ``state[0]`` = clusters left) lives
    in caller arrays so work can continue across calls. ``rnd (M, 3)`` are uniforms
    (cluster choice, two direction angles). ``hist (M, 2)`` receives
    ``(size, radius of gyration of the centres)`` of each cluster formed. Returns
    ``(moves done, merges recorded)``.
    """
    L0 = geo_f[0]
    L1 = geo_f[1]
    L2 = geo_f[2]
    n1 = geo_i[2]
    n2 = geo_i[3]
    n_active = state[0]
    moves = 0
    merges = 0
    c2 = contact * contact
    while n_active > target and moves < max_moves:
        r = rnd[moves]
        moves += 1
        a = active[min(int(r[0] * n_active), n_active - 1)]
        cz = 2.0 * r[1] - 1.0
        sz = math.sqrt(max(0.0, 1.0 - cz * cz))
        ph = 2.0 * math.pi * r[2]
        ux = sz * math.cos(ph)
        uy = sz * math.sin(ph)
        uz = cz
        t_min = step
        hit_i = -1
        hit_j = -1
        i = head[a]
        while i >= 0:
            x = pos[i, 0]
            y = pos[i, 1]
            z = pos[i, 2]
            cc0, cc1, cc2 = _cell_of(x, y, z, geo_f, geo_i)
            k0, x0, x1, x2 = _axis_cells(cc0, geo_i[1], True)
            k1, y0, y1, y2 = _axis_cells(cc1, geo_i[2], True)
            k2, z0, z1, z2 = _axis_cells(cc2, geo_i[3], True)
            for u in range(k0):
                for v in range(k1):
                    for w in range(k2):
                        c = (_pick(u, x0, x1, x2) * n1 + _pick(v, y0, y1, y2)) * n2 + _pick(w, z0, z1, z2)
                        for s in range(count[c]):
                            j = items[c, s]
                            if label[j] == a:
                                continue
                            wx = _min_image(x - pos[j, 0], L0)
                            wy = _min_image(y - pos[j, 1], L1)
                            wz = _min_image(z - pos[j, 2], L2)
                            b = wx * ux + wy * uy + wz * uz
                            if b >= 0.0:
                                continue
                            cq = wx * wx + wy * wy + wz * wz - c2
                            disc = b * b - cq
                            if disc < 0.0:
                                continue
                            t = -b - math.sqrt(disc)
                            if t < 0.0:
                                t = 0.0
                            if t < t_min:
                                t_min = t
                                hit_i = i
                                hit_j = j
            i = nxt[i]
        # Translate the cluster.
        i = head[a]
        while i >= 0:
            old = _cell_index(pos[i, 0], pos[i, 1], pos[i, 2], geo_f, geo_i)
            pos[i, 0] = _wrap(pos[i, 0] + t_min * ux, L0)
            pos[i, 1] = _wrap(pos[i, 1] + t_min * uy, L1)
            pos[i, 2] = _wrap(pos[i, 2] + t_min * uz, L2)
            upos[i, 0] += t_min * ux
            upos[i, 1] += t_min * uy
            upos[i, 2] += t_min * uz
            new = _cell_index(pos[i, 0], pos[i, 1], pos[i, 2], geo_f, geo_i)
            if new != old:
                _cell_remove(i, old, items, count, slot)
                _cell_insert(i, new, items, count, slot)
            i = nxt[i]
        if hit_j < 0:
            continue
        # Merge the smaller cluster into the larger, aligning unwrapped coordinates at the contact.
        b_lab = label[hit_j]
        keep = a
        drop = b_lab
        if size[b_lab] > size[a]:
            keep = b_lab
            drop = a
        if drop == a:
            p = hit_i
            q = hit_j
        else:
            p = hit_j
            q = hit_i
        # Shift the dropped cluster (containing p) so that upos[p] - upos[q] is the minimum image.
        sx = upos[q, 0] + _min_image(pos[p, 0] - pos[q, 0], L0) - upos[p, 0]
        sy = upos[q, 1] + _min_image(pos[p, 1] - pos[q, 1], L1) - upos[p, 1]
        sz2 = upos[q, 2] + _min_image(pos[p, 2] - pos[q, 2], L2) - upos[p, 2]
        i = head[drop]
        while i >= 0:
            upos[i, 0] += sx
            upos[i, 1] += sy
            upos[i, 2] += sz2
            label[i] = keep
            i = nxt[i]
        nxt[tail[keep]] = head[drop]
        tail[keep] = tail[drop]
        size[keep] += size[drop]
        k = where[drop]
        last = active[n_active - 1]
        active[k] = last
        where[last] = k
        n_active -= 1
        # Radius of gyration of the new cluster.
        mx = 0.0
        my = 0.0
        mz = 0.0
        i = head[keep]
        while i >= 0:
            mx += upos[i, 0]
            my += upos[i, 1]
            mz += upos[i, 2]
            i = nxt[i]
        m = size[keep]
        mx /= m
        my /= m
        mz /= m
        rg = 0.0
        i = head[keep]
        while i >= 0:
            rg += (upos[i, 0] - mx) ** 2 + (upos[i, 1] - my) ** 2 + (upos[i, 2] - mz) ** 2
            i = nxt[i]
        hist[merges, 0] = m
        hist[merges, 1] = math.sqrt(rg / m)
        merges += 1
    state[0] = n_active
    return moves, merges


@numba.njit(**JIT)
def _rotation_from_uniforms(u1, u2, u3, out):
    """Uniformly random rotation from three uniforms (Shoemake 1992, Graphics Gems III)."""
    a = math.sqrt(1.0 - u1)
    b = math.sqrt(u1)
    qx = a * math.sin(2.0 * math.pi * u2)
    qy = a * math.cos(2.0 * math.pi * u2)
    qz = b * math.sin(2.0 * math.pi * u3)
    qw = b * math.cos(2.0 * math.pi * u3)
    out[0, 0] = 1 - 2 * (qy * qy + qz * qz)
    out[0, 1] = 2 * (qx * qy - qz * qw)
    out[0, 2] = 2 * (qx * qz + qy * qw)
    out[1, 0] = 2 * (qx * qy + qz * qw)
    out[1, 1] = 1 - 2 * (qx * qx + qz * qz)
    out[1, 2] = 2 * (qy * qz - qx * qw)
    out[2, 0] = 2 * (qx * qz - qy * qw)
    out[2, 1] = 2 * (qy * qz + qx * qw)
    out[2, 2] = 1 - 2 * (qx * qx + qy * qy)


@numba.njit(**JIT)
def place_groups(
    pos,
    radii,
    offsets,
    starts,
    g_start,
    fails,
    rotate,
    spin_axis,
    bnd,
    q6,
    geo_f,
    geo_i,
    head,
    nxt,
    uni,
    max_fails,
    rot_out,
):
    """Random sequential addition of rigid groups of spheres.

    Group g has members ``starts[g]:starts[g+1]`` (rows of ``pos``, ``radii``), with
    body-frame ``offsets`` about the group centre. A trial draws a uniform centre in the
    container and, when ``rotate`` is 1, a uniformly random rotation (2: a random
    rotation about ``spin_axis`` only; 0: none); it is accepted when every member is
    inside the walls and clear of every placed body. Accepted members join the cell
    list. ``uni (M, 6)`` are the uniforms. Starts at group ``g_start`` with ``fails``
    consecutive failures so far; returns ``(next group, uniforms used, failures)``.
    """
    G = starts.shape[0] - 1
    kind = geo_i[0]
    n1 = geo_i[2]
    n2 = geo_i[3]
    R = np.empty((3, 3))
    used = 0
    g = g_start
    L0 = geo_f[0]
    L1 = geo_f[1]
    L2 = geo_f[2]
    periodic = kind == 0
    while g < G and used < uni.shape[0] and fails < max_fails:
        u = uni[used]
        used += 1
        if kind == 0:
            cx = u[0] * L0
            cy = u[1] * L1
            cz = u[2] * L2
        elif kind == 1:
            cx = (u[0] - 0.5) * L0
            cy = (u[1] - 0.5) * L1
            cz = (u[2] - 0.5) * L2
        else:
            rr = 0.5 * L0
            cx = (2.0 * u[0] - 1.0) * rr
            cy = (2.0 * u[1] - 1.0) * rr
            cz = (2.0 * u[2] - 1.0) * rr
            if cx * cx + cy * cy + cz * cz > rr * rr:
                fails += 1
                continue
        if rotate == 1:
            _rotation_from_uniforms(u[3], u[4], u[5], R)
        elif rotate == 2:
            ang = 2.0 * math.pi * u[3]
            c = math.cos(ang)
            s = math.sin(ang)
            kx = spin_axis[0]
            ky = spin_axis[1]
            kz = spin_axis[2]
            R[0, 0] = c + kx * kx * (1 - c)
            R[0, 1] = kx * ky * (1 - c) - kz * s
            R[0, 2] = kx * kz * (1 - c) + ky * s
            R[1, 0] = ky * kx * (1 - c) + kz * s
            R[1, 1] = c + ky * ky * (1 - c)
            R[1, 2] = ky * kz * (1 - c) - kx * s
            R[2, 0] = kz * kx * (1 - c) - ky * s
            R[2, 1] = kz * ky * (1 - c) + kx * s
            R[2, 2] = c + kz * kz * (1 - c)
        else:
            for a in range(3):
                for b in range(3):
                    R[a, b] = 1.0 if a == b else 0.0
        ok = True
        for m in range(starts[g], starts[g + 1]):
            ox = offsets[m, 0]
            oy = offsets[m, 1]
            oz = offsets[m, 2]
            x = cx + R[0, 0] * ox + R[0, 1] * oy + R[0, 2] * oz
            y = cy + R[1, 0] * ox + R[1, 1] * oy + R[1, 2] * oz
            z = cz + R[2, 0] * ox + R[2, 1] * oy + R[2, 2] * oz
            if periodic:
                x = _wrap(x, L0)
                y = _wrap(y, L1)
                z = _wrap(z, L2)
            elif not _wall_ok(x, y, z, m, 1.0, bnd, q6, geo_f, geo_i):
                ok = False
                break
            pos[m, 0] = x
            pos[m, 1] = y
            pos[m, 2] = z
            cc0, cc1, cc2 = _cell_of(x, y, z, geo_f, geo_i)
            k0, x0, x1, x2 = _axis_cells(cc0, geo_i[1], periodic)
            k1, y0, y1, y2 = _axis_cells(cc1, geo_i[2], periodic)
            k2, z0, z1, z2 = _axis_cells(cc2, geo_i[3], periodic)
            for a in range(k0):
                for b in range(k1):
                    for w in range(k2):
                        j = head[
                            (_pick(a, x0, x1, x2) * n1 + _pick(b, y0, y1, y2)) * n2 + _pick(w, z0, z1, z2)
                        ]
                        while j >= 0:
                            dx = pos[j, 0] - x
                            dy = pos[j, 1] - y
                            dz = pos[j, 2] - z
                            if periodic:
                                dx = _min_image(dx, L0)
                                dy = _min_image(dy, L1)
                                dz = _min_image(dz, L2)
                            lim = radii[m] + radii[j]
                            if dx * dx + dy * dy + dz * dz < lim * lim * (1.0 - 1e-12):
                                ok = False
                                break
                            j = nxt[j]
                        if not ok:
                            break
                    if not ok:
                        break
                if not ok:
                    break
            if not ok:
                break
        if not ok:
            fails += 1
            continue
        for m in range(starts[g], starts[g + 1]):
            c = _cell_index(pos[m, 0], pos[m, 1], pos[m, 2], geo_f, geo_i)
            nxt[m] = head[c]
            head[c] = m
        for a in range(3):
            for b in range(3):
                rot_out[g, a, b] = R[a, b]
        g += 1
        fails = 0
    return g, used, fails
