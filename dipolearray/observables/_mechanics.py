from __future__ import annotations

import numpy as np

from ._fields import local_field


def _harmonic(sol):
    return np.iscomplexobj(sol.moments)


def energy(sol):
    """Electrostatic energy of the induced moments at fixed applied field.

    Returns
    -------
    (K,) ndarray of float, reduced energy
        ``W = -1/2 sum_i p_i . E0`` (static); ``-1/4 Re sum_i p_i . E0`` cycle-averaged
        for complex permittivities. Its derivative with respect to a body's position,
        at fixed field, is minus the force on that body (real permittivities).

    References
    ----------
    Landau, L. D. and Lifshitz, E. M. (1984). Electrodynamics of Continuous Media,
    2nd ed., sec. 11 (free energy of a dielectric body in a fixed external field).
    """
    e0 = np.asarray(sol.scene.field, dtype=float)  # (K, 3)
    pe = np.einsum("nck,kc->k", np.asarray(sol.moments), e0)
    return -0.25 * pe.real if _harmonic(sol) else -0.5 * pe


def forces(sol):
    """Force on every body from the other bodies' dipole fields.

    Returns
    -------
    (N, 3, K) ndarray of float, reduced force
        ``F_i = sum_{j != i} f(p_i, p_j, r_i - r_j)`` with
        ``f = 3/r^4 [(p_i.u) p_j + (p_j.u) p_i + (p_i.p_j) u - 5 (p_i.u)(p_j.u) u]``
        (the gradient of ``p_i . E_j``); cycle-averaged ``1/2 Re f(p_i, conj p_j)`` for
        complex moments. A uniform applied field exerts no net force on a dipole.

    References
    ----------
    Jackson, J. D. (1999). Classical Electrodynamics, 3rd ed., sec. 4.2 (energy and
    force of a dipole in an external field).
    """
    from ..errors import InputError
    from ..operators._kernels import dipole_pair_forces

    if sol.scene.boundary != "open":
        raise InputError(
            "forces: pair forces of periodic scenes are not available yet (open scenes only)", "forces"
        )
    if getattr(sol, "multipoles", None) is not None:
        return multipole_forces(sol)
    p = np.asarray(sol.moments)
    pos = sol.scene.positions
    if not _harmonic(sol):
        return dipole_pair_forces(pos, np.ascontiguousarray(p, dtype=float))
    k = p.shape[2]
    both = dipole_pair_forces(pos, np.ascontiguousarray(np.concatenate([p.real, p.imag], axis=2)))
    return 0.5 * (both[:, :, :k] + both[:, :, k:])


def _pair_dipole_forces(pos, p):
    from ..operators._kernels import dipole_pair_forces

    if not np.iscomplexobj(p):
        return dipole_pair_forces(pos, np.ascontiguousarray(p, dtype=float))
    k = p.shape[2]
    both = dipole_pair_forces(pos, np.ascontiguousarray(np.concatenate([p.real, p.imag], axis=2)))
    return 0.5 * (both[:, :, :k] + both[:, :, k:])


def _gradient_contraction(u, V, order_u):
    """``-sum_lm u_lm dV_lm/d(shift)`` along x, y, z -> (N, 3, K) (real or cycle-averaged)."""
    from ..operators._harmonics import degree_slices, flat_index, rotate_into, z_derivative_weights

    order_v = order_u + 1
    w = z_derivative_weights(order_v)
    out = []
    for axis in np.eye(3):
        ur = rotate_into(u, order_u, axis)
        vr = rotate_into(V, order_v, axis)
        f = 0.0
        for l, _a, _b in degree_slices(order_u):
            for m in range(-l, l + 1):
                coef = w[l + 1, abs(m)]
                prod = ur[:, flat_index(l, m)] * (vr[:, flat_index(l + 1, m)].conj())
                f = f - coef * prod
        out.append(f)
    F = np.stack(out, axis=1)
    return 0.5 * F.real if np.iscomplexobj(F) else F


def multipole_forces(sol, operator=None):
    """Force on every sphere of a multipole solution (exact derivative of the energy).

    Parameters
    ----------
    sol : Solution
        From a multipole solve (``sol.multipoles`` set).
    operator : MultipoleOperator, optional
        The operator used (default: the one recorded in the solution).

    Returns
    -------
    (N, 3, K) ndarray of float, reduced force
        ``F_i = -sum_lm Q_lm dV_lm/dc_i``: the force of the incident potential (whose
        regular coefficients about ``c_i`` are ``V``) on the body's induced charge (whose
        multipole moments are ``Q``), with ``d/dz R_lm = sqrt((l-m)(l+m)) R_(l-1)m`` and
        rotations for x and y. Near pairs enter at multipole level, far pairs as point
        dipoles (the operator's split). Cycle-averaged ``1/2 Re`` with the conjugate
        for complex moments.

    Notes
    -----
    For linear bodies at fixed applied field this equals ``-dW/dc_i`` with
    ``W = -1/2 sum p . E0`` (Landau & Lifshitz, Electrodynamics of Continuous Media,
    sec. 11 and 16); the tests check it against a finite difference of ``W``.
    """
    op = operator if operator is not None else sol.extra.get("multipole_operator")
    if op is None:
        from ..errors import InputError

        raise InputError(
            "forces: this solution carries no multipole operator (solve with backend='multipole')", "forces"
        )
    u = np.asarray(sol.multipoles)
    lmax = int(op.orders.max())

    def contraction(x):
        if np.iscomplexobj(x):
            k = x.shape[2]
            both = op.near_potential(np.ascontiguousarray(np.concatenate([x.real, x.imag], axis=2)))
            V = both[:, :, :k] + 1j * both[:, :, k:]
        else:
            V = op.near_potential(np.ascontiguousarray(x, dtype=float))
        return _gradient_contraction(x, V, lmax)

    dip_only = np.zeros_like(u)
    dip_only[:, :3] = u[:, :3]
    near = contraction(u) - contraction(dip_only)
    return near + _pair_dipole_forces(sol.scene.positions, np.asarray(sol.moments))


def torques(sol, operator=None):
    """Torque on every body, ``p_i x E_loc,i`` (cycle-averaged ``1/2 Re p x conj E``).

    Returns
    -------
    (N, 3, K) ndarray of float, reduced torque
        Zero for lossless spheres, whose moment is parallel to the exciting field.
    """
    p = np.asarray(sol.moments)
    loc = local_field(sol, operator)
    if _harmonic(sol):
        return 0.5 * np.cross(p, loc.conj(), axis=1).real
    return np.cross(p, loc, axis=1)


def maxwell_stress_forces(sol, operator=None, samples=None):
    """Force on every sphere of a multipole solution by the Maxwell stress on its surface.

    Parameters
    ----------
    sol : Solution
        From a multipole solve.
    operator : MultipoleOperator, optional
    samples : int, optional
        Gauss-Legendre nodes in ``cos theta`` (default ``L_i + 3``; twice as many in phi),
        exact for the band-limited integrand.

    Returns
    -------
    (N, 3, K) ndarray of float, reduced force
        ``F_i = oint T . n dA`` with ``T = (E E - |E|^2 I / 2) / (4 pi)`` (reduced units,
        ``4 pi eps0 eps_h = 1``) on a sphere just outside body i, the field there from the
        body's own expansion and the regular expansion (to degree ``L_i + 1``) of
        everything incident on it; far pairs add their point-dipole forces as in
        :func:`multipole_forces`. Real permittivities only. A second route to the force,
        checked against :func:`multipole_forces` in the tests.

    References
    ----------
    Jackson, J. D. (1999). Classical Electrodynamics, 3rd ed., sec. 6.7 (Maxwell stress
    tensor); Landau & Lifshitz, Electrodynamics of Continuous Media, sec. 15 (stress in
    a fluid dielectric).
    """
    from ..errors import InputError
    from ..operators._harmonics import expansion_field, n_unknowns, sphere_grid

    op = operator if operator is not None else sol.extra.get("multipole_operator")
    if op is None:
        raise InputError("forces: this solution carries no multipole operator", "forces")
    u = np.asarray(sol.multipoles)
    if np.iscomplexobj(u):
        raise InputError("forces: the stress route takes real permittivities", "forces")
    scene = sol.scene
    n, _, k = u.shape
    V = op.near_potential(np.ascontiguousarray(u, dtype=float))
    # Add what near_potential leaves out: the applied field and every pair's dipole field.
    e0 = np.asarray(scene.field, dtype=float).T
    V[:, :3] -= e0[None] + op._dipole._apply(np.ascontiguousarray(u[:, :3]))
    radii = np.asarray(scene.semi_axes)[:, 0]
    out = np.zeros((n, 3, k))
    for i in range(n):
        L = int(op.orders[i])
        nrm, w = sphere_grid(L + 3 if samples is None else int(samples))
        wts = w * radii[i] ** 2
        pts = nrm * radii[i] * (1 + 1e-12)
        E = expansion_field(pts, V[i, : n_unknowns(L + 1)], L + 1, "regular")
        E = E + expansion_field(pts, u[i, : n_unknowns(L)], L, "irregular")
        en = np.einsum("pak,pa->pk", E, nrm)
        e2 = np.einsum("pak,pak->pk", E, E)
        traction = (E * en[:, None, :] - 0.5 * e2[:, None, :] * nrm[:, :, None]) / (4 * np.pi)
        out[i] = np.einsum("p,pak->ak", wts, traction)
    dip_only = np.zeros_like(u)
    dip_only[:, :3] = u[:, :3]
    far = _pair_dipole_forces(scene.positions, np.asarray(sol.moments)) - _near_dipole_forces(op, dip_only)
    return out + far


def _near_dipole_forces(op, dip_only):
    """Point-dipole forces of the near pairs alone (what the stress route already holds)."""
    V = op.near_potential(np.ascontiguousarray(dip_only, dtype=float))
    return _gradient_contraction(dip_only, V, int(op.orders.max()))
