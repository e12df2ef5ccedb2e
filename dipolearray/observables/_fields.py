from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

from .._validate import as_float_array
from ..operators import make_operator


def _applied(sol):
    e0 = np.asarray(sol.scene.field, dtype=float).T  # (3, K)
    return e0


def local_field(sol, operator=None):
    """Exciting field at every body: the applied field plus all other bodies' fields.

    Parameters
    ----------
    sol : Solution
    operator : InteractionOperator, optional
        Reuse an operator built for ``sol.scene``.

    Returns
    -------
    (N, 3, K) ndarray, reduced field
        ``E0 + sum_{j != i} T(r_i - r_j) p_j``; for converged moments
        ``p_i = alpha_i`` times this.
    """
    op = operator if operator is not None else make_operator(sol.scene)
    return _applied(sol)[None, :, :] + op.apply(np.asarray(sol.moments))


def interior_field(sol, operator=None):
    """Uniform field inside every body in the point-dipole model.

    Returns
    -------
    (N, 3, K) ndarray, reduced field
        ``R diag(eps_h/(eps_h + L_k (eps_i - eps_h))) R^T E_loc``; an isolated
        sphere gives ``3 eps_h/(eps_i + 2 eps_h) E0`` (Jackson 1999, sec. 4.4).
    """
    loc = local_field(sol, operator)
    return np.einsum("nij,njk->nik", sol.scene.interior_factor, loc)


def total_moment(sol):
    """Sum of all moments, ``(3, K)``, reduced moment."""
    return np.asarray(sol.moments).sum(axis=0)


def inside_body(scene, points):
    """Index of the body containing each point, or -1 (``(M,)`` int)."""
    pts = np.asarray(points, dtype=float)
    owner = np.full(pts.shape[0], -1, dtype=np.int64)
    tree = cKDTree(scene.positions)
    rmax = float(scene.bounding_radii.max())
    near = tree.query_ball_point(pts, r=rmax)
    inv_axes = 1.0 / scene.semi_axes
    for m, cands in enumerate(near):
        for j in cands:
            local = scene.rotations[j].T @ (pts[m] - scene.positions[j])
            if np.sum((local * inv_axes[j]) ** 2) < 1.0:
                owner[m] = j
                break
    return owner


def field_at(sol, points, operator=None):
    """Field at arbitrary points.

    Parameters
    ----------
    sol : Solution
    points : (M, 3) array_like of float, reduced length

    Returns
    -------
    (M, 3, K) ndarray, reduced field
        Outside the bodies, ``E0 + sum_j T(x - r_j) p_j``. A point inside a body gets
        that body's uniform interior field (the point-dipole model does not resolve
        the field inside a body any better).
    """
    pts = as_float_array(points, "points", (None, 3))
    if sol.scene.boundary != "open":
        from ..errors import InputError

        raise InputError(
            "points: field maps of periodic scenes are not available yet (open scenes only)", "points"
        )
    op = operator if operator is not None else make_operator(sol.scene)
    out = _applied(sol)[None, :, :] + op.field_at(pts, np.asarray(sol.moments))
    owner = inside_body(sol.scene, pts)
    if np.any(owner >= 0):
        inner = interior_field(sol, op)
        out = out.astype(inner.dtype, copy=False)
        hit = owner >= 0
        out[hit] = inner[owner[hit]]
    return out
