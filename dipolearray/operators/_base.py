from __future__ import annotations

import numpy as np

from .._validate import check_choice
from ..errors import InputError

_BACKENDS: dict[str, type] = {}


def register_backend(name: str):
    """Class decorator adding an :class:`InteractionOperator` subclass to the registry."""

    def deco(cls):
        cls.backend = name
        _BACKENDS[name] = cls
        return cls

    return deco


def crossover_lookup(table, accuracy, loosest=1e-2) -> int:
    """Body count from a crossover table ``((accuracy >= a, N), ...)``; none at ``loosest`` or looser."""
    if accuracy >= loosest:
        return 10**12
    for acc, n in table:
        if accuracy >= acc:
            return n
    return table[-1][1]


def available_backends() -> tuple[str, ...]:
    """Names accepted by :func:`make_operator` (besides ``"auto"``)."""
    return tuple(sorted(_BACKENDS))


def make_operator(scene, backend: str = "auto", **options) -> InteractionOperator:
    """Build the interaction operator of ``scene``.

    Parameters
    ----------
    scene : Scene
    backend : str
        ``"auto"`` or one of :func:`available_backends`.
    **options
        Backend settings (``accuracy`` for ``"ewald"``).

    Returns
    -------
    InteractionOperator
        Its ``backend`` and ``reason`` attributes record what was chosen and why.

    Examples
    --------
    >>> from dipolearray import Material, Population, Scene, Sphere
    >>> s = Scene([[0, 0, 0], [0, 0, 3.0]], Population(Sphere(1.0), Material(5.0)))
    >>> make_operator(s).backend
    'direct'
    """
    check_choice(backend, "backend", ("auto",) + available_backends())
    if backend == "auto":
        if scene.boundary == "periodic":
            from ._pme import pme_crossover

            acc = options.get("accuracy")
            if acc is not None and scene.n_bodies >= pme_crossover(float(acc)):
                n_cross = pme_crossover(float(acc))
                op = _BACKENDS["pme"](scene, accuracy=float(acc))
                op.reason = (
                    f"auto: periodic boundary, N = {scene.n_bodies} >= {n_cross} (measured smooth-PME "
                    f"crossover at accuracy {float(acc):g}); " + op.describe()
                )
                return op
            op = _BACKENDS["ewald"](scene, **options)
            op.reason = "auto: periodic boundary; " + op.describe()
            return op
        from ._fmm import fmm_available, fmm_crossover
        from ._mesh import mesh_crossover

        acc = float(options.get("accuracy", 1e-10))
        n_mesh = mesh_crossover(acc)
        refused = ""
        if scene.n_bodies >= n_mesh:
            try:
                op = _BACKENDS["mesh"](scene, accuracy=acc)
            except InputError as err:  # a thinly filled bounding box: the mesh would not fit
                refused = f" (particle mesh refused: {err})"
            else:
                op.reason = (
                    f"auto: open boundary, N = {scene.n_bodies} >= {n_mesh} (measured particle-mesh "
                    f"crossover at accuracy {acc:g}); " + op.describe()
                )
                return op
        n_cross = fmm_crossover(acc)
        if scene.n_bodies >= n_cross and fmm_available():
            op = _BACKENDS["fmm"](scene, accuracy=acc)
            op.reason = (
                f"auto: open boundary, N = {scene.n_bodies} >= {n_cross} (measured crossover at "
                f"accuracy {acc:g}){refused}; " + op.describe()
            )
            return op
        op = _BACKENDS["direct"](scene)
        if refused:
            op.reason = f"auto: open boundary, N = {scene.n_bodies}: direct O(N^2) kernel, exact{refused}"
        else:
            op.reason = (
                f"auto: open boundary, N = {scene.n_bodies} below the particle-mesh ({n_mesh}) and "
                f"fast-multipole ({n_cross}) crossovers at accuracy {acc:g}: direct O(N^2) kernel, exact"
            )
        return op
    if backend == "multipole" and scene.boundary == "periodic":
        from ._lattice import LatticeMultipoleOperator

        op = LatticeMultipoleOperator(scene, **options)
        op.reason = "requested (periodic: lattice sums)"
        return op
    if backend == "direct" and scene.boundary != "open":
        raise InputError("backend: 'direct' sums an open boundary; periodic scenes use 'ewald'", "backend")
    op = _BACKENDS[backend](scene, **options)
    op.reason = "requested"
    return op


class InteractionOperator:
    """Apply the coupling between bodies to per-body unknowns.

    Subclasses implement :meth:`_apply` on real ``(N, n_per_body, K)`` float64
    C-contiguous arrays; :meth:`apply` validates, reshapes and splits complex input.

    Attributes
    ----------
    scene : Scene
    n_bodies : int
    n_per_body : int
        Unknowns per body (3 for point dipoles).
    backend : str
        Registry name.
    reason : str
        Why it was chosen (set by :func:`make_operator`).
    n_applies : int
        Number of single right-hand-side applies performed so far.
    """

    backend = "abstract"
    n_per_body = 3

    def __init__(self, scene):
        self.scene = scene
        self.n_bodies = scene.n_bodies
        self.reason = ""
        self.n_applies = 0

    @property
    def shape(self) -> tuple[int, int]:
        """Shape of the operator as a matrix, ``(N*n_per_body, N*n_per_body)``."""
        n = self.n_bodies * self.n_per_body
        return (n, n)

    def apply(self, x):
        """Field produced at each body by the unknowns of all other bodies.

        Parameters
        ----------
        x : ndarray of float or complex
            ``(N, n_per_body, K)``, ``(N, n_per_body)``, ``(N*n_per_body,)`` or
            ``(N*n_per_body, K)``.

        Returns
        -------
        ndarray
            Same shape and dtype kind as ``x``.
        """
        x = np.asarray(x)
        n, m = self.n_bodies, self.n_per_body
        shape = x.shape
        if shape == (n, m, *shape[2:]) and x.ndim == 3:
            x3 = x
        elif shape == (n, m):
            x3 = x[:, :, None]
        elif shape == (n * m,):
            x3 = x.reshape(n, m, 1)
        elif x.ndim == 2 and shape[0] == n * m:
            x3 = x.reshape(n, m, shape[1])
        else:
            raise InputError(
                f"moments: expected shape ({n}, {m}, K), ({n}, {m}), ({n * m},) or ({n * m}, K), got {shape}",
                "moments",
            )
        if x.dtype.kind not in "fc":
            x3 = x3.astype(np.float64)
        k = x3.shape[2]
        if np.iscomplexobj(x3):
            both = np.concatenate([x3.real, x3.imag], axis=2)
            y = self._apply(np.ascontiguousarray(both, dtype=np.float64))
            y = y[:, :, :k] + 1j * y[:, :, k:]
            self.n_applies += 2 * k
        else:
            y = self._apply(np.ascontiguousarray(x3, dtype=np.float64))
            self.n_applies += k
        return y.reshape(shape)

    #: True for backends whose apply accuracy a Krylov solver may loosen as it converges
    #: (they implement ``set_apply_accuracy(accuracy | None)``).
    relaxable = False

    def _apply(self, x):  # pragma: no cover - abstract
        raise NotImplementedError

    def dense(self) -> np.ndarray:
        """The operator as a dense ``(N*n_per_body, N*n_per_body)`` real matrix."""
        n = self.shape[0]
        return self._apply(np.eye(n).reshape(self.n_bodies, self.n_per_body, n)).reshape(n, n)

    def as_linear_operator(self, dtype=None):
        """Wrap as a :class:`scipy.sparse.linalg.LinearOperator` (dtype given, no probe)."""
        from scipy.sparse.linalg import LinearOperator

        dt = np.dtype(dtype if dtype is not None else self.scene.dtype)
        return LinearOperator(self.shape, matvec=self.apply, matmat=self.apply, dtype=dt)

    def __repr__(self) -> str:
        return f"{type(self).__name__}(n_bodies={self.n_bodies}, backend={self.backend!r})"
