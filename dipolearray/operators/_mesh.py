from __future__ import annotations

import math

import numpy as np

from .._validate import as_positive
from ..errors import InputError
from ._base import InteractionOperator, crossover_lookup, register_backend
from ._ewald import screening_setup

#: Share ``x = sigma^2 / (2 T)`` of the screening variance ``T = 1/(4 alpha^2)`` carried by
#: each Gaussian (the mesh kernel keeps ``(1 - 2x) T``). The mesh sums are trapezoid rules
#: whose errors fall like ``exp(-c (2 pi/h)^2)``, ``c`` the variance of the smoother
#: factor's spectrum combined with the other's: ``c = T x (1 - 2x)/(1 - x)`` for the
#: spreading sum (the worse of the two), largest at ``x = 1 - 1/sqrt(2)``.
SHARE = 1.0 - 1.0 / math.sqrt(2.0)

#: Prefactors of the two error terms (quadrature and Gaussian truncation) over their
#: exponentials, measured against the direct kernel (tests/operators/test_mesh.py).
QUADRATURE_PREFACTOR = 30.0
TRUNCATION_PREFACTOR = 3.0


#: Bodies from which one particle-mesh apply (three right-hand sides, build included)
#: beats the direct kernel, by requested accuracy (``accuracy >= first entry`` ->
#: second); the mesh offers 1e-12 and looser. Measured with
#: ``bench/bench_scaling.py --mesh-crossover`` on the 2-core reference machine (random
#: spheres at 0.2 in a sphere): mesh/direct speed 0.94-1.08x at 16000 and 1.8-2.3x at
#: 32000 for 1e-3; 0.49-0.55x at 16000 and 1.01-1.15x at 32000 for 1e-6; 1.01-1.14x at
#: 64000 for 1e-9; 0.53-0.57x at 64000 for 1e-12 (two runs; the last entry extrapolated
#: from the doubling per doubling of N).
MESH_CROSSOVER = ((1e-4, 20000), (1e-7, 32000), (1e-9, 64000), (1e-10, 90000), (1e-12, 130000), (0.0, 10**12))


def mesh_crossover(accuracy) -> int:
    """Body count from which ``backend="auto"`` picks the particle mesh on an open scene."""
    return crossover_lookup(MESH_CROSSOVER, accuracy)


def _screening_s(accuracy):
    """``s = sqrt(ln(30/accuracy))``: ``erfc``-tail truncation at ``alpha r_c = s`` (as Ewald)."""
    return math.sqrt(-math.log(accuracy) + math.log(30.0))


def mesh_parameters(accuracy, alpha):
    """Gaussian width ``sigma``, mesh spacing ``h``, support ``P`` and cutoff ``r_c`` for an accuracy.

    Parameters
    ----------
    accuracy : float
        Relative accuracy aimed at.
    alpha : float, 1/reduced length
        Splitting parameter.

    Returns
    -------
    sigma, h, r_cut : float
    n_points : int
        Even number of mesh points per axis a body touches.

    Notes
    -----
    ``r_c = s / alpha`` with ``s = sqrt(ln(30/accuracy))`` (real-space truncation, as
    :func:`ewald_parameters`); ``sigma^2 = 2 x T`` with ``T = 1/(4 alpha^2)``
    (``SHARE``); ``alpha h = pi sqrt(f / ln(B/accuracy))`` with
    ``f = x (1 - 2x)/(1 - x)`` so that the quadrature error ``B exp(-f pi^2/(alpha h)^2)``
    meets the accuracy; ``P h / 2 = sigma sqrt(2 ln(C/accuracy))`` the truncation
    radius of the Gaussian (``B``, ``C``: the measured prefactors).
    """
    x = SHARE
    sigma = math.sqrt(2.0 * x) / (2.0 * alpha)
    f = x * (1.0 - 2.0 * x) / (1.0 - x)
    h = math.pi * math.sqrt(f / math.log(QUADRATURE_PREFACTOR / accuracy)) / alpha
    half = math.sqrt(2.0 * math.log(TRUNCATION_PREFACTOR / accuracy)) * sigma / h
    n_points = max(2 * int(math.ceil(half)), 4)
    return sigma, h, _screening_s(accuracy) / alpha, n_points


def _fast_even(n):
    from scipy.fft import next_fast_len

    m = next_fast_len(int(n))
    while m % 2:
        m = next_fast_len(m + 1)
    return m


@register_backend("mesh")
class MeshOperator(InteractionOperator):
    """Open-boundary point-dipole coupling by particle-mesh summation with a free-space kernel.

    The dipole kernel is split as in Ewald's method, ``1/r = erfc(alpha r)/r + erf(alpha r)/r``.
    Pairs closer than ``r_c`` get the short-range part exactly (cell list). The smooth
    part is a Gaussian convolution, ``erf(alpha r)/r = G_sigma * G_sigma * erf(alpha' r)/r``:
    every dipole is spread on a mesh with the gradient of a Gaussian, the mesh is
    convolved with the sampled free-space kernel ``erf(alpha' r)/r`` by zero-padded FFTs
    (no periodic images), and the field is gathered back with the same Gaussian.
    Cost O(N + n^3 log n) per apply and O(N + n^3) memory, for ``n`` mesh points per axis
    over the sample's bounding box.

    Parameters
    ----------
    scene : Scene
        Open boundary.
    accuracy : float
        Relative accuracy of the applied field, 1e-12 to 1e-2.
    neighbours : float
        Mean number of bodies inside the real-space cutoff: more neighbours mean a
        coarser mesh (the cost moves from the FFTs to the pair loop).
    max_memory : float, bytes
        Refuse (``InputError``) a mesh whose apply would hold more than this; the mesh
        spans the bounding box, so bodies scattered thinly over a large box need one far
        larger than their number suggests (``backend="auto"`` then falls back).

    Notes
    -----
    With ``rho(z) = sum_j p_j . grad_j G_sigma(z - r_j)`` on the mesh,
    ``psi = h^3 sum K(g - g') rho(g')`` with ``K = erf(alpha' r)/r`` and
    ``E_i = -h^3 sum_g grad G_sigma(r_i - g) psi(g)``; ``1/(4 alpha^2) = 2 sigma^2/2 +
    1/(4 alpha'^2)``. The mesh sums are trapezoid rules of the continuous convolutions,
    spectrally accurate for Gaussians. The linear (not circular) convolution over the
    bounding mesh uses a doubled FFT grid (Hockney and Eastwood 1988); the kernel is
    even in every axis, so its transform is a type-I cosine transform of one octant.
    The self term ``4 alpha^3 / (3 sqrt(pi)) p_i`` removes each body's own smooth field.

    References
    ----------
    Hockney, R. W. and Eastwood, J. W. (1988). Computer Simulation Using Particles,
    ch. 6 (free-space convolution by zero padding).
    Lindbo, D. and Tornberg, A.-K. (2011). Spectral accuracy in fast Ewald-based methods
    for particle simulations. J. Comput. Phys. 230, 8744 (Gaussian spreading, split screening).
    af Klinteberg, L., Shamshirgar, D. S. and Tornberg, A.-K. (2017). Fast Ewald
    summation for free-space Stokes potentials. Res. Math. Sci. 4, 1.
    """

    def __init__(self, scene, accuracy=1e-8, neighbours=900.0, max_memory=12e9):
        super().__init__(scene)
        if scene.boundary != "open":
            raise InputError("backend: 'mesh' sums an open boundary; periodic scenes use 'pme'", "backend")
        acc = as_positive(accuracy, "accuracy")
        if not 1e-12 <= acc < 1e-2:
            raise InputError(f"accuracy: {acc} is outside [1e-12, 1e-2) for the mesh", "accuracy")
        nb = as_positive(neighbours, "neighbours")
        self.max_memory = as_positive(max_memory, "max_memory")
        self.accuracy = acc
        self.apply_accuracy = acc
        pos = np.asarray(scene.positions, dtype=np.float64)
        n = self.n_bodies
        lo = pos.min(axis=0) if n else np.zeros(3)
        hi = pos.max(axis=0) if n else np.zeros(3)
        self._lo = lo
        self._extent = extent = np.maximum(hi - lo, 1e-9)
        density = _local_density(
            pos, float(np.prod(np.maximum(extent, 2.0 * float(scene.bounding_radii.max()))))
        )
        rc = (3.0 * nb / (4.0 * math.pi * density)) ** (1.0 / 3.0)
        self.alpha = _screening_s(acc) / rc
        self.r_cut = rc
        self._setup_cells(pos - lo[None, :], scene)
        self._self = 4.0 * self.alpha**3 / (3.0 * math.sqrt(math.pi))
        self._levels = {}
        self._level = self._get_level(acc)

    def _setup_cells(self, pos, scene):
        """Cell list of half-cutoff cells (bodies in cell order) and the screening table."""
        side = 0.5 * self.r_cut
        ncell = np.maximum(1, np.ceil(self._extent / side)).astype(np.int64)
        cell = np.minimum((pos / side).astype(np.int64), ncell - 1)
        flat = (cell[:, 0] * ncell[1] + cell[:, 1]) * ncell[2] + cell[:, 2]
        items = np.argsort(flat, kind="stable").astype(np.int64)
        self._items = items
        self._start = np.searchsorted(flat[items], np.arange(int(np.prod(ncell)) + 1)).astype(np.int64)
        self._cell_of = np.ascontiguousarray(cell[items])
        self._ncell = ncell
        self._xyz = tuple(np.ascontiguousarray(pos[items, k]) for k in range(3))
        # Offsets of the cells that can hold a body within r_c of one in the centre cell.
        d = np.stack(np.meshgrid(*[np.arange(-2, 3)] * 3, indexing="ij"), axis=-1).reshape(-1, 3)
        gap = np.maximum(np.abs(d) - 1, 0)
        self._stencil = np.ascontiguousarray(d[(gap**2).sum(axis=1) < 4], dtype=np.int64)
        r0 = 0.25 * float(scene.bounding_radii.min()) if self.n_bodies else 0.0
        self._table, self._table_r0, self._table_h = screening_setup(
            self.alpha, self.r_cut, self.accuracy, r0
        )

    def _real_space(self, p, r_cut):
        """Short-range part of the field, (N, 3, K), for pairs closer than ``r_cut``."""
        from ._kernels import open_real

        items = self._items
        ps = np.ascontiguousarray(p[items].transpose(2, 1, 0))
        os_ = np.empty_like(ps)
        open_real(*self._xyz, ps, r_cut, self._cell_of, self._start, self._ncell, self._stencil,
                  self._table, self._table_r0, self._table_h, os_)  # fmt: skip
        out = np.empty_like(p)
        out[items] = os_.transpose(2, 1, 0)
        return out

    def _get_level(self, accuracy):
        """Mesh, body order and kernel transform for one apply accuracy (cached)."""
        if accuracy in self._levels:
            return self._levels[accuracy]
        from ._kernels import mesh_starts

        sigma, h, rc, P = mesh_parameters(accuracy, self.alpha)
        lev = _Level(accuracy=accuracy, sigma=sigma, h=h, r_cut=min(rc, self.r_cut), n_points=P)
        # Mesh over the bounding box with P/2 points of margin each side.
        origin = self._lo - (P // 2) * h
        lev.mesh = np.array([int(math.floor(e / h)) + P + 2 for e in self._extent], dtype=np.int64)
        lev.fft_shape = np.array([_fast_even(2 * m - 1) for m in lev.mesh], dtype=np.int64)
        need = mesh_memory(lev.mesh, lev.fft_shape)
        if need > self.max_memory:
            n0, n1, n2 = (int(m) for m in lev.mesh)
            raise InputError(
                f"backend: the 'mesh' backend needs about {need / 1e9:.3g} GB for this sample's bounding "
                f"box ({n0} x {n1} x {n2} mesh points at accuracy {accuracy:g}), over max_memory = "
                f"{self.max_memory / 1e9:.3g} GB; the bodies fill little of their bounding box: use "
                "backend 'fmm' or 'direct', a looser accuracy, more neighbours, or a larger max_memory",
                "backend",
            )
        pos = np.asarray(self.scene.positions, dtype=np.float64)
        lev.u = np.ascontiguousarray((pos - origin[None, :]) / h)
        st = mesh_starts(lev.u, P)
        slab = st[:, 0] // P
        # Slab by slab along x (parallel spreading), then by y and z (cache reuse).
        lev.order = np.lexsort((st[:, 2], st[:, 1], slab)).astype(np.int64)
        n_slabs = int(lev.mesh[0]) // P + 2
        lev.slabs = np.searchsorted(slab[lev.order], np.arange(n_slabs + 1)).astype(np.int64)
        lev.kernel = _kernel_octant(self.alpha, sigma, h, lev.fft_shape)
        self._levels[accuracy] = lev
        return lev

    @property
    def mesh(self):
        """Mesh points per axis at the operator's own accuracy, (3,) int."""
        return self._levels[self.accuracy].mesh

    @property
    def n_points(self):
        """Mesh points per axis a body touches at the operator's own accuracy."""
        return self._levels[self.accuracy].n_points

    #: The accuracy of an apply may be loosened while a Krylov solve converges.
    relaxable = True

    def set_apply_accuracy(self, accuracy=None):
        """Accuracy of the following applies: ``None`` restores the operator's own ``accuracy``.

        Inexact Krylov methods loosen it as the residual falls (Simoncini & Szyld 2003).
        The mesh is rebuilt for whole decades looser than ``accuracy`` (at most 1e-3),
        each level kept for reuse: a coarser mesh, fewer points per body and a shorter
        real-space cutoff at the same splitting parameter.
        """
        if accuracy is None:
            level = self.accuracy
        else:
            ceiling = max(1e-3, self.accuracy)
            a = min(max(float(accuracy), self.accuracy), ceiling)
            decades = max(0, int(math.floor(math.log10(a / self.accuracy) + 1e-9)))
            level = min(self.accuracy * 10.0**decades, ceiling)
        self._level = self._get_level(level)
        self.apply_accuracy = level

    def _convolve(self, rho, lev):
        """Linear convolution of the mesh ``rho`` (n0, n1, n2) with the level's kernel."""
        from scipy import fft

        n0, n1, n2 = (int(m) for m in lev.mesh)
        M0, M1, M2 = (int(m) for m in lev.fft_shape)
        Kh = lev.kernel
        # Zero-padded transforms axis by axis, never transforming padding along the axes
        # still to come and keeping only the first n points of each inverse. After the
        # real transform along z, the (kx, ky) work runs in chunks of kz planes, so the
        # peak memory is two meshes' worth, not the doubled grid's.
        # Planes of x in slices: a zero-padded transform copies its input at full length.
        step = max(1, int(2**24 // max(1, n1 * M2)))
        A = np.empty((n0, n1, M2 // 2 + 1), dtype=np.complex128)
        for x0 in range(0, n0, step):
            A[x0 : x0 + step] = fft.rfft(rho[x0 : x0 + step], n=M2, axis=2, workers=-1)
        del rho  # the caller passes its only reference: freed before the doubled-grid work
        ix = np.minimum(np.arange(M0), M0 - np.arange(M0))
        iy = np.minimum(np.arange(M1), M1 - np.arange(M1))
        nz = A.shape[2]
        chunk = max(1, int(2**23 // max(1, M0 * M1)))
        for z0 in range(0, nz, chunk):
            zs = slice(z0, min(nz, z0 + chunk))
            B = fft.fft(A[:, :, zs], n=M1, axis=1, workers=-1)
            B = fft.fft(B, n=M0, axis=0, workers=-1, overwrite_x=True)
            B *= Kh[:, :, zs][np.ix_(ix, iy)]
            B = fft.ifft(B, axis=0, workers=-1, overwrite_x=True)[:n0]
            A[:, :, zs] = fft.ifft(B, axis=1, workers=-1, overwrite_x=True)[:, :n1]
        out = np.empty((n0, n1, n2))
        for x0 in range(0, n0, step):
            out[x0 : x0 + step] = fft.irfft(A[x0 : x0 + step], n=M2, axis=2, workers=-1)[:, :, :n2]
        return out

    def _apply(self, x):
        from ._kernels import mesh_gather, mesh_spread

        lev = self._level
        p = np.ascontiguousarray(x, dtype=np.float64)
        out = self._real_space(p, lev.r_cut)
        shape = tuple(int(m) for m in lev.mesh)
        P = lev.n_points
        # One right-hand side at a time: the mesh memory does not grow with K.
        for q in range(p.shape[2]):
            pq = np.ascontiguousarray(p[:, :, q])
            rho = [np.zeros(shape)]
            mesh_spread(lev.u, pq, P, lev.h, lev.sigma, lev.order, lev.slabs, rho[0])
            psi = self._convolve(rho.pop(), lev)
            oq = np.zeros_like(pq)
            mesh_gather(lev.u, P, lev.h, lev.sigma, lev.order, psi, oq)
            del psi
            out[:, :, q] += oq
        out += self._self * p
        return out

    def field_at(self, points, moments):
        """Field of the bodies' dipoles at arbitrary points (no applied field added).

        Summed exactly over all pairs by the direct kernel (O(M N)): field maps ask for
        points anywhere, also outside the mesh.

        Parameters
        ----------
        points : (M, 3) ndarray of float, reduced length
        moments : (N, 3, K) ndarray of float or complex

        Returns
        -------
        (M, 3, K) ndarray
        """
        from ._direct import DirectOperator

        return DirectOperator(self.scene).field_at(points, moments)

    def describe(self) -> str:
        """The mesh parameters in one line."""
        lev = self._levels[self.accuracy]
        return (
            f"free-space particle mesh: alpha {self.alpha:.4g}, r_c {self.r_cut:.4g}, "
            f"mesh {'x'.join(map(str, lev.mesh))} (FFT {'x'.join(map(str, lev.fft_shape))}), "
            f"Gaussian {lev.n_points} points, accuracy {self.accuracy:g}"
        )


def _local_density(pos, box_volume, k=16, n_sample=20000):
    """Bodies per volume around the bodies: median of ``k / (4/3 pi r_k^3)`` over a sample.

    ``r_k`` is the distance to the k-th nearest neighbour; the median over up to
    ``n_sample`` bodies measures the density where the bodies are, whatever fraction of
    the bounding box they fill (clusters, spherical samples, far-apart groups).
    """
    from scipy.spatial import cKDTree

    n = pos.shape[0]
    if n <= k:
        return n / box_volume
    rng = np.random.default_rng(0)
    idx = rng.choice(n, size=min(n, n_sample), replace=False)
    d, _ = cKDTree(pos).query(pos[idx], k=k + 1)
    rk = np.maximum(d[:, -1], 1e-300)
    return float(np.median(k / (4.0 / 3.0 * math.pi * rk**3)))


def mesh_memory(mesh, fft_shape) -> float:
    """Bytes one apply holds at its peak: two meshes, the half-padded transform and the kernel octant."""
    n0, n1, n2 = (float(m) for m in mesh)
    M0, M1, M2 = (float(m) for m in fft_shape)
    return (
        8 * 2 * n0 * n1 * n2
        + 16 * n0 * n1 * (M2 // 2 + 1)
        + 8 * (M0 // 2 + 1) * (M1 // 2 + 1) * (M2 // 2 + 1)
    )


class _Level:
    """Mesh settings of one apply accuracy."""

    def __init__(self, **kw):
        self.__dict__.update(kw)


def _kernel_octant(alpha, sigma, h, fft_shape):
    """Transform of the sampled kernel ``h^6 erf(alpha' r)/r`` on the doubled grid, one octant."""
    from scipy import fft
    from scipy.special import erf

    # 1/(4 alpha'^2) = 1/(4 alpha^2) - sigma^2: the two Gaussians carry the rest.
    alpha_k = 1.0 / (2.0 * math.sqrt(1.0 / (4.0 * alpha**2) - sigma**2))
    axes = [np.arange(int(M) // 2 + 1, dtype=np.float64) * h for M in fft_shape]
    K = np.empty(tuple(a.size for a in axes))
    yz2 = axes[1][:, None] ** 2 + axes[2][None, :] ** 2
    # Plane by plane: no temporary the size of the octant besides K itself. One h^3 per
    # trapezoid rule: the convolution here and the gathering integral.
    with np.errstate(divide="ignore", invalid="ignore"):
        for i, x in enumerate(axes[0]):
            r = np.sqrt(x * x + yz2)
            K[i] = h**6 * erf(alpha_k * r) / r
    K[0, 0, 0] = h**6 * 2.0 * alpha_k / math.sqrt(math.pi)
    # A kernel even in every axis on a circle of even length M has the real transform
    # DCT-I of its first M/2 + 1 samples (scipy's type-1 definition).
    return fft.dctn(K, type=1, overwrite_x=True, workers=-1)
