"""Solvers: self-consistent moments of all bodies.

The moment equations ``p_i = alpha_i (E0 + sum_{j != i} T_ij p_j)`` are written as
``M p = b`` with ``M = I - alpha T`` and ``b = alpha E0`` (``alpha`` the block
diagonal of the isolated polarizabilities), and solved for every applied field
vector of the scene at once (several right-hand sides).

Convergence criterion (the same for every method)
-------------------------------------------------
For each right-hand side k, with ``r_k = b_k - M p_k`` over all bodies and components,
the solve has converged when ``||r_k||_2 <= max(rtol * ||b_k||_2, atol)``. The
reported ``Solution.residual`` is this true residual recomputed from the final
moments (one extra operator apply), relative to ``||b_k||``.

Methods
-------
``"fixed_point"``
    Order-of-scattering iteration from the isolated response ``p0 = alpha E0``:
    ``p <- p + w (b + alpha T p - p)`` with relaxation ``w`` (1 = plain successive
    re-polarization). Converges iff the spectral radius of ``(1 - w) I + w alpha T``
    is below one; the ratio of successive residuals estimates it and a growing
    residual stops the iteration with reason ``"diverged"``.
``"cocg"``
    Conjugate orthogonal conjugate gradients (van der Vorst and Melissen 1990) on
    the symmetrised system ``(I - alpha^1/2 T alpha^1/2) q = alpha^1/2 E0``,
    ``p = alpha^1/2 q``: short recurrences for the complex-symmetric operator, all
    right-hand sides advanced with one batched apply per iteration. The per-body
    scaling by ``alpha^1/2`` is the block-Jacobi preconditioner.
``"gmres"``
    Restarted GMRES (SciPy) on ``M p = b``, one right-hand side at a time; robust
    fallback when COCG breaks down.
``"direct"``
    Dense LU of ``M`` (SciPy/LAPACK), factored once, all right-hand sides solved.
``"auto"``
    Direct for small N, COCG otherwise with GMRES as fallback; the choice and why are
    recorded in ``Solution.method_reason``.

Public names
------------
solve
    Solve a scene; returns a :class:`Solution`.
Solution
    Frozen result record (moments, convergence, residual history, timing).
estimate_spectral_radius
    Power-iteration estimate of the spectral radius of ``alpha T``.
near_contact_estimate, closest_pair, NearContactWarning
    Point-dipole model error from every sphere's close neighbours (a two-sphere
    multipole solve at the same gap); a dipole-level solve records it in
    ``Solution.extra["near_contact"]`` and warns when the closest pair is off by 5 % or
    more.
multipole_model_error
    A posteriori model error of a multipole solve (re-solve with the closest pairs at
    higher order); recorded in ``Solution.extra["model_error"]``.

Multipole unknowns
------------------
With ``backend="multipole"`` (or a :class:`dipolearray.operators.MultipoleOperator`)
each body carries ``m = L (L + 2)`` unknowns (its induced-potential coefficients), the
response ``alpha`` is the operator's block-diagonal response, the applied field drives
the dipole degree only, and every method above runs unchanged on the larger system;
``auto`` goes direct up to 192 unknowns. ``Solution.moments`` is the dipole part,
``Solution.multipoles`` the full coefficients.

An adaptive multipole operator (the default) adds the pairs its solved multipoles show
are needed. Iteratively, the first solve then stops at ``ADAPTIVE_FIRST_RTOL`` (1e-3,
enough to show which pairs), and the extended system is solved by defect correction:
its true residual each step, the correction from the first (cheaper) operator by COCG,
plain COCG on the extended system if a step shrinks the residual less than twice. The
stopping criterion is the one above, on the extended system.

Methods
-------
    Accepted method names.
"""

from ._api import METHODS, solve
from ._common import estimate_spectral_radius
from ._model_error import NearContactWarning, closest_pair, multipole_model_error, near_contact_estimate
from ._solution import Solution

__all__ = [
    "solve",
    "Solution",
    "estimate_spectral_radius",
    "METHODS",
    "NearContactWarning",
    "closest_pair",
    "near_contact_estimate",
    "multipole_model_error",
]
