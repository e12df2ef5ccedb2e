from __future__ import annotations

import warnings
from functools import lru_cache

import numpy as np

#: A point-dipole solve warns when the two-sphere model puts its error above this.
NEAR_CONTACT_WARN = 0.05


class NearContactWarning(UserWarning):
    """The point-dipole model is inaccurate for the closest pair of spheres."""


def _neighbour_gaps(scene):
    """Up to seven nearest sphere neighbours of every sphere.

    Returns ``(spheres, neighbours, gap, gap_ratio)`` with ``neighbours``, ``gap`` and
    ``gap_ratio`` of shape ``(S, k)`` (minimum image in a periodic box), or None.
    """
    from scipy.spatial import cKDTree

    sph = np.nonzero(np.asarray(scene.is_spherical, dtype=bool))[0]
    if sph.size < 2:
        return None
    pos = np.asarray(scene.positions, dtype=float)[sph]
    radii = np.asarray(scene.semi_axes, dtype=float)[sph, 0]
    if scene.boundary == "periodic":
        box = np.asarray(scene.box, dtype=float)
        pts = np.mod(pos, box)
        pts = np.where(pts >= box, 0.0, pts)
        tree = cKDTree(pts, boxsize=box)
    else:
        pts = pos
        tree = cKDTree(pts)
    kq = min(8, sph.size)
    dist, idx = tree.query(pts, k=kq)
    dist, idx = dist[:, 1:], idx[:, 1:]
    ri = radii[:, None]
    rj = radii[idx]
    gap = dist - ri - rj
    return sph, sph[idx], gap, gap / np.minimum(ri, rj)


def _nearest_gaps(scene):
    """Nearest sphere neighbour of every sphere: ``(spheres, neighbours, gap, gap_ratio)``."""
    got = _neighbour_gaps(scene)
    if got is None:
        return None
    sph, nb, gap, ratio = got
    best = np.argmin(ratio, axis=1)
    rows = np.arange(sph.size)
    return sph, nb[rows, best], gap[rows, best], ratio[rows, best]


def closest_pair(scene):
    """Closest pair of spheres by surface gap relative to the smaller radius.

    Returns
    -------
    dict or None
        ``{"pair": (i, j), "gap": reduced gap, "gap_ratio": gap / smaller radius}``;
        None when the scene has fewer than two spheres.
    """
    got = _nearest_gaps(scene)
    if got is None:
        return None
    sph, nb, gap, ratio = got
    a = int(np.argmin(ratio))
    return {"pair": (int(sph[a]), int(nb[a])), "gap": float(gap[a]), "gap_ratio": float(ratio[a])}


#: Gap bins per decade of the point-dipole error table.
_ERROR_BINS = 8


@lru_cache(maxsize=4096)
def _dipole_error_binned(gap_bin, eps_pair, eps_host):
    """``(worst, isotropic)`` relative point-dipole error of a pair at a binned gap.

    ``worst``: the larger of the field along and across the pair; ``isotropic``: the
    signed error of the orientation-averaged pair polarizability, ``(e_along + 2 e_across)/3``.
    The reference order doubles from 8 until the moments change by less than 1e-4.
    """
    from ..operators import pair_dipoles

    gap = 10.0 ** (gap_bin / _ERROR_BINS)
    d = 2.0 + gap
    signed = []
    worst = 0.0
    for m in (0, 1):
        one = pair_dipoles(d, (1.0, 1.0), eps_pair, eps_host, 1, m).sum()
        L, ref = 8, pair_dipoles(d, (1.0, 1.0), eps_pair, eps_host, 8, m).sum()
        while L < 128:
            nxt = pair_dipoles(d, (1.0, 1.0), eps_pair, eps_host, 2 * L, m).sum()
            done = abs(nxt - ref) <= 1e-4 * abs(nxt)
            L, ref = 2 * L, nxt
            if done:
                break
        e = (one - ref) / ref if ref != 0 else 0.0
        signed.append(e)
        worst = max(worst, float(abs(e)))
    iso = (signed[0] + 2 * signed[1]) / 3
    return worst, float(abs(iso.real) if np.iscomplexobj(iso) else iso)


#: Gaps above this many radii count as exact for the estimate (point-dipole error < 1e-4).
_FAR_GAP = 2.0


def _as_key(value):
    return complex(value) if np.iscomplexobj(value) else float(value)


def near_contact_estimate(scene):
    """Estimated point-dipole error of ``scene`` from its closest pairs.

    Every sphere's close neighbours (up to seven, by gap over the smaller radius) become two
    equal spheres of their materials at that relative gap (rounded down to 1/8 decade),
    solved with multipoles to convergence (:func:`dipolearray.operators.pair_dipoles`;
    gaps above two radii count as exact).
    The relative difference of the pair's dipole moments from the point-dipole values
    (worst of the field along and across the pair) is the pair error.

    Returns
    -------
    dict or None
        ``closest_pair`` keys plus ``dipole_error`` (of the closest pair, the worse of
        the field along and across it) and ``total_moment_error`` (the orientation-
        averaged signed pair error, ``(e_along + 2 e_across)/3``, summed over each
        sphere's up to seven nearest neighbours and averaged over spheres: a rough
        estimate of the relative error of the sample's total moment, in which the pair
        errors of a sphere's several close neighbours add; dense arrays add many-body
        enhancement on top, so it errs low there: 9.8 % against 23 % measured on a
        simple cubic lattice at 45 %, contrast 100); None when there is no pair.
    """
    got = _neighbour_gaps(scene)
    if got is None:
        return None
    sph_all, nb_all, gap_all, ratio_all = got
    k = nb_all.shape[1]
    sph = np.repeat(sph_all, k)
    nb, gap, ratio = nb_all.ravel(), gap_all.ravel(), ratio_all.ravel()
    eps = np.asarray(scene.eps_inclusion)
    eh = _as_key(scene.eps_host)
    bins = np.floor(np.log10(np.maximum(ratio, 1e-9)) * _ERROR_BINS).astype(int)
    pops = np.asarray(scene.population_index)
    rows = np.stack([pops[sph], pops[nb], bins], axis=1)
    uniq, inverse = np.unique(rows, axis=0, return_inverse=True)
    table = np.zeros(uniq.shape[0])
    table_iso = np.zeros(uniq.shape[0])
    far_bin = np.log10(_FAR_GAP) * _ERROR_BINS
    for u, (pa, pb, b) in enumerate(uniq):
        if b > far_bin:
            continue
        ea = _as_key(eps[sph[pops[sph] == pa][0]])
        eb = _as_key(eps[nb[pops[nb] == pb][0]])
        key = (ea, eb) if str(ea) <= str(eb) else (eb, ea)
        table[u], table_iso[u] = _dipole_error_binned(int(b), key, eh)
    inverse = np.asarray(inverse).reshape(-1)
    errs = table[inverse]
    iso = table_iso[inverse]
    a = int(np.argmin(ratio))
    return {
        "pair": (int(sph[a]), int(nb[a])),
        "gap": float(gap[a]),
        "gap_ratio": float(ratio[a]),
        "dipole_error": float(errs[a]),
        "total_moment_error": float(abs(iso.sum()) / scene.n_bodies),
    }


def near_contact_check(scene, extra):
    """Record (and warn about) the point-dipole error of the closest pairs in ``extra``."""
    if scene.n_bodies < 2:
        return
    info = near_contact_estimate(scene)
    if info is None:
        return
    extra["near_contact"] = info
    if info["dipole_error"] >= NEAR_CONTACT_WARN:
        i, j = info["pair"]
        warnings.warn(
            f"point-dipole model: spheres {i} and {j} are {info['gap_ratio']:.3g} radii apart (surface gap); "
            f"a two-sphere multipole solve puts the dipole-moment error of such a pair near "
            f"{100 * info['dipole_error']:.2g} % (about {100 * info['total_moment_error']:.2g} % on the "
            "total moment, from every sphere's close neighbours); local fields and forces there are "
            "underestimated; use the multipole model for near-contact scenes (backend='multipole', or "
            "[solver] model = 'multipole' in a config)",
            NearContactWarning,
            stacklevel=3,
        )


def multipole_model_error(scene, op, moments_full, *, rtol, maxiter, n_pairs=20):
    """A posteriori model error of a multipole solve: re-solve with the closest pairs refined.

    The orders of the ``n_pairs`` closest near pairs (and their spheres) are raised
    (:meth:`MultipoleOperator.refined`), the system is solved again from the first
    solution, and the change of the dipole moments is the estimate.

    Returns
    -------
    dict
        ``far_field_bound``: largest bound, over bodies, on the field (relative to the
        applied field) of the degree >= 2 multipoles of the pairs coupled only as point
        dipoles (:meth:`MultipoleOperator.neglected_field`; the relative error it causes
        in a body's dipole is of the same size); ``total_moment_error``: largest
        relative change of the total dipole moment over the applied fields;
        ``body_moment_error``: largest change of any body's dipole relative to the
        largest body dipole; ``refined_pairs``; ``orders_refined`` (the
        largest order in the refined solve); ``converged``; ``solved_on``; and, added by
        :func:`dipolearray.solvers.solve`, ``wall_s`` (seconds the estimate took).
    """
    from ._common import MomentSystem, column_norms
    from ._krylov import cocg

    field_scale = float(np.max(np.linalg.norm(np.asarray(scene.field, dtype=float), axis=1)))
    far = op.neglected_field(moments_full, field_scale=field_scale)
    far_bound = float(far.max()) if far.size else 0.0
    if op.pairs.shape[0] == 0:
        return {
            "far_field_bound": far_bound,
            "total_moment_error": 0.0,
            "body_moment_error": 0.0,
            "refined_pairs": 0,
            "orders_refined": int(op.orders.max()),
            "converged": True,
            "note": "no pair closer than the point-dipole cut-off gap",
        }
    fine = op.refined(n_pairs=n_pairs)
    system = MomentSystem(scene, fine)
    x0 = np.zeros((scene.n_bodies, fine.n_per_body, system.n_rhs), dtype=moments_full.dtype)
    x0[:, : moments_full.shape[1]] = moments_full
    if system.dtype.kind == "f":
        x0 = x0.real
    local = _local_bodies(op, fine, n_pairs)
    if local is not None:
        delta, ok = _local_change(scene, op, fine, x0, local, maxiter)
        p2 = x0.copy()
        p2[local] += delta
        solved_on = f"{local.size} bodies around the refined pairs"
    else:
        p2, _h, _it, reason = cocg(system, rtol=rtol, atol=0.0, maxiter=maxiter, x0=x0, callback=None)
        ok = bool(np.all(column_norms(system.residual(p2)) <= system.tolerance(rtol, 0.0)))
        solved_on = "every body"
    d1 = moments_full[:, :3]
    d2 = p2[:, :3]
    tot1 = d1.sum(axis=0)
    tot2 = d2.sum(axis=0)
    tot_err = np.max(np.linalg.norm(tot2 - tot1, axis=0) / np.maximum(np.linalg.norm(tot2, axis=0), 1e-300))
    body_scale = max(float(np.max(np.linalg.norm(d2, axis=1))), 1e-300)
    body_err = float(np.max(np.linalg.norm(d2 - d1, axis=1)) / body_scale)
    return {
        "far_field_bound": far_bound,
        "total_moment_error": float(tot_err),
        "body_moment_error": body_err,
        "refined_pairs": int(min(n_pairs, op.pairs.shape[0])),
        "orders_refined": int(fine.orders.max()),
        "converged": ok,
        "solved_on": solved_on,
    }


LOCAL_REACH = 4.0  # centre distance, in bounding radii, of the bodies re-solved around a refined one


def _local_bodies(op, fine, n_pairs):
    """Bodies within ``LOCAL_REACH`` radii of a refined sphere, or None when that is most of the scene."""
    from scipy.spatial import cKDTree

    changed = np.nonzero(fine.orders != op.orders)[0]
    if changed.size == 0:
        return None
    pos = np.asarray(fine._positions)
    bound = np.asarray(fine.scene.bounding_radii, dtype=float)
    reach = LOCAL_REACH * float(bound.max())
    tree = fine._tree() if hasattr(fine, "_tree") else cKDTree(pos)
    near = tree.query_ball_point(pos[changed], reach)
    local = np.unique(np.concatenate([changed] + [np.asarray(v, dtype=np.int64) for v in near]))
    if local.size > 0.5 * op.n_bodies or op.scene.boundary != "open":
        return None
    return local


def _refinement_residual(op, fine, x0):
    """Residual ``b - M_f x0`` of the refined system at the solution ``x0`` of ``op``.

    ``x0`` solves ``op`` (its residual is below the solve's tolerance and left out
    here), so the residual is ``K_f (G_f - G) x0``. The couplings differ only on the
    rows of the refined pairs and of the spheres whose order was raised; those rows are
    computed, the rest are zero, at the cost of a few bodies' near pairs.
    """
    changed_pairs = np.asarray(fine.pair_orders) != np.asarray(op.pair_orders)
    rows = np.unique(
        np.concatenate([np.nonzero(fine.orders != op.orders)[0], fine.pairs[changed_pairs].ravel()])
    )
    diff = fine.near_rows(x0, rows)
    m = op.n_per_body
    diff[:, :m] -= op.near_rows(np.ascontiguousarray(x0[:, :m]), rows)
    return fine.response().apply(diff)


def _local_change(scene, op, fine, x0, local, maxiter):
    """Change of the solution when the refined system is solved on ``local`` only.

    With ``rho = b - M x0`` the residual of the old solution in the refined system
    (:func:`_refinement_residual`), the
    change ``delta`` solves ``(I - K G) delta = rho``; restricted to the bodies near the
    refined spheres (the residual lives there and the change decays like a dipole field
    away from them), the rest held fixed.
    """
    import copy

    from ..operators import make_operator
    from ._common import MomentSystem
    from ._krylov import cocg

    rho = _refinement_residual(op, fine, x0)[local]
    changes = {
        "positions": np.asarray(scene.positions)[local],
        "population_index": np.asarray(scene.population_index)[local],
    }
    for key in ("scale", "rotations"):
        value = getattr(scene, key)
        if value is not None:
            changes[key] = np.asarray(value)[local]
    sub_scene = scene.replace(check_overlap=False, **changes)
    remap = np.full(scene.n_bodies, -1, dtype=np.int64)
    remap[local] = np.arange(local.size)
    sub = copy.copy(fine)
    sub.scene = sub_scene
    sub.n_bodies = local.size
    sub._positions = np.ascontiguousarray(np.asarray(fine._positions)[local])
    sub.orders = np.asarray(fine.orders)[local]
    keep = (remap[fine.pairs[:, 0]] >= 0) & (remap[fine.pairs[:, 1]] >= 0)
    sub.pairs = remap[fine.pairs[keep]]
    sub.pair_orders = np.asarray(fine.pair_orders)[keep]
    sub.n_applies = 0
    sub._dipole = make_operator(sub_scene, "direct")
    sub._setup_kernels()
    local_system = MomentSystem(sub_scene, sub).with_rhs(rho)
    start = np.zeros_like(rho)
    if local_system.dtype.kind == "f":
        start = start.real
    delta, _h, _it, _reason = cocg(
        local_system, rtol=1e-3, atol=0.0, maxiter=maxiter, x0=start, callback=None
    )
    ok = bool(np.all(local_system.residual_norms(delta) <= local_system.tolerance(1e-3, 0.0)))
    return delta, ok
