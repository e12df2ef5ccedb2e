from __future__ import annotations

import numpy as np


def dense_matrix(system):
    """Dense ``M = I - alpha T`` as a ``(mN, mN)`` array of the working dtype."""
    from ._common import block_apply

    n = system.scene.n_bodies
    m = system.n_per_body
    T = system.op.dense().reshape(n, m, n * m)
    aT = block_apply(system.alpha, T).reshape(m * n, m * n)
    M = -aT.astype(system.dtype, copy=False)
    M[np.diag_indices(m * n)] += 1.0
    return M


def direct(system):
    """LU-factor ``M`` once and solve all right-hand sides. Returns ``(p, reason)``."""
    from scipy.linalg import LinAlgError, lu_factor, lu_solve

    n = system.scene.n_bodies
    m = system.n_per_body
    M = dense_matrix(system)
    rhs = system.b.reshape(m * n, system.n_rhs)
    try:
        lu = lu_factor(M, overwrite_a=True, check_finite=False)
        x = lu_solve(lu, rhs, check_finite=False)
    except (LinAlgError, ValueError) as exc:
        return np.zeros_like(system.b), f"singular: {exc}"
    return x.reshape(n, m, system.n_rhs), "factored"
