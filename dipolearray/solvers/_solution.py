from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import ConvergenceError


@dataclass(frozen=True, eq=False)
class Solution:
    """Result of a solve: the moments and the record of how they were found.

    Attributes
    ----------
    scene : Scene
        The scene that was solved.
    moments : (N, 3, K) ndarray of float or complex, reduced moment
        Self-consistent dipole moment of every body for every applied field.
    converged : bool
        True when every right-hand side met the criterion.
    reason : str
        Why the iteration stopped ("converged", "maxiter", "diverged", ...).
    method : str
        Method that produced the moments.
    method_reason : str
        Why it was used (for ``"auto"``: what was chosen and why).
    backend : str
        Interaction operator backend.
    iterations : int
        Iterations performed (0 for direct).
    n_applies : int
        Single right-hand-side operator applies performed.
    residual_history : (n_records, K) ndarray of float
        Relative residual ``||r_k|| / ||b_k||`` at each iteration (row 0: start; Krylov
        methods add a row with the recomputed true residual at the end of each cycle).
    residual : (K,) ndarray of float
        True relative residual of the returned moments.
    spectral_radius : float or None
        Estimate of the spectral radius of the fixed-point iteration matrix.
    wall_s : float
        Wall time of the solve in seconds.
    rtol, atol : float
        The tolerances asked for.
    extra : dict
        Method-specific records (for multipole solves: ``orders``, ``operator``; for
        dipole solves of spheres near contact: ``near_contact``, see
        :func:`dipolearray.solvers.model_error`).
    multipoles : (N, M, K) ndarray or None
        Multipole solves only: every body's induced-potential coefficients (real Racah
        solid harmonics, the first three are ``moments``); None for point dipoles.
    """

    scene: object
    moments: np.ndarray
    converged: bool
    reason: str
    method: str
    method_reason: str
    backend: str
    iterations: int
    n_applies: int
    residual_history: np.ndarray
    residual: np.ndarray
    spectral_radius: float | None
    wall_s: float
    rtol: float
    atol: float
    extra: dict = field(default_factory=dict)
    multipoles: np.ndarray | None = None

    def __post_init__(self):
        if self.multipoles is not None:
            mp = np.ascontiguousarray(self.multipoles)
            mp.setflags(write=False)
            object.__setattr__(self, "multipoles", mp)
        for name in ("moments", "residual_history", "residual"):
            arr = np.ascontiguousarray(getattr(self, name))
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)

    __iter__ = None  # a record, not a tuple

    @property
    def field(self) -> np.ndarray:
        """(K, 3) applied field vectors (from the scene)."""
        return self.scene.field

    def check(self) -> Solution:
        """Return ``self`` if converged, else raise :class:`ConvergenceError`."""
        if not self.converged:
            worst = float(np.max(self.residual))
            raise ConvergenceError(
                f"solve did not converge: {self.reason} after {self.iterations} iterations "
                f"of {self.method} (worst relative residual {worst:.3g}, rtol {self.rtol:g})",
                solution=self,
            )
        return self

    def summary(self) -> str:
        """One line describing the solve."""
        state = "converged" if self.converged else f"NOT converged ({self.reason})"
        rho = "" if self.spectral_radius is None else f", spectral radius ~{self.spectral_radius:.3g}"
        return (
            f"{self.method} (backend {self.backend}): {state} in {self.iterations} iterations, "
            f"{self.n_applies} applies, max relative residual {float(np.max(self.residual)):.2e}"
            f"{rho}, {self.wall_s:.3g} s"
        )

    def __repr__(self) -> str:
        return f"Solution({self.summary()})"
