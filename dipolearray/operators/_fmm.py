from __future__ import annotations

import math

import numpy as np

from .._validate import as_positive
from ..errors import InputError
from ._base import InteractionOperator, register_backend

#: Safety factor between the accuracy asked of this backend and fmm3dpy's ``eps``: the
#: measured relative error reached 1.2 eps at N = 8e4 (bench/bench_scaling.py).
EPS_MARGIN = 3.0

#: Bodies from which one fast-multipole apply (three right-hand sides) beats the direct
#: kernel, by requested accuracy (``accuracy >= first entry`` -> second). Measured with
#: bench/bench_scaling.py on the 2-core reference machine: fmm3dpy eps 1e-3 wins from
#: 2e4, eps 1e-6 between 4e4 (0.88x) and 8e4 (1.22x), eps 1e-9 not yet at 8e4 (0.88x,
#: doubling per doubling of N); the last finite entry is extrapolated from that trend.
CROSSOVER = ((3e-3, 25000), (3e-6, 60000), (3e-9, 120000), (3e-12, 250000), (0.0, 10**12))


def fmm_crossover(accuracy) -> int:
    """Body count from which the fast-multipole backend is chosen for ``accuracy``."""
    for acc, n in CROSSOVER:
        if accuracy >= acc:
            return n
    return CROSSOVER[-1][1]


def fmm_available() -> bool:
    """True when the fmm3dpy library can be imported."""
    try:
        import fmm3dpy  # noqa: F401
    except ImportError:
        return False
    return True


@register_backend("fmm")
class FMMOperator(InteractionOperator):
    """Point-dipole coupling of an open scene by the Laplace fast multipole method (fmm3dpy).

    Parameters
    ----------
    scene : Scene
        Open boundary.
    accuracy : float
        Relative accuracy of the applied field; fmm3dpy is asked for a third of it
        (``EPS_MARGIN``); the solvers pass a tenth of their tolerance.

    Notes
    -----
    fmm3dpy evaluates ``u(x) = sum_j v_j . grad 1/(4 pi |x - x_j|)`` and its gradient,
    dropping the self term (the gradient inside is taken at the source point); with
    ``v_j = p_j`` the dipole potential is ``phi = 4 pi u`` and the field of the reduced
    units ``E = sum_j T(x - x_j) p_j = -4 pi grad u`` (checked against the direct
    kernel in the tests). Cost O(N) per apply, at a constant that falls as the
    requested accuracy is loosened.

    References
    ----------
    Greengard, L. and Rokhlin, V. (1987). A fast algorithm for particle simulations.
    J. Comput. Phys. 73, 325. fmm3dpy: the Flatiron Institute FMM3D library's Python
    interface (general-purpose Laplace/Helmholtz FMM).
    """

    def __init__(self, scene, accuracy=1e-10):
        super().__init__(scene)
        if scene.boundary != "open":
            raise InputError("backend: 'fmm' sums an open boundary; periodic scenes use 'ewald'", "backend")
        if not fmm_available():
            raise InputError("backend: 'fmm' needs the fmm3dpy package (pip install fmm3dpy)", "backend")
        acc = as_positive(accuracy, "accuracy")
        if not 1e-15 <= acc < 1e-1:
            raise InputError(f"accuracy: {acc} is outside [1e-15, 0.1)", "accuracy")
        self.accuracy = acc
        self.apply_accuracy = acc
        self._sources = np.asfortranarray(np.asarray(scene.positions, dtype=np.float64).T)

    def _run(self, x, targets=None):
        import fmm3dpy

        k = x.shape[2]
        dip = np.ascontiguousarray(x.transpose(2, 1, 0))  # (K, 3, N)
        if k == 1:
            dip = dip[0]
        kw = dict(eps=self.apply_accuracy / EPS_MARGIN, sources=self._sources, dipvec=dip, nd=k)
        if targets is None:
            out = fmm3dpy.lfmm3d(pg=2, **kw)
            grad = out.grad
        else:
            out = fmm3dpy.lfmm3d(targets=np.asfortranarray(targets.T), pgt=2, **kw)
            grad = out.gradtarg
        grad = np.asarray(grad).reshape(k, 3, -1)
        return np.ascontiguousarray((-4.0 * math.pi * grad).transpose(2, 1, 0))

    #: The accuracy of an apply may be loosened while a Krylov solve converges (see
    #: :meth:`set_apply_accuracy`).
    relaxable = True

    def set_apply_accuracy(self, accuracy=None):
        """Accuracy of the following applies: ``None`` restores the operator's own ``accuracy``.

        Inexact Krylov methods may loosen it as the residual falls (Simoncini & Szyld
        2003; Bouras & Fraysse 2005); it is never set tighter than ``accuracy`` nor
        looser than 1e-2.
        """
        if accuracy is None:
            self.apply_accuracy = self.accuracy
        else:
            self.apply_accuracy = min(max(float(accuracy), self.accuracy), 1e-2)

    def _apply(self, x):
        return self._run(x)

    def field_at(self, points, moments):
        """Field of the bodies' dipoles at arbitrary points (no applied field added), by FMM."""
        pts = np.ascontiguousarray(points, dtype=np.float64)
        p = np.asarray(moments)
        if np.iscomplexobj(p):
            return self._run(np.ascontiguousarray(p.real), pts) + 1j * self._run(
                np.ascontiguousarray(p.imag), pts
            )
        return self._run(np.ascontiguousarray(p, dtype=np.float64), pts)

    def describe(self) -> str:
        """The backend in one line."""
        return f"fast multipole (fmm3dpy), relative accuracy {self.accuracy:g}"
