from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._validate import as_int, as_positive
from ..errors import InputError

#: Bergman variables ``s`` at which the Lanczos path checks its convergence: far from the
#: spectrum (lossless dielectric fillers have s < 0) and just above it (lossy or metallic).
PROBE_S = (-20.0, -2.0, -0.3, -0.05, 0.05 + 0.05j, 0.2 + 0.05j, 0.35 + 0.05j, 0.6 + 0.05j, 1.2)

#: Largest body count solved by a dense eigendecomposition under ``method="auto"``.
DENSE_MAX = 500


def bergman_s(eps_host, eps_inclusion):
    """Bergman's spectral variable ``s = eps_h / (eps_h - eps_i)`` (array-valued)."""
    eh = np.asarray(eps_host, dtype=complex)
    ei = np.asarray(eps_inclusion, dtype=complex)
    if np.any(eh == ei):
        raise InputError(
            "eps_inclusion: equals the host permittivity, s is infinite (no contrast)", "eps_inclusion"
        )
    return eh / (eh - ei)


class _Coupling:
    """``H = Lambda - C T C`` on ``(N, 3, K)`` arrays: the geometry-only part of the moment equations."""

    def __init__(self, scene, operator=None):
        from ..operators import make_operator

        self.scene = scene
        self.op = operator if operator is not None else make_operator(scene)
        L = np.array([p.shape.depolarization for p in scene.populations])[scene.population_index]
        R = scene.rotations
        self.lam = np.einsum("nij,nj,nkj->nik", R, L, R)  # (N, 3, 3)
        self.c = np.sqrt(scene.volumes / (4.0 * math.pi))  # (N,)
        self.n = scene.n_bodies
        self.n_applies = 0

    def apply(self, x):
        self.n_applies += x.shape[2]
        cx = self.c[:, None, None] * x
        return np.einsum("nij,njk->nik", self.lam, x) - self.c[:, None, None] * self.op.apply(cx)

    def dense(self):
        n3 = 3 * self.n
        Tm = self.op.dense()
        cc = np.repeat(self.c, 3)
        H = -(cc[:, None] * Tm * cc[None, :])
        for i in range(self.n):
            H[3 * i : 3 * i + 3, 3 * i : 3 * i + 3] += self.lam[i]
        self.n_applies += n3
        return H

    def start(self):
        """The three right-hand sides ``b_a = C e_a`` as ``(N, 3, 3)``."""
        b = np.zeros((self.n, 3, 3))
        for a in range(3):
            b[:, a, a] = self.c
        return b


@dataclass(frozen=True)
class Spectrum:
    """Spectral representation of an arrangement's dipole response (geometry only).

    The total moment of the bodies per unit applied field is
    ``P(s) = sum_n W_n / (h_n - s)`` (a 3 x 3 tensor) with real poles ``h_n`` and real
    symmetric positive-semidefinite weights ``W_n``; ``s = eps_h/(eps_h - eps_i)``
    carries all the material dependence. Evaluate it for any pair of permittivities,
    or permittivity models over frequency, with :meth:`effective_permittivity`.

    Attributes
    ----------
    poles : (M,) ndarray
        ``h_n`` (Bergman's ``s_n``).
    weights : (M, 3, 3) ndarray
        ``W_n``, reduced volume.
    boundary : {"open", "periodic"}
    volume : float
        Box volume (periodic) or sample-sphere volume (open), reduced.
    sample_radius : float or None
    volume_fraction : float
    method : str
        ``"eigen"`` (exact, dense) or ``"lanczos"`` (block Lanczos, Gauss quadrature).
    n_applies : int
        Single right-hand-side operator applies spent.
    converged : bool
        Lanczos: the probe values met ``tol``; eigen: always.
    estimate : float
        Last relative change of ``P`` at the probe values (Lanczos), 0 for eigen.
    """

    poles: np.ndarray
    weights: np.ndarray
    boundary: str
    volume: float
    sample_radius: float | None
    volume_fraction: float
    method: str
    n_applies: int
    converged: bool = True
    estimate: float = 0.0

    def moment(self, s):
        """``P(s)`` for an array of ``s`` values: ``(..., 3, 3)`` complex."""
        s = np.asarray(s, dtype=complex)
        g = 1.0 / (self.poles - s[..., None])  # (..., M)
        return np.einsum("...m,mab->...ab", g, self.weights)

    @property
    def residues(self):
        """Bergman residues ``B_n = 4 pi W_n / V``, ``(M, 3, 3)``; periodic: they sum to ``phi I``."""
        return 4.0 * math.pi * self.weights / self.volume

    def residue_sum(self):
        """``sum_n B_n`` (3 x 3): the volume fraction times the identity (first sum rule)."""
        return self.residues.sum(axis=0)

    def first_moment(self):
        """``sum_n B_n s_n`` (3 x 3): ``phi (1 - phi) / 3`` per axis for a cubic lattice (Bergman 1978)."""
        return np.einsum("m,mab->ab", self.poles, self.residues)

    def effective_permittivity(self, eps_host, eps_inclusion):
        """Effective tensor for host and inclusion permittivities (scalars or equal-shape arrays).

        Returns
        -------
        (..., 3, 3) ndarray of complex
            Periodic: the bulk ``eps_h (I + 4 pi P / V)``. Open: the spherical sample's
            ``eps_h (I - B)^-1 (I + 2 B)`` with ``B = P / R^3``, as
            :func:`~dipolearray.observables.effective_permittivity`.
        """
        eh = np.asarray(eps_host, dtype=complex)
        s = bergman_s(eh, eps_inclusion)
        P = self.moment(s)
        eye = np.eye(3)
        if self.boundary == "periodic":
            return eh[..., None, None] * (eye + 4.0 * math.pi * P / self.volume)
        B = P / self.sample_radius**3
        return eh[..., None, None] * np.linalg.solve(eye - B, eye + 2.0 * B)

    def pole_density(self, bins=60, range=None):  # noqa: A002 - numpy's name
        """Histogram of the poles weighted by the isotropic residues: ``(centres, density)``.

        The density integrates to the residue sum over three axes / 3 (the volume
        fraction for a periodic box); clustering and chaining spread it.
        """
        w = np.trace(self.residues, axis1=1, axis2=2) / 3.0
        hist, edges = np.histogram(self.poles, bins=bins, range=range, weights=w, density=False)
        width = np.diff(edges)
        return 0.5 * (edges[1:] + edges[:-1]), hist / width


def _volume(scene):
    if scene.boundary == "periodic":
        return float(np.prod(scene.box)), None
    if scene.sample_radius is None:
        raise InputError(
            "sample_radius: an open scene needs its sample radius for the effective permittivity",
            "sample_radius",
        )
    R = float(scene.sample_radius)
    return 4.0 / 3.0 * math.pi * R**3, R


def spectral_representation(
    scene, *, method="auto", tol=1e-10, max_steps=None, operator=None, probe_s=PROBE_S
):
    """Poles and weights of the arrangement's dipole response, once per geometry.

    Parameters
    ----------
    scene : Scene
        Any shapes (spheres, spheroids, ellipsoids); the materials are not used, so
        one spectrum serves every pair of host and filler permittivities (all bodies
        are taken to share one filler material).
    method : {"auto", "eigen", "lanczos"}
        ``"eigen"`` diagonalises the dense ``3N x 3N`` matrix (exact; ``auto`` for
        ``N <= 500``); ``"lanczos"`` runs a block Lanczos process from the three
        uniform-field vectors with full reorthogonalisation, matrix-free, and returns
        the Gauss quadrature of the spectral measure.
    tol : float
        Lanczos: stop when ``P`` at the probe ``s`` values changes by less than this
        (relative) over five steps.
    max_steps : int, optional
        Lanczos block steps (default ``min(N, 400)``).
    operator : InteractionOperator, optional
    probe_s : sequence of complex

    Returns
    -------
    Spectrum

    Notes
    -----
    For an ellipsoid with depolarization factors ``L_k`` the inverse reduced
    polarizability is ``alpha^-1 = (4 pi / V)(R diag(L) R^T - s)`` with
    ``s = eps_h/(eps_h - eps_i)``, affine in ``s``. The moment equations
    ``(alpha^-1 - T) p = E0`` then read ``(H - s) q = b`` with
    ``H = Lambda - C T C``, ``C = diag(sqrt(V_i / 4 pi))``, ``q = C^-1 p``,
    ``b = C E0``: ``H`` is real symmetric and depends on geometry alone, so
    ``P(s) = b^T (H - s)^-1 b = sum_n (b . v_n)(b . v_n)^T / (h_n - s)``. This is the
    point-dipole form of the spectral representation (Bergman 1978; Milton 1981): for a
    periodic box ``1 - eps/eps_h = sum_n B_n / (s - s_n)`` with ``B_n = 4 pi W_n / V``.

    References
    ----------
    Bergman, D. J. (1978). The dielectric constant of a composite material: a problem
    in classical physics. Phys. Rep. 43, 377.
    Milton, G. W. (1981). Bounds on the complex permittivity of a two-component
    composite material. J. Appl. Phys. 52, 5286.
    Golub, G. H. and Meurant, G. (2010). Matrices, Moments and Quadrature with
    Applications, ch. 6-7 (block Lanczos and Gauss quadrature).
    """
    from .._validate import check_choice

    check_choice(method, "method", ("auto", "eigen", "lanczos"))
    volume, R = _volume(scene)
    H = _Coupling(scene, operator)
    phi = float(scene.volumes.sum() / volume)
    if method == "auto":
        method = "eigen" if scene.n_bodies <= DENSE_MAX else "lanczos"
    b = H.start().reshape(3 * scene.n_bodies, 3)
    if method == "eigen":
        h, V = np.linalg.eigh(H.dense())
        u = V.T @ b  # (3N, 3)
        W = np.einsum("ma,mb->mab", u, u)
        return Spectrum(h, W, scene.boundary, volume, R, phi, "eigen", H.n_applies)
    tol = as_positive(tol, "tol")
    steps = as_int(max_steps if max_steps is not None else min(scene.n_bodies, 400), "max_steps", minimum=1)
    return _block_lanczos(H, b, steps, tol, np.asarray(probe_s, dtype=complex), scene, volume, R, phi)


def _quadrature(A, B, R0, k):
    m = 3 * k
    Tm = np.zeros((m, m))
    for j in range(k):
        Tm[3 * j : 3 * j + 3, 3 * j : 3 * j + 3] = A[j]
        if j + 1 < k:
            Tm[3 * j + 3 : 3 * j + 6, 3 * j : 3 * j + 3] = B[j]
            Tm[3 * j : 3 * j + 3, 3 * j + 3 : 3 * j + 6] = B[j].T
    theta, Z = np.linalg.eigh(Tm)
    u = Z[:3, :].T @ R0  # (m, 3)
    return theta, np.einsum("ma,mb->mab", u, u)


def _block_lanczos(H, b, steps, tol, probes, scene, volume, R, phi):
    n3 = b.shape[0]
    rng = np.random.default_rng(0)
    Q, R0 = np.linalg.qr(b)
    basis = [Q]
    A, B = [], []
    prev = None
    Q_prev, B_prev = None, None
    change = np.inf
    converged = False
    theta = W = None
    for j in range(steps):
        Wv = H.apply(Q.reshape(-1, 3, 3)).reshape(n3, 3)
        if Q_prev is not None:
            Wv -= Q_prev @ B_prev.T
        Aj = Q.T @ Wv
        Aj = 0.5 * (Aj + Aj.T)
        Wv -= Q @ Aj
        for _ in range(2):  # full reorthogonalisation, twice is enough
            for Qb in basis:
                Wv -= Qb @ (Qb.T @ Wv)
        A.append(Aj)
        U, S, Vt = np.linalg.svd(Wv, full_matrices=False)
        scale = max(1.0, float(np.abs(Aj).max()))
        small = S < 1e-10 * scale
        exhausted = bool(np.all(small)) or (j + 1) * 3 >= n3
        if (j + 1) % 5 == 0 or exhausted or j == steps - 1:
            theta, W = _quadrature(A, B, R0, len(A))
            P = np.einsum("pm,mab->pab", 1.0 / (theta[None, :] - probes[:, None]), W)
            if prev is not None:
                change = float(np.max(np.abs(P - prev)) / np.max(np.abs(P)))
                if change < tol:
                    converged = True
            prev = P
            if converged or exhausted:
                converged = True if exhausted else converged
                break
        if np.any(small):
            # Deflation: replace dependent directions by fresh ones orthogonal to the basis,
            # decoupled from the process (their rows of B are zero).
            for col in np.flatnonzero(small):
                v = rng.standard_normal(n3)
                for _ in range(2):
                    for Qb in basis:
                        v -= Qb @ (Qb.T @ v)
                    v -= U[:, :col] @ (U[:, :col].T @ v)
                U[:, col] = v / np.linalg.norm(v)
                S[col] = 0.0
        Bj = S[:, None] * Vt
        B.append(Bj)
        Q_prev, B_prev = Q, Bj
        Q = U
        basis.append(Q)
    if theta is None:  # pragma: no cover - steps >= 1 always computes one quadrature
        theta, W = _quadrature(A, B, R0, len(A))
    return Spectrum(
        theta, W, scene.boundary, volume, R, phi, "lanczos", H.n_applies, converged=converged, estimate=change
    )


def frequency_response(spectrum, host, inclusion, frequency_hz):
    """Effective tensor over frequency from a spectrum and two permittivity models.

    Parameters
    ----------
    spectrum : Spectrum
    host, inclusion : Dispersion or callable or complex
        Permittivity models (called with the frequencies) or constants.
    frequency_hz : (F,) array_like

    Returns
    -------
    (F, 3, 3) ndarray of complex
    """
    f = np.asarray(frequency_hz, dtype=float)
    eh = host(f) if callable(host) else np.full(f.shape, complex(host))
    ei = inclusion(f) if callable(inclusion) else np.full(f.shape, complex(inclusion))
    return spectrum.effective_permittivity(eh, ei)
