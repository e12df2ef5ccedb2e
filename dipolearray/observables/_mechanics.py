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
    p = np.asarray(sol.moments)
    pos = sol.scene.positions
    if not _harmonic(sol):
        return dipole_pair_forces(pos, np.ascontiguousarray(p, dtype=float))
    k = p.shape[2]
    both = dipole_pair_forces(pos, np.ascontiguousarray(np.concatenate([p.real, p.imag], axis=2)))
    return 0.5 * (both[:, :, :k] + both[:, :, k:])


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
