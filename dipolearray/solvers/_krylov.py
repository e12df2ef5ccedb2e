from __future__ import annotations

import numpy as np

from ._common import block_apply, column_norms


def _bilinear(x, y):
    """Unconjugated per-column product ``sum x * y`` -> (K,)."""
    return np.einsum("nck,nck->k", x, y)


#: Ceiling on the relaxed apply accuracy in an inexact COCG solve.
RELAX_CEILING = 1e-3


def cocg(system, *, rtol, atol, maxiter, x0, callback, max_restarts=3, final_check=True, relax=True):
    """COCG on the symmetrised moment equations, all right-hand sides batched.

    Returns ``(p, history, iterations, reason)``. The monitored residual is mapped
    back to the unsymmetrised one, ``r = alpha^1/2 r_sym``, so the stopping test is
    the common criterion; the true residual is recomputed at the end and a restart
    from the current iterate follows if the recurrence has drifted (skipped with
    ``final_check=False``, for inner solves whose caller checks the outer residual).
    A zero start costs no apply.

    Inexact Krylov: on an operator that allows it (``op.relaxable``, the fast
    multipole backend), the accuracy of the apply at step k is loosened to
    ``accuracy / r_k`` (``r_k`` the largest relative residual of the active columns),
    at most ``RELAX_CEILING``: errors made once the residual is small perturb the
    iterate in proportion to that residual (Simoncini & Szyld 2003; van den Eshof &
    Sleijpen 2004). The final true residual is computed at full accuracy, and a
    restart follows if it misses the tolerance.

    References
    ----------
    van der Vorst, H. A. and Melissen, J. B. M. (1990). A Petrov-Galerkin type method
    for solving Ax = b, where A is symmetric complex. IEEE Trans. Magn. 26, 706.
    """
    half = system.alpha_sqrt
    cplx = (half.dtype.kind == "c") if hasattr(half, "apply") else np.iscomplexobj(half)
    work = np.complex128 if (cplx or system.dtype.kind == "c") else np.float64
    half = half.astype(work)
    c = block_apply(half, system.e0.astype(work))
    tol = system.tolerance(rtol, atol)
    history = []
    it = 0
    reason = "maxiter"

    def sym_apply(q):
        return q - block_apply(half, system.op.apply(block_apply(half, q)))

    op = system.op
    relax = bool(relax and getattr(op, "relaxable", False))
    relaxed = []

    # q0 with alpha^1/2 q0 = x0: x0 defaults to the isolated response alpha E0 = alpha^1/2 c.
    q = _initial_q(system, half, x0, c)
    p = None
    zero_start = not np.any(q)
    for _restart in range(max_restarts + 1):
        r = c.copy() if zero_start else c - sym_apply(q)
        zero_start = False
        rn = column_norms(block_apply(half, r))
        history.append(system.relative(rn))
        d = r.copy()
        rho = _bilinear(r, r)
        while not np.all(rn <= tol) and it < maxiter:
            active = rn > tol
            if relax:
                level = float(np.max(history[-1][active]))
                op.set_apply_accuracy(min(op.accuracy / max(level, 1e-300), RELAX_CEILING))
                relaxed.append(op.apply_accuracy)
            w = sym_apply(d)
            mu = _bilinear(d, w)
            scale_ok = np.abs(mu) > 1e-300
            if np.any(active & ~scale_ok):
                reason = "breakdown"
                break
            a = np.where(active & scale_ok, rho / np.where(scale_ok, mu, 1.0), 0.0)
            q = q + a * d
            r = r - a * w
            rho_new = _bilinear(r, r)
            beta = np.where(active & (np.abs(rho) > 0), rho_new / np.where(rho != 0, rho, 1.0), 0.0)
            d = r + beta * d
            rho = rho_new
            it += 1
            rn = column_norms(block_apply(half, r))
            history.append(system.relative(rn))
            if callback is not None:
                callback(it, history[-1])
            if not np.all(np.isfinite(rn)):
                reason = "breakdown"
                break
        if relax:
            op.set_apply_accuracy(None)
            system.apply_accuracies = list(relaxed)
        p = block_apply(half, q)
        if system.dtype.kind == "f":
            p = p.real.astype(np.float64)
        if not final_check:
            reason = "converged" if np.all(rn <= tol) else reason
            break
        true = system.residual_norms(p)
        history.append(system.relative(true))
        if np.all(true <= tol):
            reason = "converged"
            break
        if reason == "breakdown" or it >= maxiter:
            break
    return p, np.array(history), it, reason


def _initial_q(system, half, x0, c):
    default = np.allclose(x0, system.b)
    if default:
        return c.copy()
    # General start: solve alpha^1/2 q = x0 body by body (singular blocks: least squares).
    if hasattr(half, "solve"):
        return half.solve(x0.astype(c.dtype)).astype(c.dtype)
    q = np.empty_like(c)
    for i in range(x0.shape[0]):
        q[i] = np.linalg.lstsq(half[i], x0[i].astype(c.dtype), rcond=None)[0]
    return q


def gmres(system, *, rtol, atol, maxiter, x0, callback, restart=60):
    """Restarted GMRES (SciPy) on ``M p = b``, one right-hand side at a time."""
    from scipy.sparse.linalg import LinearOperator
    from scipy.sparse.linalg import gmres as scipy_gmres

    n = system.scene.n_bodies
    m = system.n_per_body
    size = m * n
    dt = system.dtype

    def matvec(v):
        x = v.reshape(n, m, 1).astype(dt, copy=False)
        return (x - system.coupling(x)).reshape(-1)

    M = LinearOperator((size, size), matvec=matvec, dtype=dt)
    p = np.array(x0, dtype=dt, copy=True)
    tol = system.tolerance(rtol, atol)
    hist_cols = []
    total_it = 0
    reason = "converged"
    for k in range(system.n_rhs):
        col = [float(system.relative(column_norms(system.residual(p[:, :, k : k + 1])))[0])]
        bk = system.b[:, :, k].reshape(-1)

        def cb(pr_norm, col=col):
            col.append(float(pr_norm))
            if callback is not None:
                callback(len(col) - 1, np.array([pr_norm]))

        bnorm = max(float(system.b_norm[k]), 1e-300)
        sol, info = scipy_gmres(
            M,
            bk,
            x0=p[:, :, k].reshape(-1),
            rtol=float(tol[k] / bnorm),
            atol=0.0,
            restart=min(restart, size),
            maxiter=max(1, maxiter // max(1, min(restart, size)) + 1),
            callback=cb,
            callback_type="pr_norm",
        )
        p[:, :, k] = sol.reshape(n, m)
        total_it += len(col) - 1
        hist_cols.append(col)
        if info != 0:
            reason = "maxiter" if info > 0 else "breakdown"
    true = system.relative(system.residual_norms(p))
    length = max(len(c) for c in hist_cols) + 1
    history = np.full((length, system.n_rhs), np.nan)
    for k, col in enumerate(hist_cols):
        history[: len(col), k] = col
        history[len(col) :, k] = true[k]
    if np.all(true * system.b_norm <= tol):
        reason = "converged"
    elif reason == "converged":
        reason = "maxiter"
    return p, history, total_it, reason


def defect_correction(fine, coarse, x0, *, rtol, atol, maxiter, callback, inner_rtol=0.02, max_outer=12):
    """Solve the ``fine`` system by corrections from the cheaper ``coarse`` one.

    Each outer step takes the true residual ``r = b - M_f x`` of the fine system (one
    fine apply) and adds the correction ``delta`` from ``M_c delta = r``, solved by COCG
    to ``inner_rtol`` (tighter, down to a tenth of it, on a step that can finish: half
    the ratio of tolerance to residual). It converges when ``M_f`` and ``M_c`` differ by
    little (the fine operator couples more pairs, or couples them more exactly): each
    step then shrinks the residual by about ``max(inner_rtol, ||(M_c - M_f) M_c^-1||)``.

    Returns
    -------
    (x, history, iterations, reason, outer)
        ``reason`` is ``"converged"``, or ``"slow"`` when a step shrank the residual by
        less than half (or ``max_outer`` steps ran out): the caller continues on the fine
        system alone. ``iterations`` counts inner iterations plus one per outer step.

    References
    ----------
    Stetter, H. J. (1978), The defect correction principle and discretization methods,
    Numer. Math. 29, 425 (defect correction); the coarse solve is an inexact inner
    solve in the sense of Simoncini, V. and Szyld, D. B. (2003), SIAM J. Sci. Comput.
    25, 454.
    """
    tol = fine.tolerance(rtol, atol)
    x = x0
    history = []
    it = 0
    prev = None
    for outer in range(max_outer + 1):
        r = fine.residual(x)
        rn = column_norms(r)
        fine._last_norms = (x, rn)
        history.append(fine.relative(rn))
        if callback is not None and outer > 0:
            callback(it, history[-1])
        done = rn <= tol
        if np.all(done):
            return x, np.array(history), it, "converged", outer
        if outer == max_outer or (prev is not None and np.any(~done & (rn > 0.5 * prev))):
            return x, np.array(history), it, "slow", outer
        prev = rn
        r = np.where(done[None, None, :], 0.0, r)  # finished right-hand sides get no correction
        inner = coarse.with_rhs(r)
        start = np.zeros_like(r)
        need = 0.5 * float(np.min(tol[~done] / rn[~done]))
        inner_cb = None
        if callback is not None:
            # Progress: the inner residual relative to this step's, times this step's.
            def inner_cb(i, res, base=it, scale=history[-1]):
                callback(base + i, res * scale)

        delta, _h, k, _reason = cocg(
            inner,
            rtol=min(inner_rtol, max(need, 0.1 * inner_rtol)),
            atol=0.0,
            maxiter=max(1, maxiter - it),
            x0=start,
            callback=inner_cb,
            final_check=False,
        )
        it += k + 1
        x = x + delta.astype(np.result_type(x, delta), copy=False)
    return x, np.array(history), it, "slow", max_outer
