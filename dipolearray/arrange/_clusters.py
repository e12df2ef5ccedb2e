"""Clustered fillers: fractal aggregates (cluster-cluster aggregation), compact clusters, rigid groups."""

from __future__ import annotations

import math

import numpy as np

from .._validate import as_int, as_positive, check_choice
from ..errors import InputError
from . import _kernels as K
from ._packing import PACK_REGIONS, _check_periodic, _make_arrangement, _region_size, dense_packing


def cluster_aggregation(
    n_bodies, *, radius=1.0, gap=0.0, box_fraction=0.01, n_clusters=1, rng=None, max_moves=None
):
    """Diffusion-limited cluster-cluster aggregation of equal spheres (off-lattice, periodic box).

    ``n_bodies`` spheres start at random disjoint positions in a periodic cube that
    they fill to ``box_fraction``. Clusters (initially single spheres) are picked at
    random, with a mobility independent of their size, and moved one radius in a
    random direction; a move ends at the first contact with another cluster, which
    sticks irreversibly. The run ends when ``n_clusters`` clusters are left.

    Parameters
    ----------
    n_bodies : int
    radius : float
    gap : float
        Surface gap at which spheres stick (0: touching).
    box_fraction : float
        Sphere volume over box volume (dilute: 0.001 to 0.05).
    n_clusters : int
        Stop when this many clusters remain.
    rng : numpy.random.Generator or int, optional
    max_moves : int, optional
        Safety limit on cluster moves (default 10^9).

    Returns
    -------
    positions : (n_bodies, 3) ndarray
        Unwrapped centres (each cluster contiguous, not folded into the box).
    labels : (n_bodies,) ndarray of int
        Cluster of each sphere.
    history : (M, 2) ndarray
        ``(size, radius of gyration of the centres)`` of every cluster formed by a merge.

    References
    ----------
    Meakin, P. (1983). Formation of fractal clusters and networks by irreversible
    diffusion-limited aggregation. Phys. Rev. Lett. 51, 1119.
    Kolb, M., Botet, R. and Jullien, R. (1983). Scaling of kinetically growing clusters.
    Phys. Rev. Lett. 51, 1123.
    """
    from ._packing import random_sequential_addition

    n = as_int(n_bodies, "n_bodies", minimum=2)
    a = as_positive(radius, "radius")
    g = as_positive(gap, "gap", allow_zero=True)
    phi = as_positive(box_fraction, "box_fraction")
    if phi > 0.1:
        raise InputError(f"box_fraction: {phi} is not dilute (allowed up to 0.1)", "box_fraction")
    target = as_int(n_clusters, "n_clusters", minimum=1, maximum=n)
    limit = as_int(max_moves if max_moves is not None else 10**9, "max_moves", minimum=1)
    rng = np.random.default_rng(rng)
    start = random_sequential_addition(n, phi, radius=a + g / 2, region="periodic", rng=rng)
    pos, labels, history, left, moves = K.aggregate(
        start.positions, start.box, 2 * a + g, a, target, limit, rng
    )
    if left > target:
        raise InputError(f"max_moves: {moves} moves left {left} clusters (wanted {target})", "max_moves")
    _, labels = np.unique(labels, return_inverse=True)
    return pos, labels, history


def fractal_dimension(history, smallest=8, largest=None, n_bins=10):
    """Fractal dimension from ``size ~ Rg^D`` over log-binned cluster sizes of a growth history.

    Clusters are grouped in ``n_bins`` logarithmic size bins between ``smallest`` and
    ``largest``; ``D`` is the slope of mean ``ln size`` against mean ``ln Rg``.
    """
    h = np.asarray(history, dtype=float)
    s, rg = h[:, 0], h[:, 1]
    hi = float(s.max()) if largest is None else float(largest)
    edges = np.exp(np.linspace(np.log(smallest), np.log(hi), n_bins + 1))
    idx = np.digitize(s, edges)
    xs, ys = [], []
    for k in range(1, n_bins + 1):
        m = idx == k
        if m.sum() >= 2:
            xs.append(np.mean(np.log(rg[m])))
            ys.append(np.mean(np.log(s[m])))
    if len(xs) < 3:
        raise InputError("history: too few cluster sizes to fit a dimension", "history")
    return float(np.polyfit(xs, ys, 1)[0])


def _aggregate_offsets(size, radius, gap, rng):
    pos, _, _ = cluster_aggregation(size, radius=radius, gap=gap, box_fraction=0.01, rng=rng)
    return pos - pos.mean(axis=0)


def _compact_offsets(size, radius, local_fraction, rng):
    """The ``size`` spheres nearest a random centre of a dense periodic packing: a piece of dense matter."""
    if size == 1:
        return np.zeros((1, 3))
    bulk = dense_packing(max(4 * size, 64), local_fraction, radius=radius, region="periodic", rng=rng)
    box = bulk.box
    d = bulk.positions - bulk.positions[rng.integers(bulk.n_bodies)]
    d -= box * np.round(d / box)
    near = np.argsort(np.linalg.norm(d, axis=1), kind="stable")[:size]
    p = d[near]
    return p - p.mean(axis=0)


def place_groups(
    group_offsets,
    radius,
    volume_fraction,
    *,
    region="sphere",
    rotate=True,
    rng=None,
    max_attempts=100_000,
    box_aspect=None,
    wrap=False,
):
    """Place rigid groups of equal spheres (and single spheres) at random, without overlap.

    Groups are added largest first by random sequential addition of the whole group:
    a random centre and, with ``rotate``, a uniformly random rotation, accepted when
    every member is inside the sample and clear of every body placed before.

    Parameters
    ----------
    group_offsets : list of (m, 3) array_like
        Member centres of each group about its centre (reduced length).
    radius : float
        Sphere radius.
    volume_fraction : float
        Sphere volume over sample volume (sets the sample size).
    region : {"sphere", "cube", "periodic"}
    rotate : bool or (3,) array_like
        Random rotations (True), none (False), or random turns about a given axis only.
    rng : numpy.random.Generator or int, optional
    max_attempts : int
        Consecutive failed trials before giving up (an error naming ``volume_fraction``).
    box_aspect : (3,) array_like, optional
        Edge ratios of a periodic box (default a cube).
    wrap : bool
        Let groups reach around a periodic box onto their own images (groups built to
        join themselves across the boundary, such as box-spanning chains).

    Returns
    -------
    Arrangement
        Bodies group by group in the given order; ``groups`` give each body's group.
    """
    check_choice(region, "region", PACK_REGIONS)
    a = as_positive(radius, "radius")
    phi = as_positive(volume_fraction, "volume_fraction")
    tries = as_int(max_attempts, "max_attempts", minimum=1)
    offs = [np.asarray(o, dtype=float).reshape(-1, 3) for o in group_offsets]
    sizes = np.array([len(o) for o in offs], dtype=np.int64)
    order = np.argsort(-sizes, kind="stable")
    starts = np.concatenate([[0], np.cumsum(sizes[order])])
    flat = np.concatenate([offs[k] for k in order])
    n = int(starts[-1])
    volume = n * 4.0 / 3.0 * math.pi * a**3 / phi
    edges, R = _region_size(region, volume)
    if box_aspect is not None:
        if region != "periodic":
            raise InputError("box_aspect: only a periodic box takes an aspect", "box_aspect")
        asp = np.asarray(box_aspect, dtype=float)
        edges = asp * (volume / float(np.prod(asp))) ** (1.0 / 3.0)
    reach = max(float(np.linalg.norm(o, axis=1).max()) + a for o in offs)
    _check_periodic(region, np.array([edges.min()]), np.array([a]))
    if region == "periodic" and not wrap and reach > edges.min() / 2:
        raise InputError(
            f"volume_fraction: the sample (edge {edges[0]:.3g}) is too small for groups reaching "
            f"{reach:.3g}; add bodies or lower the fraction",
            "volume_fraction",
        )
    if region != "periodic" and 2 * reach > edges[0]:
        raise InputError(
            f"volume_fraction: groups reaching {reach:.3g} do not fit the sample (size {edges[0]:.3g})",
            "volume_fraction",
        )
    if rotate is True:
        mode, axis = 1, np.zeros(3)
    elif rotate is False or rotate is None:
        mode, axis = 0, np.zeros(3)
    else:
        axis = np.asarray(rotate, dtype=float)
        axis = axis / np.linalg.norm(axis)
        mode = 2
    rng = np.random.default_rng(rng)
    pos, rot, placed = K.groups(flat, starts, np.full(n, a), region, edges, mode, axis, rng, tries)
    if placed < len(offs):
        raise InputError(
            f"volume_fraction: placed {placed} of {len(offs)} groups, then {tries} trials in a row "
            f"failed at fraction {phi}; lower the fraction or the group size",
            "volume_fraction",
        )
    labels = np.empty(n, dtype=np.int64)
    for rank, k in enumerate(order):
        labels[starts[rank] : starts[rank + 1]] = k
    back = np.argsort(labels, kind="stable")
    semi = np.full((n, 3), a)
    desc = f"{len(offs)} rigid groups, {n} bodies, fraction {phi:g}, {region}"
    arr = _make_arrangement(pos[back], semi, None, region, edges, R, desc)
    return arr.replace(groups=labels[back])


CLUSTER_KINDS = ("fractal", "compact")


def clustered(
    n_bodies,
    volume_fraction,
    *,
    cluster_size,
    fraction_clustered,
    kind="fractal",
    radius=1.0,
    gap=0.0,
    local_fraction=0.55,
    region="sphere",
    rng=None,
):
    """Fillers partly gathered into clusters, the rest dispersed, at a fixed overall fraction.

    Parameters
    ----------
    n_bodies : int
        All spheres (in clusters and dispersed).
    volume_fraction : float
        Overall filler fraction.
    cluster_size : int
        Spheres per cluster (the agglomerate size a formulator sees under the microscope).
    fraction_clustered : float
        Share of the spheres that sit in clusters, 0 to 1 (rounded to whole clusters).
    kind : {"fractal", "compact"}
        Fractal aggregates grown by diffusion-limited cluster-cluster aggregation
        (fractal dimension about 1.8, spheres touching or at ``gap``), or compact
        balls (the ``cluster_size`` spheres nearest a random point of a dense random
        packing at ``local_fraction``).
    radius, gap : float
        Sphere radius; surface gap at which aggregating spheres stick.
    local_fraction : float
        Packing fraction inside a compact cluster (up to about 0.6).
    region : {"sphere", "cube", "periodic"}
    rng : numpy.random.Generator or int, optional

    Returns
    -------
    Arrangement
        ``groups`` number the clusters 0 .. n_clusters - 1; dispersed spheres carry -1.
    """
    n = as_int(n_bodies, "n_bodies", minimum=1)
    m = as_int(cluster_size, "cluster_size", minimum=2, maximum=n)
    f = float(fraction_clustered)
    if not 0.0 <= f <= 1.0:
        raise InputError(f"fraction_clustered: {f} is outside [0, 1]", "fraction_clustered")
    check_choice(kind, "kind", CLUSTER_KINDS)
    a = as_positive(radius, "radius")
    g = as_positive(gap, "gap", allow_zero=True)
    lf = as_positive(local_fraction, "local_fraction")
    if lf > 0.62:
        raise InputError(
            f"local_fraction: {lf} is beyond random packing (allowed up to 0.62)", "local_fraction"
        )
    rng = np.random.default_rng(rng)
    n_c = int(round(f * n / m))
    groups = []
    for _ in range(n_c):
        if kind == "fractal":
            groups.append(_aggregate_offsets(m, a, g, rng))
        else:
            groups.append(_compact_offsets(m, a, lf, rng))
    n_single = n - n_c * m
    groups.extend(np.zeros((1, 3)) for _ in range(n_single))
    arr = place_groups(groups, a, volume_fraction, region=region, rotate=True, rng=rng)
    groups = np.where(arr.groups < n_c, arr.groups, -1)
    desc = (
        f"{n_c} {kind} clusters of {m} plus {n_single} dispersed, {n} bodies, "
        f"fraction {float(volume_fraction):g}, {region}"
    )
    return arr.replace(groups=groups, description=desc)
