"""Lattice sums of irregular solid harmonics and the multipole translation tensor.

A body in a periodic box sees every image of every other body (and its own images).
For a coupling of degree ``n = l + l' >= 3`` the sum over images converges absolutely
and equals ``S_nm(r) = sum_R' I_nm(r + R)`` (R over the lattice, ``R = 0`` left out for
``r = 0``). The dipole-dipole degree (``n = 2``) converges only conditionally and stays
with the Ewald backend, which fixes the conducting (tin-foil) outer boundary.

Ewald splitting of ``S``
------------------------
``1/r^(2n+1) = int_0^oo t^(n-1/2) e^(-r^2 t) dt / Gamma(n+1/2)`` split at ``t = alpha^2``
gives, with Hobson's theorem ``R_nm(grad) f(r) = R_nm(r) (r^-1 d/dr)^n f(r)`` and
``R_nm(grad) (1/r) = (-1)^n (2n-1)!! I_nm(r)``:

* real space: ``sum_R I_nm(r + R) Q(n + 1/2, alpha^2 |r + R|^2)`` (``Q`` the regularised
  upper incomplete gamma function);
* reciprocal space: ``(4 pi / V) sum_(k != 0) e^(-k^2 / 4 alpha^2) / k^2
  Re[(-i)^n e^(i k.r)] R_nm(k) / (2n-1)!!``;
* no self term: ``R_nm(grad) [erf(alpha r)/r]`` vanishes at ``r = 0`` for ``n >= 1``.

References
----------
Hobson, E. W. (1931). The Theory of Spherical and Ellipsoidal Harmonics, Cambridge, sec. 68
(the theorem on harmonic operators acting on radial functions).
Ewald, P. P. (1921). Ann. Phys. 369, 253. Nijboer, B. R. A. and De Wette, F. W. (1957).
On the calculation of lattice sums. Physica 23, 309 (the incomplete-gamma splitting of
lattice sums of ``r^-s`` harmonics).
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
from scipy.special import gammaincc, gammaln

from ..errors import InputError
from ._base import InteractionOperator, make_operator
from ._harmonics import degree_slices, n_unknowns, solid_harmonics
from ._multipole import MultipoleOperator, _kernel_axial


def _double_factorial_odd(n: int) -> float:
    """``(2n - 1)!!``."""
    return math.exp(gammaln(2 * n + 1) - gammaln(n + 1) - n * math.log(2.0))


@lru_cache(maxsize=64)
def _cutoffs(degree: int, accuracy: float):
    """Dimensionless cut-offs ``(alpha r_c, k_c / (2 alpha))`` for degrees 3..degree.

    With ``alpha = sqrt(pi) / V^(1/3)`` the truncation error of degree ``n`` in units of
    ``V^(-(n+1)/3)`` is bounded by ``4 pi^(n/2) int_x^oo y^(1-n) Q(n+1/2, y^2) dy`` (real
    space, images spread with density 1/V) and ``pi^-1 (2 sqrt(pi))^(n+1)
    Gamma((n+1)/2, y^2) / (2n-1)!!`` (reciprocal space); both are pushed below a tenth
    of ``accuracy`` for every degree.
    """
    x_grid = np.linspace(0.5, 40.0, 4000)
    dx = x_grid[1] - x_grid[0]
    x_need, y_need = 1.0, 1.0
    tol = 0.1 * accuracy
    for n in range(3, degree + 1):
        f = x_grid ** (1.0 - n) * gammaincc(n + 0.5, x_grid**2)
        tail = 4.0 * np.pi ** (n / 2.0) * (np.cumsum(f[::-1])[::-1] * dx)
        ok = np.nonzero(tail < tol)[0]
        x_need = max(x_need, float(x_grid[ok[0]]) if ok.size else float(x_grid[-1]))
        a = 0.5 * (n + 1)
        lg = gammaln(a) - math.log(math.pi) + (n + 1) * math.log(2.0 * math.sqrt(math.pi))
        lg -= math.log(_double_factorial_odd(n))
        rec = np.exp(lg) * gammaincc(a, x_grid**2)
        ok = np.nonzero(rec < tol)[0]
        y_need = max(y_need, float(x_grid[ok[0]]) if ok.size else float(x_grid[-1]))
    return x_need, y_need


def lattice_sums(displacements, box, degree: int, accuracy: float = 1e-13, chunk: int = 64, alpha_scale=1.0):
    """``S_nm(r) = sum_R' I_nm(r + R)`` over an orthorhombic lattice, degrees 3..degree.

    Parameters
    ----------
    displacements : (P, 3) ndarray of float
        ``r``; a zero displacement leaves out ``R = 0`` (a body's own images).
    box : (3,) ndarray of float
        Lattice edges.
    degree : int
        Highest degree ``n`` (>= 3).
    accuracy : float
        Absolute truncation error aimed at, in units of ``V^(-(n+1)/3)``.
    alpha_scale : float
        Multiplies the splitting parameter (the result does not depend on it beyond
        the truncation error; the tests vary it).

    Returns
    -------
    (P, degree (degree + 2)) ndarray of float
        In the flat harmonic layout of :func:`solid_harmonics`; degrees 1 and 2 are zero.
    """
    import scipy.sparse as sp

    L = np.asarray(box, dtype=float)
    V = float(np.prod(L))
    r = np.asarray(displacements, dtype=float).reshape(-1, 3)
    r = r - L * np.round(r / L)  # minimum image: the image set around r is then symmetric
    alpha = alpha_scale * math.sqrt(math.pi) / V ** (1.0 / 3.0)
    xc, yc = _cutoffs(int(degree), float(accuracy))
    if alpha_scale != 1.0:
        # The cut-offs were sized for alpha = sqrt(pi)/V^(1/3); keep them covering both sides.
        xc, yc = xc * max(1.0, alpha_scale), yc * max(1.0, 1.0 / alpha_scale)
    r_cut = xc / alpha
    k_cut = 2.0 * alpha * yc
    F = n_unknowns(degree)
    out = np.zeros((r.shape[0], F))
    slices = [(n, a, b) for n, a, b in degree_slices(degree) if n >= 3]
    # Real space.
    h = np.ceil(r_cut / L + 0.5).astype(int)
    g = np.meshgrid(*[np.arange(-k, k + 1) for k in h], indexing="ij")
    R = np.stack([x.ravel() for x in g], axis=1) * L
    for c0 in range(0, r.shape[0], chunk):
        rc = r[c0 : c0 + chunk]
        v = rc[:, None, :] + R[None, :, :]
        d2 = np.einsum("pij,pij->pi", v, v)
        keep = (d2 < r_cut**2) & (d2 > (1e-12 * L.min()) ** 2)
        owner = np.nonzero(keep)[0]
        if owner.size == 0:
            continue
        vv = v[keep]
        I = solid_harmonics(vv, degree, "irregular")
        dd = d2[keep] * alpha**2
        I[:, : n_unknowns(2)] = 0.0
        for n, a, b in slices:
            I[:, a:b] *= gammaincc(n + 0.5, dd)[:, None]
        gather = sp.csr_matrix(
            (np.ones(owner.size), (owner, np.arange(owner.size))), shape=(rc.shape[0], owner.size)
        )
        out[c0 : c0 + rc.shape[0]] += gather @ I
    # Reciprocal space, half of k-space doubled.
    H = np.floor(k_cut * L / (2.0 * math.pi)).astype(int)
    g = np.meshgrid(*[np.arange(-k, k + 1) for k in H], indexing="ij")
    hkl = np.stack([x.ravel() for x in g], axis=1)
    half = (
        (hkl[:, 0] > 0)
        | ((hkl[:, 0] == 0) & (hkl[:, 1] > 0))
        | ((hkl[:, 0] == 0) & (hkl[:, 1] == 0) & (hkl[:, 2] > 0))
    )
    kv = 2.0 * math.pi * hkl[half] / L
    k2 = np.einsum("ij,ij->i", kv, kv)
    kv, k2 = kv[k2 <= k_cut**2], k2[k2 <= k_cut**2]
    if kv.shape[0]:
        w = 2.0 * 4.0 * math.pi / V * np.exp(-k2 / (4.0 * alpha**2)) / k2
        Rk = solid_harmonics(kv, degree, "regular") * w[:, None]
        phase = r @ kv.T
        cs = np.cos(phase) @ Rk
        sn = np.sin(phase) @ Rk
        for n, a, b in slices:
            # Re[(-i)^n e^(i theta)]: cos, sin, -cos, -sin for n = 0, 1, 2, 3 (mod 4).
            part = (cs, sn, -cs, -sn)[n % 4][:, a:b]
            out[:, a:b] += part / _double_factorial_odd(n)
    return out


@lru_cache(maxsize=8)
def translation_tensor(order: int):
    """Sparse map from lattice sums to the multipole-to-local translation matrix.

    For a source at ``c_j`` and target centre ``c_i = c_j + r`` the regular coefficients
    ``V`` at ``c_i`` of the potential ``sum u_s I_s(x - c_j)`` are ``V = T(r) u`` with
    ``T_ts(r) = sum_p C[ts, p] I_(n, p)(r)``, ``n = l_t + l_s`` (each entry is a harmonic of
    degree ``n`` in ``r``, homogeneous of degree ``-(n+1)``). Because the map is linear in
    the ``I_(n, p)``, the periodic translation is ``C`` applied to the lattice sums.

    ``C`` is found by least squares from the rotate-translate-rotate translation (the
    open-boundary kernel) at ``4L + 11`` directions spread over the sphere, and
    checked there to 1e-10; the dipole-dipole block (degree 2) is left out.

    Returns
    -------
    scipy.sparse.csr_matrix
        Shape ``(M * M, n_unknowns(2 L))``, ``M = n_unknowns(L)``; row ``t * M + s``.
    """
    import scipy.sparse as sp

    from ._harmonics import quarter_turn_blocks
    from ._kernels import multipole_near_field

    L = int(order)
    M = n_unknowns(L)
    F = n_unknowns(2 * L)
    P = 4 * L + 11
    # Fibonacci points on the sphere.
    k = np.arange(P) + 0.5
    ct = 1.0 - 2.0 * k / P
    ph = math.pi * (1.0 + math.sqrt(5.0)) * k
    st = np.sqrt(1.0 - ct**2)
    dirs = np.stack([st * np.cos(ph), st * np.sin(ph), ct], axis=1)
    T = np.empty((P, M, M))
    XB, XTB, A = quarter_turn_blocks(L), quarter_turn_blocks(L, transpose=True), _kernel_axial(L + 1)
    # Targets at the directions, one source at the origin carrying the identity (one
    # right-hand side per source coefficient); chunks of targets run in parallel.
    chunk = max(1, min(P, int(2e8 // (8 * M * M))))
    for c0 in range(0, P, chunk):
        c1 = min(P, c0 + chunk)
        nt = c1 - c0
        pos = np.ascontiguousarray(np.concatenate([dirs[c0:c1], np.zeros((1, 3))]))
        x = np.zeros((nt + 1, M, M))
        x[nt] = np.eye(M)
        out = np.zeros_like(x)
        orders = np.full(nt + 1, L, dtype=np.int64)
        offsets = np.concatenate([np.arange(nt + 1), [nt]]).astype(np.int64)
        nb = np.full(nt, nt, dtype=np.int64)
        po = np.full(nt, L, dtype=np.int64)
        multipole_near_field(pos, orders, offsets, nb, po, XB, XTB, A, x, out)
        T[c0:c1] = -out[:nt]
    Y = solid_harmonics(dirs, 2 * L, "irregular")
    deg = np.concatenate([np.full(2 * l + 1, l) for l in range(1, L + 1)])
    nsum = deg[:, None] + deg[None, :]
    rows, cols, vals = [], [], []
    for n, a, b in degree_slices(2 * L):
        if n < 3:
            continue
        tt, ss = np.nonzero(nsum == n)
        if tt.size == 0:
            continue
        rhs = T[:, tt, ss]
        coef = np.linalg.pinv(Y[:, a:b]) @ rhs
        resid = np.max(np.abs(Y[:, a:b] @ coef - rhs)) if rhs.size else 0.0
        scale = max(float(np.max(np.abs(rhs))), 1e-300)
        if resid > 1e-10 * scale:
            raise RuntimeError(f"translation tensor: degree {n} fit off by {resid / scale:.2e}")
        big = np.abs(coef) > 1e-12 * float(np.max(np.abs(coef)))
        pq, e = np.nonzero(big)
        rows.append(tt[e] * M + ss[e])
        cols.append(a + pq)
        vals.append(coef[pq, e])
    if not rows:
        return sp.csr_matrix((M * M, F))
    return sp.csr_matrix(
        (np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(M * M, F)
    )


_REFINE_CAP = 30  # largest periodic order: the translation tensor's fit grows as L^5
MAX_COUPLING_ENTRIES = 4e8


class LatticeMultipoleOperator(MultipoleOperator):
    """Spheres in a periodic box coupled to multipole order ``L`` through lattice sums.

    The periodic counterpart of :class:`MultipoleOperator`, built by
    ``make_operator(scene, "multipole")`` for a periodic scene. Every pair of bodies
    couples as point dipoles through the Ewald backend (conducting outer boundary, own
    images included); near pairs (a body and its own images included, so a lattice of
    one sphere per cell works) add the couplings of degree ``l + l' >= 3`` summed over
    all periodic images, ``T_ij = C S(c_i - c_j)`` with the lattice sums ``S`` of
    :func:`lattice_sums` and the translation tensor ``C`` of :func:`translation_tensor`.
    These sums converge absolutely, so the higher multipoles add no shape dependence.

    Parameters
    ----------
    scene : Scene
        ``boundary = "periodic"``. Non-spherical bodies stay at dipole level.
    order, accuracy, check_error, adaptive
        As for :class:`MultipoleOperator` (orders from the two-sphere model at each
        pair's nearest image; the solved multipoles add the pairs they reach).
    max_order : int
        Largest degree ``"auto"`` may use; clipped to 30 (the translation tensor's fit
        grows as ``L^5``). A fixed ``order`` above 30 is an error.

    Notes
    -----
    The near-pair couplings are stored as one sparse matrix (``sum over pairs of
    L_i (L_i + 2) L_j (L_j + 2)`` numbers), built once; applies are a sparse product plus
    the Ewald dipole apply. Pairs couple at their lattice sum, i.e. through every image
    at once; a pair is selected by its nearest image.
    """

    backend = "multipole"
    _order_cap = _REFINE_CAP

    def __init__(
        self,
        scene,
        order="auto",
        accuracy=1e-6,
        max_order=24,
        dipole_backend="ewald",
        check_error=True,
        adaptive=True,
    ):
        InteractionOperator.__init__(self, scene)
        if scene.boundary != "periodic":
            raise InputError("backend: the lattice-sum multipole operator needs a periodic scene", "backend")
        if dipole_backend not in ("ewald", "auto"):
            raise InputError(
                f"dipole_backend: periodic multipoles sum dipoles by 'ewald', got {dipole_backend!r}",
                "dipole_backend",
            )
        self.box = np.ascontiguousarray(scene.box, dtype=np.float64)
        pos = np.mod(np.asarray(scene.positions, dtype=np.float64), self.box)
        pos[pos >= self.box] = 0.0
        self._positions = np.ascontiguousarray(pos)
        from .._validate import as_int

        max_order = min(as_int(max_order, "max_order", minimum=1, maximum=200), _REFINE_CAP)
        self._configure(order, accuracy, max_order, check_error, adaptive, _REFINE_CAP)
        self._setup_kernels()
        self._dipole = make_operator(scene, "ewald", accuracy=min(1e-12, 0.01 * self.accuracy))

    # -- geometry -------------------------------------------------------------------
    def _min_image(self, dv):
        return dv - self.box * np.round(dv / self.box)

    def _tree(self):
        from scipy.spatial import cKDTree

        return cKDTree(self._positions, boxsize=self.box)

    def _pair_distance(self, i, j):
        i, j = np.asarray(i), np.asarray(j)
        d = np.linalg.norm(self._min_image(self._positions[i] - self._positions[j]), axis=1)
        return np.where(i == j, float(self.box.min()), d)

    def _candidate_pairs(self, radius):
        """Pairs ``i < j`` at their nearest image, and each body with its own nearest image."""
        n = self.n_bodies
        if n > 1:
            cand = self._tree().query_pairs(radius, output_type="ndarray").reshape(-1, 2).astype(np.int64)
        else:
            cand = np.zeros((0, 2), dtype=np.int64)
        i, j = cand[:, 0], cand[:, 1]
        if float(self.box.min()) < radius:
            own = np.arange(n, dtype=np.int64)
            i, j = np.concatenate([i, own]), np.concatenate([j, own])
        return i, j, self._pair_distance(i, j)

    # -- coupling -------------------------------------------------------------------
    def _setup_kernels(self, targets=None):
        import scipy.sparse as sp

        if targets is not None:
            raise NotImplementedError("row-restricted couplings are not built for periodic scenes")

        n = self.n_bodies
        lmax = int(self.orders.max())
        M = self.n_per_body
        rows, cols, vals = [], [], []
        nb_t, nb_s, nb_o = [], [], []
        if lmax >= 2 and self.pairs.shape[0]:
            C = translation_tensor(lmax)
            i, j = self.pairs[:, 0], self.pairs[:, 1]
            lt = np.minimum(self.orders[i], self.pair_orders)
            ls = np.minimum(self.orders[j], self.pair_orders)
            keep = (np.maximum(lt, ls) >= 2) & (np.minimum(lt, ls) >= 1)
            i, j, lt, ls = i[keep], j[keep], lt[keep], ls[keep]
            size = int(np.sum(lt * (lt + 2) * ls * (ls + 2) * np.where(i == j, 1, 2)))
            if size > MAX_COUPLING_ENTRIES:
                raise InputError(
                    f"backend: periodic multipoles would store {size:.3g} coupling numbers for "
                    f"{i.size} pairs (limit {MAX_COUPLING_ENTRIES:.1g}, about 12 bytes each); use a smaller "
                    "cell, a looser accuracy, a lower max_order, or the dipole model",
                    "backend",
                )
            disp = self._positions[i] - self._positions[j]
            sign_f = np.concatenate([np.full(2 * l + 1, (-1.0) ** l) for l in range(1, 2 * lmax + 1)])
            F = n_unknowns(2 * lmax)
            tol = min(1e-10, 0.01 * self.accuracy)
            for top in np.unique(lt + ls):
                sel = np.nonzero(lt + ls == top)[0]
                S = np.zeros((sel.size, F))
                S[:, : n_unknowns(int(top))] = lattice_sums(disp[sel], self.box, int(top), accuracy=tol)
                for e, row in zip(sel, S, strict=True):
                    a, b, mt, ms = int(i[e]), int(j[e]), n_unknowns(int(lt[e])), n_unknowns(int(ls[e]))
                    T = (C @ row).reshape(M, M)
                    blocks = [(a, b, T[:mt, :ms])]
                    if a != b:
                        # S(-r) = (-1)^n S(r): the reverse block, by the lattice's inversion symmetry.
                        Tr = (C @ (row * sign_f)).reshape(M, M)
                        blocks.append((b, a, Tr[:ms, :mt]))
                    for t_, s_, B in blocks:
                        tt, ss = np.nonzero(B)
                        rows.append(t_ * M + tt)
                        cols.append(s_ * M + ss)
                        vals.append(B[tt, ss])
                    nb_t += [a, b] if a != b else [a]
                    nb_s += [b, a] if a != b else [a]
                    nb_o += [max(lt[e], ls[e])] * (2 if a != b else 1)
        if rows:
            self._coupling = sp.csr_matrix(
                (np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n * M, n * M)
            )
        else:
            self._coupling = sp.csr_matrix((n * M, n * M))
        tgt = np.asarray(nb_t, dtype=np.int64)
        order = np.argsort(tgt, kind="stable")
        self._neighbours = np.ascontiguousarray(np.asarray(nb_s, dtype=np.int64)[order])
        self._nb_orders = np.ascontiguousarray(np.asarray(nb_o, dtype=np.int64)[order])
        self._offsets = np.zeros(n + 1, dtype=np.int64)
        np.cumsum(np.bincount(tgt, minlength=n), out=self._offsets[1:])

    def _apply(self, x):
        n, m, k = x.shape
        out = np.zeros_like(x)
        out[:, :3] = self._dipole._apply(np.ascontiguousarray(x[:, :3]))
        if self._coupling.nnz:
            out -= (self._coupling @ x.reshape(n * m, k)).reshape(n, m, k)
        return out

    @property
    def coupling_entries(self) -> int:
        """Stored numbers of the near-pair lattice coupling."""
        return int(self._coupling.nnz)

    def describe(self) -> str:
        return (
            f"periodic multipole ({self.order_rule}, accuracy {self.accuracy:g}): orders up to "
            f"{int(self.orders.max())}, {self.pairs.shape[0]} near pairs (own images included) by lattice "
            f"sums, {self.coupling_entries} coupling entries; dipole part Ewald"
        )

    # -- what the lattice operator does not do --------------------------------------
    def near_potential(self, x, extra_degrees=1):
        raise InputError(
            "forces: multipole forces are not available in a periodic box yet (solve with the dipole "
            "model for periodic forces, or use an open cluster)",
            "forces",
        )

    def _point_tree(self, pts, radius):
        """Points wrapped into the box, their periodic tree; reaches within half the box."""
        from scipy.spatial import cKDTree

        wrapped = np.mod(pts, self.box)
        wrapped[wrapped >= self.box] = 0.0
        return wrapped, cKDTree(wrapped, boxsize=self.box), np.minimum(radius, 0.5 * float(self.box.min()))

    def interior_field_at(self, body, points, x, incident=None):
        rel = self._min_image(np.asarray(points, dtype=float) - self._positions[body])
        return super().interior_field_at(body, self._positions[body] + rel, x, incident)
