from __future__ import annotations

import math

import numpy as np

from .._validate import as_int, as_positive
from ..errors import InputError
from ._base import crossover_lookup, register_backend
from ._ewald import EwaldOperator

#: Bodies from which one smooth-PME apply (three right-hand sides) beats plain Ewald, by
#: requested accuracy (``accuracy >= first entry`` -> second); PME needs 1e-10 or looser.
#: Measured with ``bench/bench_scaling.py --pme-crossover`` on the 2-core reference machine
#: (periodic random spheres at 0.2): PME is 1.4x faster at N = 1000 at 1e-4 (0.8x at 500),
#: 1.5-1.8x at 500-1000 at 1e-7, 1.1-1.4x at 500-1000 at 1e-10, and 3.3-6.4x at 8000.
PME_CROSSOVER = ((1e-5, 1000), (1e-8, 1000), (1e-10, 1000), (0.0, 10**12))


def pme_crossover(accuracy) -> int:
    """Body count from which ``backend="auto"`` picks smooth PME over plain Ewald for ``accuracy``."""
    return crossover_lookup(PME_CROSSOVER, accuracy)


def _bspline_moduli(K, n):
    """``|b(m)|^2`` of the order-``n`` B-spline interpolation on ``K`` points (Essmann et al. 1995)."""
    from scipy.interpolate import BSpline

    # Cardinal B-spline M_n on [0, n] sampled at the integers 1 .. n-1.
    knots = np.arange(n + 1, dtype=float)
    M = BSpline.basis_element(knots, extrapolate=False)(np.arange(1, n, dtype=float))
    m = np.arange(K)
    denom = np.zeros(K, dtype=complex)
    for k, v in enumerate(M):
        denom += v * np.exp(2j * math.pi * m * k / K)
    mod = 1.0 / np.abs(denom) ** 2
    # Odd orders vanish at the Nyquist mode; borrow the neighbours (common practice, no source).
    bad = ~np.isfinite(mod) | (np.abs(denom) < 1e-12)
    if np.any(bad):
        mod[bad] = 0.5 * (np.roll(mod, 1)[bad] + np.roll(mod, -1)[bad])
    return mod


def _fold(Q, K, pad):
    """Add the ``pad`` leading planes of the padded mesh onto the periodic mesh (R, K0, K1, K2).

    Padded index ``gp`` is mesh point ``(gp - pad) mod K``: planes ``pad ..`` are the mesh,
    planes ``0 .. pad-1`` wrap onto its last ``pad`` planes.
    """
    for ax in range(3):
        k = K[ax]
        lead = [slice(None)] * 4
        lead[ax + 1] = slice(0, pad)
        body = [slice(None)] * 4
        body[ax + 1] = slice(pad, pad + k)
        tail = [slice(None)] * 4
        tail[ax + 1] = slice(pad + k - pad, pad + k)
        Q[tuple(tail)] += Q[tuple(lead)]
        Q = Q[tuple(body)]
    return np.ascontiguousarray(Q)


@register_backend("pme")
class PMEOperator(EwaldOperator):
    """Periodic point-dipole coupling by smooth particle-mesh Ewald (B-splines, scipy.fft).

    The real-space sum and the self term are those of :class:`EwaldOperator`; the
    reciprocal sum is evaluated on a periodic mesh: each dipole's density is spread by
    the gradient of order-``order`` cardinal B-splines, convolved with the Ewald influence
    function by FFT, and the field is gathered back with the same splines. Cost
    O(N + K^3 log K) instead of O(N n_k).

    Parameters
    ----------
    scene : Scene
        Periodic.
    accuracy : float
        Relative accuracy aimed at (sets alpha's cutoff margin and the mesh).
    order : int
        B-spline order (even, 4 to 12); the default 12 is what the mesh rule was
        measured for (lower orders need a finer mesh for the same accuracy).
    neighbours : float
        Mean number of bodies inside the real-space cutoff (sets ``r_c``, hence ``alpha``).

    References
    ----------
    Darden, T., York, D. and Pedersen, L. (1993). Particle mesh Ewald: an N log(N) method
    for Ewald sums in large systems. J. Chem. Phys. 98, 10089.
    Essmann, U. et al. (1995). A smooth particle mesh Ewald method. J. Chem. Phys. 103, 8577.
    """

    def __init__(self, scene, accuracy=1e-8, order=12, neighbours=250.0):
        from ._base import InteractionOperator

        InteractionOperator.__init__(self, scene)
        if scene.boundary != "periodic":
            raise InputError("backend: 'pme' needs a periodic scene (boundary = 'periodic', box)", "backend")
        acc = as_positive(accuracy, "accuracy")
        if not 1e-10 <= acc < 1e-2:
            raise InputError(f"accuracy: {acc} is outside [1e-10, 1e-2) for the mesh", "accuracy")
        n_ord = as_int(order, "order", minimum=4)
        if n_ord % 2 or n_ord > 12:
            raise InputError(f"order: expected an even B-spline order 4 .. 12, got {order!r}", "order")
        self.accuracy, self.order = acc, n_ord
        self.box = np.ascontiguousarray(scene.box, dtype=np.float64)
        L = self.box
        pos = np.mod(np.asarray(scene.positions, dtype=np.float64), L)
        pos[pos >= L] = 0.0
        self._pos = np.ascontiguousarray(pos)
        n = self.n_bodies
        s = math.sqrt(-math.log(acc) + math.log(30.0))
        density = n / float(np.prod(L))
        rc = (3.0 * float(neighbours) / (4.0 * math.pi * density)) ** (1.0 / 3.0)
        self.r_cut = min(rc, 0.5 * float(L.min()) * (1 - 1e-9))
        self.alpha = s / self.r_cut
        self.k_cut = 2.0 * self.alpha * s
        self._setup_real_space(scene)
        from scipy.fft import next_fast_len

        # Mesh: resolve the reciprocal cutoff with room for the spline's aliasing; measured
        # against Ewald at 1e-13 (tests/operators/test_pme.py): order 12 meets 1e-4 .. 1e-8
        # with this factor, 1e-10 needs the finer mesh.
        factor = (1.0 + 0.25 * s / math.sqrt(n_ord)) * (1.4 if acc < 1e-9 else 1.0)
        self.mesh = np.array(
            [next_fast_len(max(2 * n_ord, int(math.ceil(factor * self.k_cut * La / math.pi)))) for La in L],
            dtype=np.int64,
        )
        K = self.mesh
        mods = [_bspline_moduli(int(k), n_ord) for k in K]
        m = [np.fft.fftfreq(int(k), d=1.0 / int(k)) for k in K]
        kx, ky, kz = (2 * math.pi * mi / La for mi, La in zip(m, L, strict=True))
        k2 = kx[:, None, None] ** 2 + ky[None, :, None] ** 2 + kz[None, None, :] ** 2
        with np.errstate(divide="ignore", invalid="ignore"):
            G = 4.0 * math.pi / float(np.prod(L)) * np.exp(-k2 / (4 * self.alpha**2)) / k2
        G[0, 0, 0] = 0.0  # conducting boundary: no k = 0 term
        G *= mods[0][:, None, None] * mods[1][None, :, None] * mods[2][None, None, :]
        self._influence = np.ascontiguousarray(G[:, :, : int(K[2]) // 2 + 1])  # rfft half
        from ._kernels import pme_weights

        u = np.ascontiguousarray(pos * (K / L)[None, :])
        u = np.minimum(u, np.nextafter(K.astype(float), 0.0)[None, :])  # floor(u) < K always
        self._mstart, self._w, self._d = pme_weights(u, n_ord, np.ascontiguousarray((K / L).astype(float)))
        # Spreading runs slab by slab along x (see _kernels/_pme.py): bodies sorted by slab.
        slab = self._mstart[:, 0] // n_ord
        # Within a slab, by y then z: neighbouring bodies share mesh lines (cache reuse).
        st = self._mstart
        self._order = np.lexsort((st[:, 2], st[:, 1], slab)).astype(np.int64)
        n_slabs = int(K[0] + n_ord - 1) // n_ord + 1
        self._slabs = np.searchsorted(slab[self._order], np.arange(n_slabs + 1)).astype(np.int64)
        self.n_kvectors = int(np.prod(K))

    def _apply(self, x):
        from scipy import fft

        from ._kernels import ewald_real, pme_gather, pme_spread

        p = np.ascontiguousarray(x, dtype=np.float64)
        out = np.empty_like(p)
        ewald_real(
            self._pos, p, self.box, self.alpha, self.r_cut, self._cell_of, self._start, self._items,
            self._ncell, out, self._table, self._table_r0, self._table_h,
        )  # fmt: skip
        K = tuple(int(k) for k in self.mesh)
        kk = p.shape[2]
        pad = self.order - 1
        Q = np.zeros((kk, K[0] + pad, K[1] + pad, K[2] + pad))
        pme_spread(self._mstart, self._w, self._d, self._order, self._slabs, p, Q)
        Q = _fold(Q, K, pad)
        Qh = fft.rfftn(Q, axes=(1, 2, 3), workers=-1)
        del Q
        Qh *= self._influence[None]
        Phi = fft.irfftn(Qh, s=K, axes=(1, 2, 3), workers=-1, overwrite_x=True)
        del Qh
        Phi *= float(np.prod(K))
        Phi = np.pad(Phi, ((0, 0), (pad, 0), (pad, 0), (pad, 0)), mode="wrap")
        pme_gather(self._mstart, self._w, self._d, self._order, Phi, out)
        out += self._self * p
        return out

    def field_at(self, points, moments):  # pragma: no cover - declared limitation
        """Field maps use the plain Ewald backend (:class:`EwaldOperator`)."""
        raise InputError(
            "points: field maps of a 'pme' operator are not offered; use the 'ewald' backend", "points"
        )

    def describe(self) -> str:
        """The mesh parameters in one line."""
        return (
            f"smooth PME: alpha {self.alpha:.4g}, r_c {self.r_cut:.4g}, "
            f"mesh {'x'.join(map(str, self.mesh))}, "
            f"B-spline order {self.order}, accuracy {self.accuracy:g}"
        )
