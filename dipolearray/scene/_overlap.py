from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

# Touching bodies (chains at contact) are allowed; this relative slack absorbs rounding.
_TOUCH_TOL = 1e-9


def find_overlaps(positions, semi_axes, rotations, max_pairs=10, box=None):
    """Index pairs of overlapping ellipsoids.

    Parameters
    ----------
    positions : (N, 3) ndarray of float, reduced length
    semi_axes : (N, 3) ndarray of float, reduced length
    rotations : (N, 3, 3) ndarray of float
        Columns are the body axes in lab coordinates.
    max_pairs : int or None
        Stop after this many pairs (sorted by index); ``None`` for all.
    box : (3,) ndarray of float, optional
        Periodic box edges: pairs are tested at their minimum image.

    Returns
    -------
    list of tuple of int
        Pairs ``(i, j)``, ``i < j``, whose interiors intersect. Touching bodies are
        not overlaps.

    Notes
    -----
    Candidates are pairs whose bounding spheres intersect (KD-tree). Spheres are then
    decided exactly by their centre distance. Other pairs are decided by the
    Perram-Wertheim contact function
    ``F(lam) = lam (1 - lam) r^T [(1 - lam) A + lam B]^-1 r`` with
    ``A = R diag(a^2) R^T``; the ellipsoids overlap iff ``max_lam F < 1``. ``F`` is
    concave on ``[0, 1]``, so a golden-section search finds the maximum.

    References
    ----------
    Perram, J. W. and Wertheim, M. S. (1985). Statistical mechanics of hard
    ellipsoids. I. Overlap algorithm and the contact function. J. Comput. Phys. 58, 409.
    """
    pos = np.asarray(positions, dtype=float)
    semi = np.asarray(semi_axes, dtype=float)
    n = pos.shape[0]
    if n < 2:
        return []
    bound = semi.max(axis=1)
    if box is not None:
        L = np.asarray(box, dtype=float)
        pos = np.mod(pos, L)
        pos[pos >= L] = 0.0
        tree = cKDTree(pos, boxsize=L)
    else:
        tree = cKDTree(pos)
    cand = tree.query_pairs(r=2.0 * bound.max(), output_type="ndarray")
    if cand.size == 0:
        return []
    i, j = cand[:, 0], cand[:, 1]
    dvec = pos[j] - pos[i]
    if box is not None:
        dvec -= L * np.round(dvec / L)
    dist = np.linalg.norm(dvec, axis=1)
    keep = dist < (bound[i] + bound[j]) * (1.0 - _TOUCH_TOL)
    i, j, dist, dvec = i[keep], j[keep], dist[keep], dvec[keep]
    is_sphere = np.ptp(semi, axis=1) <= 1e-12 * bound
    both_spheres = is_sphere[i] & is_sphere[j]
    overlap = np.zeros(i.shape, dtype=bool)
    overlap[both_spheres] = True  # bounding spheres are the bodies
    inner = semi.min(axis=1)
    sure = ~both_spheres & (dist < (inner[i] + inner[j]) * (1.0 - _TOUCH_TOL))
    overlap[sure] = True
    test = ~both_spheres & ~sure
    if np.any(test):
        f = _contact_function_max(
            dvec[test],
            semi[i[test]],
            rotations[i[test]],
            semi[j[test]],
            rotations[j[test]],
        )
        overlap[test] = f < 1.0 - _TOUCH_TOL
    pairs = np.stack([i[overlap], j[overlap]], axis=1)
    order = np.lexsort((pairs[:, 1], pairs[:, 0]))
    pairs = pairs[order]
    if max_pairs is not None:
        pairs = pairs[:max_pairs]
    return [(int(a), int(b)) for a, b in pairs]


def _shape_matrix(semi, rot):
    return np.einsum("nik,nk,njk->nij", rot, semi**2, rot)


def _contact_function_max(r, semi_a, rot_a, semi_b, rot_b, iterations=60):
    """Maximum over lambda of the Perram-Wertheim function, vectorised over pairs."""
    A = _shape_matrix(semi_a, rot_a)
    B = _shape_matrix(semi_b, rot_b)

    def F(lam):
        C = (1.0 - lam)[:, None, None] * A + lam[:, None, None] * B
        x = np.linalg.solve(C, r[..., None])[..., 0]
        return lam * (1.0 - lam) * np.einsum("ni,ni->n", r, x)

    g = (np.sqrt(5.0) - 1.0) / 2.0
    lo = np.zeros(r.shape[0])
    hi = np.ones(r.shape[0])
    for _ in range(iterations):
        x1 = hi - g * (hi - lo)
        x2 = lo + g * (hi - lo)
        left = F(x1) < F(x2)
        lo = np.where(left, x1, lo)
        hi = np.where(left, hi, x2)
    return F(0.5 * (lo + hi))
