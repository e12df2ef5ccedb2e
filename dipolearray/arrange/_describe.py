"""Descriptors of an arrangement: g(r), gaps, coordination, clusters and percolation, chains."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import breadth_first_order, connected_components
from scipy.spatial import cKDTree

from .._validate import as_float_array, as_int, as_positive
from ..errors import InputError
from ._kernels import Bodies, contact_scales, unwrap


def _tree(arr):
    pos = np.asarray(arr.positions, dtype=float)
    if arr.region == "periodic":
        box = np.asarray(arr.box, dtype=float)
        pos = np.mod(pos, box)
        pos[pos >= box] = 0.0
        return cKDTree(pos, boxsize=box), pos, box
    return cKDTree(pos), pos, None


def _min_image(d, box):
    if box is None:
        return d
    return d - box * np.round(d / box)


def _pairs_within(arr, extra):
    """Pairs whose bounding spheres come within ``extra`` of each other, with vectors and gaps."""
    tree, pos, box = _tree(arr)
    bound = np.asarray(arr.radii, dtype=float)
    pairs = tree.query_pairs(2.0 * float(bound.max()) + extra, output_type="ndarray")
    if pairs.size == 0:
        return np.zeros((0, 2), dtype=np.int64), np.zeros((0, 3)), np.zeros(0), pos, box
    i, j = pairs[:, 0], pairs[:, 1]
    d = _min_image(pos[j] - pos[i], box)
    dist = np.linalg.norm(d, axis=1)
    keep = dist - bound[i] - bound[j] <= extra
    i, j, d, dist = i[keep], j[keep], d[keep], dist[keep]
    gaps = _surface_gaps(arr, i, j, d, dist)
    keep = gaps <= extra
    return np.stack([i[keep], j[keep]], axis=1), d[keep], gaps[keep], pos, box


def _surface_gaps(arr, i, j, d, dist):
    """Surface gap of each pair: exact for spheres, ``|d| (1 - 1/mu)`` from the contact scale otherwise."""
    if arr.semi_axes is None:
        r = np.asarray(arr.radii, dtype=float)
        return dist - r[i] - r[j]
    mu = contact_scales(Bodies(arr.body_semi_axes, arr.body_rotations), i, j, d)
    return dist * (1.0 - 1.0 / mu)


def radial_distribution(arrangement, r_max, n_bins=100):
    """Radial distribution function ``g(r)`` of the body centres.

    Periodic boxes use every body (minimum image, ``r_max`` at most half the box).
    Open samples use as reference bodies only those at least ``r_max`` inside the
    sample (a guard zone), so no shell is cut by the boundary.

    Parameters
    ----------
    arrangement : Arrangement
    r_max : float
        Largest distance (reduced length).
    n_bins : int

    Returns
    -------
    r : (n_bins,) ndarray
        Bin centres.
    g : (n_bins,) ndarray
        Pair density in each shell over the mean density.

    Notes
    -----
    ``g(r) = n(r) / (N_ref rho 4/3 pi (r_hi^3 - r_lo^3))`` with ``n(r)`` the ordered pair
    count from the reference bodies and ``rho = N / V``.
    """
    arr = arrangement
    rmax = as_positive(r_max, "r_max")
    nb = as_int(n_bins, "n_bins", minimum=1)
    volume = arr.sample_volume
    if volume is None:
        raise InputError(
            "arrangement: g(r) needs a sample region (sphere, cube, slab or periodic)", "arrangement"
        )
    tree, pos, box = _tree(arr)
    if box is not None and rmax > 0.5 * float(box.min()):
        raise InputError(f"r_max: {rmax} exceeds half the periodic box ({0.5 * float(box.min())})", "r_max")
    if box is not None:
        ref = np.arange(arr.n_bodies)
    elif arr.region == "sphere":
        ref = np.flatnonzero(np.linalg.norm(pos, axis=1) <= float(arr.sample_radius) - rmax)
    else:
        ref = np.flatnonzero(np.all(np.abs(pos) <= 0.5 * np.asarray(arr.edges) - rmax, axis=1))
    if ref.size == 0:
        raise InputError(f"r_max: {rmax} leaves no body that far inside the sample; lower it", "r_max")
    edges = np.linspace(0.0, rmax, nb + 1)
    pairs = tree.query_pairs(rmax, output_type="ndarray")
    is_ref = np.zeros(arr.n_bodies, dtype=bool)
    is_ref[ref] = True
    dist = np.linalg.norm(_min_image(pos[pairs[:, 1]] - pos[pairs[:, 0]], box), axis=1)
    # Each unordered pair counts once for every end that is a reference body.
    weight = is_ref[pairs[:, 0]].astype(float) + is_ref[pairs[:, 1]]
    counts = np.histogram(dist, edges, weights=weight)[0]
    rho = arr.n_bodies / volume
    shell = 4.0 / 3.0 * math.pi * (edges[1:] ** 3 - edges[:-1] ** 3)
    return 0.5 * (edges[1:] + edges[:-1]), counts / (ref.size * rho * shell)


def contact_value(r, g, contact, width):
    """Contact value ``g(contact+)`` by a quadratic fit of ``ln g`` over ``[contact, contact + width]``."""
    sel = (r > contact) & (r < contact + width) & (g > 0)
    if sel.sum() < 3:
        raise InputError("width: fewer than three populated bins next to contact", "width")
    c = np.polyfit(r[sel] - contact, np.log(g[sel]), 2)
    return float(np.exp(c[-1]))


def nearest_gaps(arrangement, search=None):
    """Surface gap from each body to its nearest neighbour.

    Parameters
    ----------
    arrangement : Arrangement
    search : float, optional
        Largest gap looked for (default: two mean bounding radii); bodies with no
        neighbour that close get ``inf``.

    Returns
    -------
    (N,) ndarray of float
        Gap in reduced length (exact for spheres; for other shapes ``|d| (1 - 1/mu)``
        with ``mu`` the Perram-Wertheim contact scale).
    """
    arr = arrangement
    s = 2.0 * float(np.mean(arr.radii)) if search is None else as_positive(search, "search")
    pairs, _, gaps, _, _ = _pairs_within(arr, s)
    out = np.full(arr.n_bodies, np.inf)
    if len(gaps):
        np.minimum.at(out, pairs[:, 0], gaps)
        np.minimum.at(out, pairs[:, 1], gaps)
    return out


def overlapping_pairs(arrangement, max_pairs=10):
    """Pairs ``(i, j)``, ``i < j``, whose interiors intersect (exact; touching is allowed).

    Spheres by centre distance, other shapes by the Perram-Wertheim contact scale;
    periodic boxes by the minimum image. Sorted, at most ``max_pairs`` (``None``: all).
    """
    arr = arrangement
    pairs, _, gaps, _, _ = _pairs_within(arr, 0.0)
    size = np.asarray(arr.radii, dtype=float)
    if len(pairs) == 0:
        return []
    bad = gaps < -1e-9 * (size[pairs[:, 0]] + size[pairs[:, 1]])
    pairs = np.sort(pairs[bad], axis=1)
    pairs = pairs[np.lexsort((pairs[:, 1], pairs[:, 0]))]
    if max_pairs is not None:
        pairs = pairs[:max_pairs]
    return [(int(i), int(j)) for i, j in pairs]


def coordination(arrangement, gap=0.0):
    """Neighbours of each body within a surface gap of ``gap`` (contacts at 0, with rounding slack)."""
    arr = arrangement
    g = as_positive(gap, "gap", allow_zero=True)
    tol = 1e-7 * float(np.mean(arr.radii))
    pairs, _, _, _, _ = _pairs_within(arr, g + tol)
    return np.bincount(pairs.ravel(), minlength=arr.n_bodies) if len(pairs) else np.zeros(arr.n_bodies, int)


@dataclass(frozen=True)
class ClusterReport:
    """Connected groups of bodies closer than a surface gap.

    Attributes
    ----------
    labels : (N,) ndarray of int
        Cluster of each body, numbered by decreasing size.
    sizes : (n_clusters,) ndarray of int
        Bodies per cluster, largest first.
    percolating : (n_clusters, 3) ndarray of bool
        Whether each cluster spans the sample along x, y, z (periodic: wraps around
        the box onto its own image; open: reaches both opposite boundary layers).
    gap : float
        The connection threshold.
    positions : (N, 3) ndarray
        Centres with every cluster made contiguous (periodic boxes: unwrapped along a
        spanning tree of the cluster; open samples: the positions as they are).
    """

    labels: np.ndarray
    sizes: np.ndarray
    percolating: np.ndarray
    gap: float
    positions: np.ndarray

    @property
    def n_clusters(self) -> int:
        """Number of clusters (isolated bodies count as clusters of one)."""
        return int(self.sizes.size)

    @property
    def largest(self) -> int:
        """Bodies in the largest cluster."""
        return int(self.sizes[0]) if self.sizes.size else 0

    @property
    def percolates(self) -> np.ndarray:
        """(3,) whether any cluster spans the sample along each axis."""
        return self.percolating.any(axis=0)


def clusters(arrangement, gap):
    """Cluster analysis: bodies whose surfaces are within ``gap`` are connected.

    Parameters
    ----------
    arrangement : Arrangement
    gap : float
        Connection threshold on the surface gap (reduced length, >= 0).

    Returns
    -------
    ClusterReport
    """
    arr = arrangement
    g = as_positive(gap, "gap", allow_zero=True)
    n = arr.n_bodies
    tol = 1e-7 * float(np.mean(arr.radii))
    pairs, vec, _, pos, box = _pairs_within(arr, g + tol)
    graph = coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(n, n)).tocsr()
    n_c, raw = connected_components(graph, directed=False)
    sizes = np.bincount(raw, minlength=n_c)
    rank = np.empty(n_c, dtype=np.int64)
    order = np.argsort(-sizes, kind="stable")
    rank[order] = np.arange(n_c)
    labels = rank[raw]
    sizes = sizes[order]
    perc = np.zeros((n_c, 3), dtype=bool)
    unwrapped = pos
    if box is not None:
        perc, unwrapped = _wrapping(pairs, vec, labels, sizes, pos, box)
    else:
        r = np.asarray(arr.radii, dtype=float)
        if arr.region == "sphere":
            hi = np.full(3, float(arr.sample_radius))
        elif arr.edges is not None:
            hi = 0.5 * np.asarray(arr.edges, dtype=float)
        else:
            hi = None
        if hi is not None:
            layer = g + 2.0 * float(r.mean())
            lo_reach = np.full((n_c, 3), np.inf)
            hi_reach = np.full((n_c, 3), -np.inf)
            np.minimum.at(lo_reach, labels, pos - r[:, None])
            np.maximum.at(hi_reach, labels, pos + r[:, None])
            perc = (lo_reach <= -hi + layer) & (hi_reach >= hi - layer)
    return ClusterReport(labels, sizes, perc, g, unwrapped)


def _wrapping(pairs, vec, labels, sizes, pos, box):
    """Periodic percolation: a cluster wraps when unwrapping it along a spanning tree is inconsistent.

    One breadth-first search from a virtual root joined to one body of every cluster
    gives a spanning forest; bodies are unwrapped along it, and an edge whose two ends
    then differ by more than their minimum-image vector closes a loop around the box.
    """
    n = pos.shape[0]
    n_c = sizes.size
    perc = np.zeros((n_c, 3), dtype=bool)
    if len(pairs) == 0:
        return perc, pos
    first = np.full(n_c, -1, dtype=np.int64)
    first[labels[::-1]] = np.arange(n)[::-1]
    i, j = pairs[:, 0], pairs[:, 1]
    rows = np.concatenate([i, j, np.full(n_c, n), first])
    cols = np.concatenate([j, i, first, np.full(n_c, n)])
    sym = coo_matrix((np.ones(rows.size), (rows, cols)), shape=(n + 1, n + 1)).tocsr()
    order, pred = breadth_first_order(sym, n, directed=False, return_predecessors=True)
    order = order[1:]
    pred = np.where(pred[:n] == n, -1, pred[:n])
    unwrapped = unwrap(order, pred, pos, box)
    shift = np.rint((unwrapped[j] - unwrapped[i] - vec) / box).astype(np.int64)
    bad = np.abs(shift) > 0
    for k in range(3):
        perc[np.unique(labels[i[bad[:, k]]]), k] = True
    return perc, unwrapped


@dataclass(frozen=True)
class ChainReport:
    """Chains (clusters of two or more bodies) and how they line up with an axis.

    Attributes
    ----------
    sizes : (M,) ndarray of int
        Bodies per chain, largest first.
    lengths : (M,) ndarray of float
        Extent along the axis (projected centres plus one diameter), reduced length.
    alignment : (M,) ndarray of float
        ``|cos|`` between each chain's principal axis (largest gyration eigenvector) and
        the axis.
    order_parameter : float
        Size-weighted ``<P2>`` of the chain axes about the axis.
    fraction_in_chains : float
        Share of all bodies that sit in chains.
    """

    sizes: np.ndarray
    lengths: np.ndarray
    alignment: np.ndarray
    order_parameter: float
    fraction_in_chains: float


def chains(arrangement, gap, axis=(0.0, 0.0, 1.0)):
    """Chain analysis: clusters (at surface gap ``gap``) of two or more bodies and their alignment.

    Periodic clusters are unwrapped before their extent is measured; a chain that wraps
    around the box reports the box length.
    """
    arr = arrangement
    u = as_float_array(axis, "axis", (3,))
    if not np.linalg.norm(u):
        raise InputError("axis: must be a non-zero vector", "axis")
    u = u / np.linalg.norm(u)
    rep = clusters(arr, gap)
    r = np.asarray(arr.radii, dtype=float)
    p = rep.positions
    lab = rep.labels
    n_c = rep.n_clusters
    multi = np.flatnonzero(rep.sizes > 1)
    sizes = rep.sizes[multi]
    proj = p @ u
    lo = np.full(n_c, np.inf)
    hi = np.full(n_c, -np.inf)
    np.minimum.at(lo, lab, proj)
    np.maximum.at(hi, lab, proj)
    rsum = np.bincount(lab, weights=r, minlength=n_c)
    cnt = np.bincount(lab, minlength=n_c).astype(float)
    lengths = (hi - lo + 2.0 * rsum / cnt)[multi]
    if arr.region == "periodic":
        wraps = rep.percolating[multi] @ (np.abs(u) > 0.5)
        lengths = np.where(wraps, float(np.abs(np.asarray(arr.box)) @ np.abs(u)), lengths)
    mean = np.stack([np.bincount(lab, weights=p[:, k], minlength=n_c) for k in range(3)], 1) / cnt[:, None]
    d = p - mean[lab]
    gyr = np.zeros((n_c, 3, 3))
    np.add.at(gyr, lab, d[:, :, None] * d[:, None, :])
    _, vecs = np.linalg.eigh(gyr[multi])
    align = np.abs(vecs[:, :, -1] @ u)
    s2 = float(np.sum(sizes * (1.5 * align**2 - 0.5)) / sizes.sum()) if sizes.size else 0.0
    return ChainReport(sizes, lengths, align, s2, float(sizes.sum() / arr.n_bodies))
