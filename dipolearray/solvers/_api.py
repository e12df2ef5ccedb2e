from __future__ import annotations

import time

import numpy as np

from .._validate import as_float_array, as_int, as_positive, check_choice
from ..errors import InputError
from ._common import MomentSystem, column_norms
from ._direct import direct
from ._fixed_point import fixed_point
from ._krylov import cocg, defect_correction, gmres
from ._model_error import closest_pair, multipole_model_error, near_contact_check
from ._solution import Solution

METHODS = ("auto", "fixed_point", "cocg", "gmres", "direct")

#: ``auto`` factors the dense matrix up to this many bodies (3N = 3000 unknowns).
AUTO_DIRECT_MAX_BODIES = 1000
#: Periodic scenes assemble the dense matrix by 3N Ewald applies, so direct pays off later.
AUTO_DIRECT_MAX_PERIODIC = 64
#: Relative tolerance of the first solve of an adaptive multipole operator (it only has to
#: show which pairs to add; the corrections that follow reach the requested tolerance).
ADAPTIVE_FIRST_RTOL = 1e-3


def solve(
    scene,
    method: str = "auto",
    *,
    rtol: float = 1e-8,
    atol: float = 0.0,
    maxiter: int = 1000,
    x0=None,
    callback=None,
    relaxation: float = 1.0,
    backend: str = "auto",
    operator=None,
    backend_options=None,
    model_check: bool = True,
) -> Solution:
    """Find the self-consistent moments of every body of ``scene``.

    Parameters
    ----------
    scene : Scene
        The system; all its applied field vectors are solved together.
    method : {"auto", "fixed_point", "cocg", "gmres", "direct"}
        See the module docstring.
    rtol, atol : float
        Stop when ``||b_k - M p_k|| <= max(rtol ||b_k||, atol)`` for every
        right-hand side k (``M = I - alpha T``, ``b = alpha E0``).
    maxiter : int
        Iteration limit (per right-hand side for GMRES).
    x0 : (N, 3, K) array_like, optional
        Starting moments; default the isolated response ``alpha E0``.
    callback : callable, optional
        ``callback(iteration, residual)`` after every iteration, ``residual`` the
        ``(K,)`` relative residuals (GMRES: ``(1,)`` for the current right-hand side).
    relaxation : float
        Relaxation ``w`` of the fixed-point iteration, ``0 < w <= 2``.
    backend : str
        Interaction operator backend (see :func:`dipolearray.operators.make_operator`).
    operator : InteractionOperator, optional
        A prebuilt operator for this scene (overrides ``backend``).
    backend_options : dict, optional
        Settings passed to the backend (for ``"multipole"``: ``order``, ``accuracy``,
        ``max_order``; see :class:`dipolearray.operators.MultipoleOperator`).
    model_check : bool
        Point-dipole solves of spheres: estimate the model error of the closest pairs
        (``extra["near_contact"]``, a :class:`NearContactWarning` when large). Off only
        for repeated solves of one geometry.

    Returns
    -------
    Solution
        Not converging is a result (``converged=False`` with a ``reason``); call
        :meth:`Solution.check` to raise instead.

    Examples
    --------
    >>> from dipolearray import Material, Population, Scene, Sphere
    >>> s = Scene([[0, 0, 0], [0, 0, 2.2]], Population(Sphere(1.0), Material(10.0)))
    >>> sol = solve(s, rtol=1e-10)
    >>> sol.converged, sol.method
    (True, 'direct')
    """
    check_choice(method, "method", METHODS)
    rtol = as_positive(rtol, "rtol", allow_zero=True)
    atol = as_positive(atol, "atol", allow_zero=True)
    if rtol == 0 and atol == 0:
        raise InputError("rtol: rtol and atol cannot both be zero", "rtol")
    maxiter = as_int(maxiter, "maxiter", minimum=1)
    relaxation = as_positive(relaxation, "relaxation")
    if relaxation > 2.0:
        raise InputError(f"relaxation: expected 0 < w <= 2, got {relaxation}", "relaxation")
    if callback is not None and not callable(callback):
        raise InputError("callback: expected a callable or None", "callback")

    t0 = time.perf_counter()
    system = MomentSystem(
        scene, operator if operator is not None else _make_op(scene, backend, rtol, backend_options)
    )
    n, k, m = scene.n_bodies, system.n_rhs, system.n_per_body
    if x0 is None:
        start = system.b.copy()
    else:
        start = as_float_array(x0, "x0", allow_complex=True)
        if start.shape == (n, 3) and k == 1:
            start = start[:, :, None]
        if start.ndim == 3 and start.shape[0] == n and start.shape[2] == k and start.shape[1] in (3, m):
            if start.shape[1] != m:
                full = np.zeros((n, m, k), dtype=start.dtype)
                full[:, :3] = start
                start = full
        else:
            raise InputError(f"x0: expected shape ({n}, 3, {k}) or ({n}, {m}, {k}), got {start.shape}", "x0")
        start = start.astype(system.dtype) if system.dtype.kind == "c" else start.real

    chosen, why = _choose(method, scene, m)
    extra = {}
    if getattr(system.op, "reason", None):
        extra["backend_reason"] = system.op.reason  # why make_operator chose this backend
    adaptive = hasattr(system.op, "extended") and getattr(system.op, "adaptive", False)
    # With pairs still to add from the solved multipoles, the first solve only has to show
    # which: a loose tolerance serves, the corrections below reach the requested one.
    first_rtol = max(rtol, ADAPTIVE_FIRST_RTOL) if adaptive and chosen != "direct" else rtol
    p, history, iterations, reason, spectral, chosen, why = _run(
        system, chosen, why, method, start, first_rtol, atol, maxiter, callback, relaxation, extra
    )
    used_ops = [system.op]
    if adaptive:
        # Pairs the two-sphere model missed: couple them and solve again from p.
        added = 0
        coarse = system
        corrections = 0
        field_scale = float(np.max(np.linalg.norm(np.asarray(scene.field, dtype=float), axis=1)))
        for _round in range(3):
            op2 = system.op.extended(np.asarray(p), field_scale=field_scale)
            if op2 is system.op:
                break
            added += op2.n_added
            used_ops.append(op2)
            system = MomentSystem(scene, op2)
            h2 = None
            done = False
            if chosen in ("cocg", "cocg+gmres") and coarse.n_per_body == system.n_per_body:
                p, h2, it2, reason, outer = defect_correction(
                    system, coarse, p, rtol=rtol, atol=atol, maxiter=maxiter, callback=callback
                )
                iterations += it2
                corrections += outer
                done = reason == "converged"
            if not done:
                p, h3, it2, reason, spectral, chosen, why = _run(
                    system, chosen, why, "requested", p, rtol, atol, maxiter, callback, relaxation, extra
                )
                h2 = h3 if h2 is None else np.concatenate([h2, h3])
                iterations += it2
            history = np.concatenate([history, h2]) if history is not None and h2 is not None else h2
        if added:
            why += f"; {added} pairs added from the solved multipoles and solved again"
            if corrections:
                why += f" ({corrections} corrections from the first operator)"
            extra["pairs_added"] = added
        if system is coarse and first_rtol > rtol:
            p, h2, it2, reason, spectral, chosen, why = _run(
                system, chosen, why, "requested", p, rtol, atol, maxiter, callback, relaxation, extra
            )
            history = np.concatenate([history, h2]) if history is not None and h2 is not None else h2
            iterations += it2

    true_norm = system.residual_norms(p)
    residual = system.relative(true_norm)
    ok = bool(np.all(true_norm <= system.tolerance(rtol, atol)))
    if chosen == "direct":
        reason = "converged" if ok else (reason if reason.startswith("singular") else "inaccurate")
        initial = system.relative(column_norms(system.residual(start)))
        history = np.stack([initial, residual])
    elif ok:
        reason = "converged"
    elif reason == "converged":
        reason = "inaccurate"
    p = np.asarray(p, dtype=system.dtype)
    if m != 3 or hasattr(system.op, "orders"):
        extra["orders"] = np.asarray(system.op.orders)
        extra["operator"] = system.op.describe()
        extra["multipole_operator"] = system.op
        pair = closest_pair(scene)
        if pair is not None:
            extra["closest_gap_ratio"] = pair["gap_ratio"]
        if getattr(system.op, "check_error", False) and ok:
            t_est = time.perf_counter()
            extra["model_error"] = multipole_model_error(
                scene, system.op, np.asarray(p), rtol=rtol, maxiter=maxiter
            )
            extra["model_error"]["wall_s"] = time.perf_counter() - t_est
    elif model_check:
        near_contact_check(scene, extra)
    return Solution(
        scene=scene,
        moments=p[:, :3] if m != 3 else p,
        multipoles=p if hasattr(system.op, "orders") else None,
        converged=ok,
        reason=reason,
        method=chosen,
        method_reason=why,
        backend=system.op.backend,
        iterations=int(iterations),
        n_applies=int(sum(o.n_applies for o in used_ops)),
        residual_history=np.asarray(history, dtype=float),
        residual=residual,
        spectral_radius=spectral,
        wall_s=time.perf_counter() - t0,
        rtol=rtol,
        atol=atol,
        extra=extra,
    )


def _run(system, chosen, why, method, start, rtol, atol, maxiter, callback, relaxation, extra):
    spectral = None
    if chosen == "direct":
        p, reason = direct(system)
        iterations = 0
        history = None
    elif chosen == "fixed_point":
        p, history, iterations, reason, spectral = fixed_point(
            system,
            rtol=rtol,
            atol=atol,
            maxiter=maxiter,
            x0=start,
            callback=callback,
            relaxation=relaxation,
        )
    elif chosen in ("cocg", "cocg+gmres"):
        p, history, iterations, reason = cocg(
            system, rtol=rtol, atol=atol, maxiter=maxiter, x0=start, callback=callback
        )
        if getattr(system, "apply_accuracies", None):
            # Inexact Krylov: the accuracy of each iteration's apply (fast multipole).
            extra["apply_accuracy"] = [float(a) for a in system.apply_accuracies]
        if reason != "converged" and method == "auto":
            extra["cocg_reason"] = reason
            why += f"; COCG stopped ({reason}) after {iterations} iterations, continued with GMRES"
            p2, h2, it2, reason = gmres(
                system, rtol=rtol, atol=atol, maxiter=maxiter, x0=p, callback=callback
            )
            history = np.concatenate([history, h2])
            iterations += it2
            p = p2
            chosen = "cocg+gmres"
    else:
        p, history, iterations, reason = gmres(
            system, rtol=rtol, atol=atol, maxiter=maxiter, x0=start, callback=callback
        )
    return p, history, iterations, reason, spectral, chosen, why


def _make_op(scene, backend, rtol, options=None):
    from ..operators import make_operator

    if options:
        return make_operator(scene, backend, **dict(options))
    if backend == "multipole":
        return make_operator(scene, backend)
    if backend in ("auto", "fmm") and scene.boundary == "open":
        # A multipole error a tenth of the tolerance keeps the measured residual honest.
        return make_operator(scene, backend, accuracy=min(1e-3, max(1e-14, 0.1 * rtol)))
    if backend == "mesh":
        return make_operator(scene, backend, accuracy=min(1e-3, max(1e-12, 0.1 * rtol)))
    if backend == "auto" and scene.boundary == "periodic":
        from ..operators._pme import pme_crossover

        # Large boxes: smooth PME at a tenth of the tolerance; below the crossover plain
        # Ewald at its own (tighter) default accuracy.
        acc = min(1e-3, 0.1 * rtol)
        if scene.n_bodies >= pme_crossover(acc):
            return make_operator(scene, backend, accuracy=acc)
    return make_operator(scene, backend)


def _choose(method, scene, n_per_body=3):
    if method != "auto":
        return method, "requested"
    n = scene.n_bodies
    if n_per_body != 3:
        size = n * n_per_body
        if size <= 3 * AUTO_DIRECT_MAX_PERIODIC:
            return "direct", f"auto: {size} multipole unknowns <= {3 * AUTO_DIRECT_MAX_PERIODIC}, dense LU"
        return "cocg", f"auto: {size} multipole unknowns, matrix-free COCG on the symmetrised system"
    if scene.boundary == "periodic":
        if n <= AUTO_DIRECT_MAX_PERIODIC:
            return (
                "direct",
                f"auto: periodic N = {n} <= {AUTO_DIRECT_MAX_PERIODIC}, dense LU of the Ewald matrix",
            )
        return (
            "cocg",
            f"auto: periodic N = {n} > {AUTO_DIRECT_MAX_PERIODIC}, matrix-free COCG with Ewald applies",
        )
    if n <= AUTO_DIRECT_MAX_BODIES:
        return "direct", f"auto: N = {n} <= {AUTO_DIRECT_MAX_BODIES}, dense LU is exact and fast"
    return "cocg", (f"auto: N = {n} > {AUTO_DIRECT_MAX_BODIES}, matrix-free COCG on the symmetrised system")
