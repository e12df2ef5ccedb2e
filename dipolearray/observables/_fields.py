from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

from .._validate import as_float_array
from ..operators import make_operator


def _applied(sol):
    e0 = np.asarray(sol.scene.field, dtype=float).T  # (3, K)
    return e0


def solution_operator(sol, operator=None):
    """The operator to evaluate ``sol`` with.

    The one given, else the multipole operator the solve recorded, else a fresh
    point-dipole operator.
    """
    if operator is not None:
        return operator
    if getattr(sol, "multipoles", None) is not None:
        if "multipole_operator" in sol.extra:
            return sol.extra["multipole_operator"]
        if "orders" in sol.extra and sol.scene.boundary == "open":
            return _rebuilt_multipole_operator(sol)
    return make_operator(sol.scene)


def _rebuilt_multipole_operator(sol):
    """A multipole operator for a solution read from a file (which stores orders, not pairs).

    Near pairs are chosen again by the two-sphere model at accuracy 1e-6; each couples
    to the larger of its bodies' stored orders. Pairs the original solve added from its
    solved multipoles are not recovered, so fields evaluated from a loaded result can
    differ from the original by about the model error.
    """
    from ..operators import make_operator

    orders = np.asarray(sol.extra["orders"], dtype=np.int64)
    op = make_operator(
        sol.scene, "multipole", order=int(orders.max()), accuracy=1e-6, check_error=False, adaptive=False
    )
    op.orders = orders
    if op.pairs.shape[0]:
        op.pair_orders = np.maximum(orders[op.pairs[:, 0]], orders[op.pairs[:, 1]])
    op.n_per_body = int(np.asarray(sol.multipoles).shape[1])
    op._setup_kernels()
    return op


def _coefficients(sol, op):
    """What ``op`` applies to: the full multipole coefficients when it carries them."""
    if getattr(op, "n_per_body", 3) != 3 and getattr(sol, "multipoles", None) is not None:
        return np.asarray(sol.multipoles)
    if hasattr(op, "orders") and getattr(sol, "multipoles", None) is not None:
        return np.asarray(sol.multipoles)
    return np.asarray(sol.moments)


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
        ``p_i = alpha_i`` times this. For a multipole solution: the degree-1 part of the
        incident field (all other bodies' multipoles included).
    """
    op = solution_operator(sol, operator)
    return _applied(sol)[None, :, :] + op.apply(_coefficients(sol, op))[:, :3]


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
    box = None
    pos = scene.positions
    if scene.boundary == "periodic":
        box = np.asarray(scene.box, dtype=float)
        pos = np.mod(pos, box)
        pos[pos >= box] = 0.0
        pts = np.mod(pts, box)
        pts[pts >= box] = 0.0
    tree = cKDTree(pos, boxsize=box)
    rmax = float(scene.bounding_radii.max())
    near = tree.query_ball_point(pts, r=rmax)
    inv_axes = 1.0 / scene.semi_axes
    for m, cands in enumerate(near):
        for j in cands:
            d = pts[m] - pos[j]
            if box is not None:
                d -= box * np.round(d / box)
            local = scene.rotations[j].T @ d
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
        Outside the bodies, ``E0 + sum_j T(x - r_j) p_j`` (for a periodic scene the
        sum runs over every periodic image, by Ewald summation with a conducting
        boundary). A point inside a body gets that body's uniform interior field (the
        point-dipole model does not resolve the field inside a body any better). For a
        multipole solution the bodies' higher multipoles are added outside, and inside a
        sphere its interior expansion is used.
    """
    pts = as_float_array(points, "points", (None, 3))
    op = solution_operator(sol, operator)
    coeffs = _coefficients(sol, op)
    out = _applied(sol)[None, :, :] + op.field_at(pts, coeffs)
    owner = inside_body(sol.scene, pts)
    if (
        np.any(owner >= 0)
        and hasattr(op, "interior_field_at")
        and coeffs.shape[1] >= 3
        and sol.multipoles is not None
    ):
        out = out.astype(np.result_type(out, coeffs), copy=False)
        V = op.incident(coeffs)
        spherical = np.asarray(sol.scene.is_spherical, dtype=bool)
        inner = interior_field(sol, op)
        for b in np.unique(owner[owner >= 0]):
            hit = owner == b
            out[hit] = op.interior_field_at(b, pts[hit], coeffs, V) if spherical[b] else inner[b]
    elif np.any(owner >= 0):
        inner = interior_field(sol, op)
        out = out.astype(inner.dtype, copy=False)
        hit = owner >= 0
        out[hit] = inner[owner[hit]]
    return out


_AXES = {"x": 0, "y": 1, "z": 2}


def slice_frame(normal):
    """In-plane unit vectors ``(e1, e2)`` and the normal index of a slice ``"x"``, ``"y"`` or ``"z"``."""
    from ..errors import InputError

    if normal not in _AXES:
        raise InputError(f"normal: expected 'x', 'y' or 'z', got {normal!r}", "normal")
    k = _AXES[normal]
    e1, e2 = [np.eye(3)[i] for i in range(3) if i != k]
    return e1, e2, k


def field_slice(sol, *, normal="y", offset=0.0, resolution=161, direction=0, extent=None, operator=None):
    """Field magnitude on a square grid in a plane through the sample.

    Parameters
    ----------
    sol : Solution
    normal : {"x", "y", "z"}
        Axis normal to the plane.
    offset : float, reduced length
        Position of the plane along ``normal``. Periodic scenes: the default extent
        is one box, ``[0, L)`` along both in-plane axes.
    resolution : int
        Grid points per side.
    direction : int
        Which applied field (index into ``scene.field``).
    extent : (float, float, float, float), optional
        ``(u_min, u_max, v_min, v_max)``, reduced length; default: the bodies' bounding
        box with one bounding radius to spare.
    operator : InteractionOperator, optional

    Returns
    -------
    dict
        ``u`` and ``v`` (``(R,)`` grid coordinates), ``magnitude`` (``(R, R)``,
        ``|E| / |E0|`` indexed ``[v, u]``), ``inside`` (``(R, R)`` bool, grid point
        inside a body), ``axes`` (the two in-plane axis names), ``normal``, ``offset``.
    """
    from .._validate import as_int

    e1, e2, k = slice_frame(normal)
    n = as_int(resolution, "resolution", minimum=4)
    scene = sol.scene
    if not 0 <= int(direction) < scene.n_fields:
        from ..errors import InputError

        raise InputError(f"direction: expected 0..{scene.n_fields - 1}, got {direction!r}", "direction")
    pos = scene.positions
    pad = float(scene.bounding_radii.max())
    if extent is None:
        if scene.boundary == "periodic":
            lo, hi = np.zeros(3), np.asarray(scene.box, dtype=float)
        else:
            lo = pos.min(axis=0) - pad
            hi = pos.max(axis=0) + pad
        i1, i2 = int(np.argmax(e1)), int(np.argmax(e2))
        extent = (lo[i1], hi[i1], lo[i2], hi[i2])
    u = np.linspace(extent[0], extent[1], n)
    v = np.linspace(extent[2], extent[3], n)
    uu, vv = np.meshgrid(u, v)
    pts = uu.ravel()[:, None] * e1 + vv.ravel()[:, None] * e2
    pts[:, k] = float(offset)
    field = field_at(sol, pts, operator)[:, :, int(direction)]
    e0 = float(np.linalg.norm(scene.field[int(direction)]))
    mag = np.sqrt(np.sum(np.abs(field) ** 2, axis=1)) / e0
    inside = inside_body(scene, pts) >= 0
    names = [a for a in "xyz" if a != normal]
    return {
        "u": u,
        "v": v,
        "magnitude": mag.reshape(n, n),
        "inside": inside.reshape(n, n),
        "axes": tuple(names),
        "normal": normal,
        "offset": float(offset),
    }


def slice_outlines(scene, normal="y", offset=0.0):
    """Ellipses where the bodies cut a slice plane.

    Returns
    -------
    (M, 5) ndarray
        ``u, v`` centre, full width, full height (reduced length) and angle (degrees,
        counter-clockwise from the first in-plane axis) of each cut body's outline;
        for a periodic scene, the periodic images that reach into the box too.
    """
    e1, e2, k = slice_frame(normal)
    E = np.stack([e1, e2], axis=1)  # (3, 2)
    origin = np.zeros(3)
    origin[k] = float(offset)
    pos = np.asarray(scene.positions, dtype=float)
    rot, axes = scene.rotations, scene.semi_axes
    if scene.boundary == "periodic":
        # Bodies wrapped into the box plus the images that reach into it.
        box = np.asarray(scene.box, dtype=float)
        pos = np.mod(pos, box)
        shifts = np.array([[i, j, m] for i in (-1, 0, 1) for j in (-1, 0, 1) for m in (-1, 0, 1)]) * box
        pos = (pos[None, :, :] + shifts[:, None, :]).reshape(-1, 3)
        rot = np.tile(rot, (len(shifts), 1, 1))
        axes = np.tile(axes, (len(shifts), 1))
        reach = np.max(axes, axis=1)
        inside = np.all((pos > -reach[:, None]) & (pos < box + reach[:, None]), axis=1)
        pos, rot, axes = pos[inside], rot[inside], axes[inside]
    w = origin[None, :] - pos  # (N, 3)
    inv = 1.0 / axes**2
    M = np.einsum("nij,nj,nkj->nik", rot, inv, rot)
    A = np.einsum("ia,nij,jb->nab", E, M, E)
    b = np.einsum("ia,nij,nj->na", E, M, w)
    c = np.einsum("ni,nij,nj->n", w, M, w)
    Ainv_b = np.linalg.solve(A, b[:, :, None])[:, :, 0]
    kappa = 1.0 - c + np.einsum("na,na->n", b, Ainv_b)
    cut = kappa > 0
    out = []
    for n in np.flatnonzero(cut):
        lam, vec = np.linalg.eigh(A[n])
        half = np.sqrt(kappa[n] / lam)
        angle = np.degrees(np.arctan2(vec[1, 0], vec[0, 0]))
        q = -Ainv_b[n]
        out.append((q[0], q[1], 2 * half[0], 2 * half[1], angle))
    return np.array(out, dtype=float).reshape(-1, 5)
