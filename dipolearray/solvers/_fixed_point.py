from __future__ import annotations

import numpy as np

from ._common import column_norms


def fixed_point(system, *, rtol, atol, maxiter, x0, callback, relaxation=1.0, growth_limit=1e4):
    """Order-of-scattering iteration ``p <- p + w (b + alpha T p - p)``.

    Returns ``(p, history, iterations, reason, rho)``; the residual of each iterate
    comes from the same apply that produces the next one, so it costs nothing extra.
    """
    p = np.array(x0, dtype=system.dtype, copy=True)
    tol = system.tolerance(rtol, atol)
    history = []
    ratios = []
    r = system.residual(p)
    norm = column_norms(r)
    history.append(system.relative(norm))
    first = norm.copy()
    reason = "maxiter"
    it = 0
    rising = 0
    while True:
        if np.all(norm <= tol):
            reason = "converged"
            break
        if it >= maxiter:
            break
        p = p + relaxation * r
        it += 1
        r = system.residual(p)
        new = column_norms(r)
        worst = int(np.argmax(new / np.where(tol > 0, tol, 1.0)))
        if norm[worst] > 0:
            ratios.append(new[worst] / norm[worst])
        rising = rising + 1 if new[worst] > norm[worst] else 0
        norm = new
        history.append(system.relative(norm))
        if callback is not None:
            callback(it, history[-1])
        if not np.all(np.isfinite(norm)) or np.any(norm > growth_limit * np.maximum(first, tol)):
            reason = "diverged"
            break
        if rising >= 8 and _rho(ratios) > 1.0:
            reason = "diverged"
            break
    rho = _rho(ratios) if ratios else None
    return p, np.array(history), it, reason, rho


def _rho(ratios, window=8):
    tail = np.asarray(ratios[-window:], dtype=float)
    tail = tail[tail > 0]
    if tail.size == 0:
        return 0.0
    return float(np.exp(np.mean(np.log(tail))))
