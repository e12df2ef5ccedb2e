"""Compiled hard-body kernels for the arrangement generators, and their array drivers.

numba is imported here and in ``operators/_kernels`` only. This layer sits below the
operators, so it cannot share their kernels; its kernels compare distances exactly and
are compiled without fast-math.
"""

from __future__ import annotations

import math

import numpy as np

from ._aggregate import dlca, dlca_init, place_groups
from ._hard import (
    fire_relax,
    is_clear,
    mc_sweeps,
    min_contact_scale,
    pair_contact_scales,
    pw_max,
    rsa_fill,
    unwrap_tree,
)

__all__ = [
    "Bodies",
    "Grid",
    "body_arrays",
    "make_grid",
    "addition",
    "relax",
    "sweeps",
    "contact_scale",
    "is_clear",
    "pw_max",
    "contact_scales",
    "aggregate",
    "groups",
    "unwrap",
]

KINDS = {"periodic": 0, "cube": 1, "sphere": 2}


class Bodies:
    """Plain arrays of body shapes at final size (see ``_hard`` for the meaning)."""

    def __init__(self, semi_axes, rotations=None):
        semi = np.ascontiguousarray(semi_axes, dtype=np.float64)
        self.n = semi.shape[0]
        self.bnd = np.ascontiguousarray(semi.max(axis=1))
        self.inr = np.ascontiguousarray(semi.min(axis=1))
        self.sph = np.ascontiguousarray(np.ptp(semi, axis=1) <= 1e-12 * self.bnd)
        if rotations is None:
            q = np.zeros((self.n, 3, 3))
            q[:, [0, 1, 2], [0, 1, 2]] = semi**2
        else:
            rot = np.asarray(rotations, dtype=np.float64)
            q = np.einsum("nik,nk,njk->nij", rot, semi**2, rot)
        self.q6 = np.ascontiguousarray(
            np.stack([q[:, 0, 0], q[:, 1, 1], q[:, 2, 2], q[:, 0, 1], q[:, 0, 2], q[:, 1, 2]], axis=1)
        )


def body_arrays(semi_axes, rotations=None) -> Bodies:
    """Shape arrays for the kernels."""
    return Bodies(semi_axes, rotations)


class Grid:
    """Container and cell list: ``geo_f = [L(3), origin(3), cell(3)]``, ``geo_i = [kind, n(3)]``."""

    def __init__(self, kind, edges, cell_min, n_bodies):
        L = np.asarray(edges, dtype=np.float64)
        if kind == "sphere":
            L = np.full(3, float(L[0]))
        origin = np.zeros(3) if kind == "periodic" else -L / 2
        n = np.maximum(1, np.floor(L / cell_min)).astype(np.int64)
        # Keep the cell count bounded for very dilute samples.
        while np.prod(n) > max(8 * n_bodies, 64):
            n = np.maximum(1, n // 2)
        h = L / n
        self.kind = kind
        self.geo_f = np.ascontiguousarray(np.concatenate([L, origin, h]))
        self.geo_i = np.array([KINDS[kind], *n], dtype=np.int64)
        self.head = np.empty(int(np.prod(n)), dtype=np.int64)
        self.nxt = np.empty(max(n_bodies, 1), dtype=np.int64)


def make_grid(kind, edges, cell_min, n_bodies) -> Grid:
    """Cell list with edges at least ``cell_min`` over the container."""
    return Grid(kind, edges, cell_min, n_bodies)


def addition(bodies, order, grid, scale, rng, max_fails, chunk=65536, progress=None, max_total=None):
    """Random sequential addition of ``bodies`` in ``order``; returns ``(positions, placed, attempts)``.

    ``positions`` rows are bodies; ``placed`` is how many of ``order`` were placed before
    ``max_fails`` consecutive trials failed (or ``max_total`` trials in all were spent).
    ``attempts[k]`` is the trial index that placed ``order[k]`` (for addition kinetics).
    """
    b = bodies
    n = len(order)
    pos = np.zeros((n, 3))
    at = np.full(n, -1, dtype=np.int64)
    grid.head[:] = -1
    k, fails, offset = 0, 0, 0
    budget = math.inf if max_total is None else int(max_total)
    while k < n and fails < max_fails and offset < budget:
        uni = rng.random((int(min(chunk, budget - offset)), 3))
        k_new, used, fails = rsa_fill(
            pos,
            np.ascontiguousarray(order, dtype=np.int64),
            k,
            float(scale),
            b.bnd,
            b.inr,
            b.q6,
            b.sph,
            grid.geo_f,
            grid.geo_i,
            grid.head,
            grid.nxt,
            uni,
            fails,
            max_fails,
            at[:],
        )
        at[k:k_new] += offset
        offset += used
        if progress is not None and k_new > k:
            progress(k_new - k)
        k = k_new
    return pos, k, at


def relax(positions, bodies, grid, scale, max_steps, dt0, dt_max):
    """FIRE overlap removal in place; returns ``(steps, pairs, walls, energy)``."""
    return fire_relax(
        positions,
        float(scale),
        bodies.bnd,
        bodies.inr,
        bodies.q6,
        bodies.sph,
        grid.geo_f,
        grid.geo_i,
        grid.head,
        grid.nxt,
        int(max_steps),
        float(dt0),
        float(dt_max),
    )


def sweeps(positions, bodies, grid, scale, delta, rng, n_sweeps):
    """``n_sweeps`` hard-body Monte Carlo sweeps in place; returns the acceptance ratio."""
    n = positions.shape[0]
    done, accepted = 0, 0
    while done < n_sweeps:
        m = min(n_sweeps - done, max(1, 2_000_000 // max(n, 1)))
        rnd = rng.random((m, n, 4))
        accepted += mc_sweeps(
            positions,
            float(scale),
            float(delta),
            bodies.bnd,
            bodies.inr,
            bodies.q6,
            bodies.sph,
            grid.geo_f,
            grid.geo_i,
            grid.head,
            grid.nxt,
            rnd,
        )
        done += m
    return accepted / max(1, n * n_sweeps)


def contact_scale(positions, bodies, grid, cap=math.inf):
    """Smallest pair (or wall) contact scale: below 1 means an overlap at full size."""
    return float(
        min_contact_scale(
            np.ascontiguousarray(positions),
            bodies.bnd,
            bodies.inr,
            bodies.q6,
            bodies.sph,
            grid.geo_f,
            grid.geo_i,
            grid.head,
            grid.nxt,
            float(min(cap, 1e300)),
        )
    )


def contact_scales(bodies, i, j, d):
    """Contact scale of each pair ``(i[k], j[k])`` with centre vector ``d[k] = p_j - p_i``."""
    out = np.empty(len(i))
    pair_contact_scales(
        np.ascontiguousarray(i, dtype=np.int64),
        np.ascontiguousarray(j, dtype=np.int64),
        np.ascontiguousarray(d, dtype=np.float64),
        bodies.bnd,
        bodies.q6,
        bodies.sph,
        out,
    )
    return out


def aggregate(positions, box, contact, step, target, max_moves, rng):
    """Cluster-cluster aggregation in a periodic cube (see ``_aggregate.dlca``).

    Returns ``(unwrapped positions, labels, history (M, 2), clusters left, moves)``.
    """
    n = positions.shape[0]
    L = np.asarray(box, dtype=np.float64)
    grid = Grid("periodic", L, contact + step, n)
    ncell = int(np.prod(grid.geo_i[1:]))
    cell_volume = float(np.prod(grid.geo_f[6:9]))
    cap = int(min(n, math.ceil(cell_volume / (math.pi / 6 * contact**3 * 0.74)) + 4))
    items = np.zeros((ncell, cap), dtype=np.int64)
    count = np.zeros(ncell, dtype=np.int64)
    slot = np.zeros(n, dtype=np.int64)
    pos = np.ascontiguousarray(np.mod(positions, L), dtype=np.float64)
    upos = pos.copy()
    dlca_init(pos, grid.geo_f, grid.geo_i, items, count, slot)
    state = np.array([n], dtype=np.int64)
    label, head, tail, active, where = (np.arange(n) for _ in range(5))
    nxt = np.full(n, -1, dtype=np.int64)
    size = np.ones(n, dtype=np.int64)
    hist = []
    done = 0
    while state[0] > target and done < max_moves:
        m = int(min(1_000_000, max_moves - done))
        part = np.zeros((m, 2))
        moves, merges = dlca(
            pos,
            upos,
            float(contact),
            float(step),
            grid.geo_f,
            grid.geo_i,
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
            int(target),
            m,
            rng.random((m, 3)),
            part,
        )
        hist.append(part[:merges])
        done += moves
    history = np.concatenate(hist) if hist else np.zeros((0, 2))
    return upos, label.copy(), history, int(state[0]), done


def groups(offsets, starts, radii, kind, edges, rotate, spin_axis, rng, max_fails):
    """Random sequential addition of rigid sphere groups; returns ``(positions, rotations, placed)``.

    ``placed`` groups were placed before ``max_fails`` consecutive trials failed.
    """
    n = offsets.shape[0]
    rad = np.ascontiguousarray(radii, dtype=np.float64)
    bodies = Bodies(np.repeat(rad[:, None], 3, axis=1))
    grid = Grid(kind, edges, 2.0 * float(rad.max()), n)
    grid.head[:] = -1
    pos = np.zeros((n, 3))
    st = np.ascontiguousarray(starts, dtype=np.int64)
    G = len(st) - 1
    rot = np.zeros((G, 3, 3))
    g, fails = 0, 0
    axis = np.ascontiguousarray(spin_axis, dtype=np.float64)
    off = np.ascontiguousarray(offsets, dtype=np.float64)
    while g < G and fails < max_fails:
        uni = rng.random((65536, 6))
        g, used, fails = place_groups(
            pos,
            rad,
            off,
            st,
            g,
            fails,
            int(rotate),
            axis,
            bodies.bnd,
            bodies.q6,
            grid.geo_f,
            grid.geo_i,
            grid.head,
            grid.nxt,
            uni,
            int(max_fails),
            rot,
        )
    return pos, rot, g


def unwrap(order, pred, positions, box):
    """Positions unwrapped along a breadth-first tree (``pred < 0`` marks the roots)."""
    out = np.empty_like(positions, dtype=np.float64)
    unwrap_tree(
        np.ascontiguousarray(order, dtype=np.int64),
        np.ascontiguousarray(pred, dtype=np.int64),
        np.ascontiguousarray(positions, dtype=np.float64),
        np.ascontiguousarray(box, dtype=np.float64),
        out,
    )
    return out
