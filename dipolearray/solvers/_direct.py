from __future__ import annotations

import numpy as np


def dense_matrix(system):
    """Dense ``M = I - alpha T`` as a ``(3N, 3N)`` array of the working dtype."""
    n = system.scene.n_bodies
    T = system.op.dense().reshape(n, 3, n, 3)
    aT = np.einsum("iab,ibjc->iajc", system.alpha, T).reshape(3 * n, 3 * n)
    M = -aT.astype(system.dtype, copy=False)
    M[np.diag_indices(3 * n)] += 1.0
    return M


def direct(system):
    """LU-factor ``M`` once and solve all right-hand sides. Returns ``(p, reason)``."""
    from scipy.linalg import LinAlgError, lu_factor, lu_solve

    n = system.scene.n_bodies
    M = dense_matrix(system)
    rhs = system.b.reshape(3 * n, system.n_rhs)
    try:
        lu = lu_factor(M, overwrite_a=True, check_finite=False)
        x = lu_solve(lu, rhs, check_finite=False)
    except (LinAlgError, ValueError) as exc:
        return np.zeros_like(system.b), f"singular: {exc}"
    return x.reshape(n, 3, system.n_rhs), "factored"
