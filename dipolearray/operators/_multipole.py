"""Multipole coupling between spheres beyond the point dipole.

Each sphere carries the real coefficients ``u_lm`` (``1 <= l <= L_i``) of its induced
potential ``sum u_lm I_lm(r - c_i)`` (basis in ``_harmonics.py``; ``u_1`` is the dipole
moment). In the generalised field ``F_lm = -V_lm`` (minus the coefficients of the regular
expansion of the incident potential, so ``F_1`` is the incident field) the equations keep
the point-dipole form ``u_i = K_i (F0_i + sum_j G_ij u_j)``, with the response of a sphere
diagonal in ``(l, m)``.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from .._validate import as_int, as_positive
from ..errors import InputError
from ._base import InteractionOperator, make_operator, register_backend
from ._harmonics import axial_coefficients, degree_slices, n_unknowns, quarter_turn_blocks

#: Default largest multipole degree the automatic order choice may use.
MAX_ORDER = 40

#: Gap bins per decade of the pair model (gaps are rounded down to a bin edge).
_BINS_PER_DECADE = 12


def sphere_response(l, eps_inclusion, eps_host):
    """Response ``k_l`` of a sphere to an incident regular field of degree ``l``.

    Parameters
    ----------
    l : int or ndarray of int
    eps_inclusion, eps_host : complex or float

    Returns
    -------
    complex or float
        ``k_l = l (eps_i - eps_h) / (l eps_i + (l + 1) eps_h)``: an incident potential
        ``V r^l Y_lm`` induces the outside potential ``-k_l a^(2l+1) V r^-(l+1) Y_lm``.

    Notes
    -----
    From continuity of the potential and of the normal displacement at ``r = a``
    (Stratton, J. A. (1941), Electromagnetic Theory, sec. 3.23; the ``l = 1`` case is
    Jackson, Classical Electrodynamics, 3rd ed., eq. 4.54). A perfect conductor
    (``eps_i -> inf``) has ``k_l = 1``.
    """
    l = np.asarray(l)  # noqa: E741
    return l * (eps_inclusion - eps_host) / (l * eps_inclusion + (l + 1) * eps_host)


class BodyResponse:
    """Block-diagonal response of the bodies in multipole unknowns.

    The dipole block of every body is its ``(3, 3)`` polarizability (so spheroids keep
    their tensor); degrees ``l >= 2`` are diagonal (``k_l a^(2l+1)`` for spheres up to
    their order, zero above it and for non-spherical bodies).

    Attributes
    ----------
    dipole : (N, 3, 3) ndarray
    higher : (N, M - 3) ndarray
    """

    def __init__(self, dipole, higher):
        self.dipole = np.asarray(dipole)
        self.higher = np.asarray(higher)

    @property
    def dtype(self):
        """Common dtype of the blocks."""
        return np.result_type(self.dipole, self.higher)

    def apply(self, x):
        """``K x`` for ``x`` of shape ``(N, M, K)``."""
        out = np.empty(x.shape, dtype=np.result_type(self.dtype, x))
        out[:, :3] = np.einsum("nij,njk->nik", self.dipole, x[:, :3])
        out[:, 3:] = self.higher[:, :, None] * x[:, 3:]
        return out

    def astype(self, dtype):
        """The same response with blocks cast to ``dtype``."""
        return BodyResponse(self.dipole.astype(dtype), self.higher.astype(dtype))

    def solve(self, x):
        """Least-squares ``K^-1 x`` body by body (zero where the response is zero)."""
        out = np.zeros(x.shape, dtype=np.result_type(self.dtype, x))
        for i in range(x.shape[0]):
            out[i, :3] = np.linalg.lstsq(self.dipole[i], x[i, :3], rcond=None)[0]
        nz = self.higher != 0
        safe = np.where(nz, self.higher, 1.0)
        out[:, 3:] = np.where(nz[:, :, None], x[:, 3:] / safe[:, :, None], 0.0)
        return out


def _log_axial(order):
    """``log|A[j, l, m]|`` and its sign, for the pair model at high order."""
    from scipy.special import gammaln

    j = np.arange(order + 1)[:, None, None]
    l = np.arange(order + 1)[None, :, None]  # noqa: E741
    m = np.arange(order + 1)[None, None, :]
    ok = (m <= j) & (m <= l)
    with np.errstate(invalid="ignore"):
        la = gammaln(l + j + 1) - 0.5 * (
            gammaln(np.maximum(l - m, 0) + 1)
            + gammaln(l + m + 1)
            + gammaln(np.maximum(j - m, 0) + 1)
            + gammaln(j + m + 1)
        )
    sign = np.where((j + m + 0 * l) % 2 == 0, 1.0, -1.0)
    return np.where(ok, la, -np.inf), sign


@lru_cache(maxsize=8)
def _log_axial_cached(order):
    return _log_axial(order)


def pair_dipoles(distance, radii, eps, eps_host, order, m):
    """Dipole moments of two spheres on the z axis in a unit field, multipoles to ``order``.

    The two-sphere problem separates in ``m``: ``m = 0`` is a field along the line of
    centres, ``m = 1`` a field across it. Solved densely in the symmetric scaled
    unknowns ``u_l / sqrt(k_l a^(2l+1))`` with the coupling computed in logarithms, so
    orders of several hundred are fine.

    Parameters
    ----------
    distance : float
        Centre distance (sphere 1 at the origin, sphere 2 at ``+distance e_z``).
    radii : (2,) sequence of float
    eps : (2,) sequence of complex or float
        Relative permittivities of the spheres.
    eps_host : complex or float
    order : int
    m : {0, 1}

    Returns
    -------
    (2,) ndarray
        Dipole moment (component along the field) of each sphere.
    """
    la, sign = _log_axial_cached(int(order))
    ls = np.arange(max(1, m), order + 1)
    a1, a2 = float(radii[0]), float(radii[1])
    k1 = sphere_response(ls, eps[0], eps_host) * 1.0
    k2 = sphere_response(ls, eps[1], eps_host) * 1.0
    s1 = np.sqrt(k1.astype(complex))
    s2 = np.sqrt(k2.astype(complex))
    jj, ll = np.meshgrid(ls, ls, indexing="ij")
    logd = np.log(distance)
    # V2_j = sum_l A[j,l,m] u1_l / d^(l+j+1); symmetric scaling by a1^(l+1/2) a2^(j+1/2).
    mag = np.exp(la[jj, ll, m] + (ll + 0.5) * np.log(a1) + (jj + 0.5) * np.log(a2) - (ll + jj + 1) * logd)
    g21 = sign[jj, ll, m] * mag  # target 2 (rows j), source 1 (columns l)
    # Target 1 at -d e_z from source 2: parity gives A (-1)^(l+j), radii swapped.
    mag12 = np.exp(la[jj, ll, m] + (ll + 0.5) * np.log(a2) + (jj + 0.5) * np.log(a1) - (ll + jj + 1) * logd)
    g12 = sign[jj, ll, m] * np.where((ll + jj) % 2 == 0, 1.0, -1.0) * mag12
    n = ls.size
    M = np.eye(2 * n, dtype=complex)
    # y = K^-1/2 u:  y1 + s1 (G12 s2 y2) = s1 F0  (F = -V).
    M[:n, n:] = s1[:, None] * g12 * s2[None, :]
    M[n:, :n] = s2[:, None] * g21 * s1[None, :]
    rhs = np.zeros(2 * n, dtype=complex)
    rhs[0] = s1[0] * a1**1.5
    rhs[n] = s2[0] * a2**1.5
    y = np.linalg.solve(M, rhs)
    p1 = s1[0] * a1**1.5 * y[0]
    p2 = s2[0] * a2**1.5 * y[n]
    out = np.array([p1, p2])
    if not (np.iscomplexobj(eps[0]) or np.iscomplexobj(eps[1]) or np.iscomplexobj(eps_host)):
        out = out.real
    return out


def order_grid(max_order):
    """Orders the automatic choice may use: every order to 8, then steps growing with L."""
    grid = list(range(1, min(8, max_order) + 1))
    L = 8
    while L < max_order:
        L = min(max_order, L + max(2, L // 4))
        grid.append(L)
    return grid


def pair_model(gap, eps, eps_host, accuracy, max_order=MAX_ORDER):
    """Order needed by two equal unit spheres at ``gap`` and the point-dipole error there.

    Parameters
    ----------
    gap : float
        Surface gap in sphere radii.
    eps : (2,) sequence
        Relative permittivities of the two spheres.
    eps_host : complex or float
    accuracy : float
        Relative accuracy wanted on the dipole moments of the pair.
    max_order : int

    Returns
    -------
    order : int
        Smallest order of :func:`order_grid` such that it and every larger grid order
        (up to convergence) give both dipole moments, for the field along and across
        the line of centres, within ``accuracy`` of the converged solution.
    dipole_error : float
        Relative error of the point-dipole (``L = 1``) moments.
    resolved : bool
        Whether the moments converged (three successive grid orders within
        ``accuracy / 10`` of each other) at or below ``max_order``.
    """
    d = 2.0 + float(gap)
    radii = (1.0, 1.0)
    grid = order_grid(max_order)
    resolved = True
    worst = np.zeros(len(grid))
    for m in (0, 1):
        vals = []
        for L in grid:
            vals.append(pair_dipoles(d, radii, eps, eps_host, L, m))
            if len(vals) >= 3:
                a, b, c = vals[-3:]
                scale = max(np.max(np.abs(c)), 1e-300)
                if max(np.max(np.abs(a - c)), np.max(np.abs(b - c))) <= 0.1 * accuracy * scale:
                    break
        else:
            resolved = False
        ref = vals[-1]
        scale = max(np.max(np.abs(ref)), 1e-300)
        for g, v in enumerate(vals):
            worst[g] = max(worst[g], np.max(np.abs(v - ref)) / scale)
    bad = np.nonzero(worst > accuracy)[0]
    order = grid[0] if bad.size == 0 else grid[min(int(bad[-1]) + 1, len(grid) - 1)]
    return int(order), float(worst[0]), resolved


@lru_cache(maxsize=4096)
def _pair_model_cached(gap_bin, eps_pair, eps_host, accuracy, max_order):
    gap = 10.0 ** (gap_bin / _BINS_PER_DECADE)
    return pair_model(gap, eps_pair, eps_host, accuracy, max_order)


def _gap_bin(gap):
    """Bin index rounding the gap down (a smaller gap never needs a lower order)."""
    return int(np.floor(np.log10(max(gap, 1e-9)) * _BINS_PER_DECADE))


def dipole_cutoff_gap(eps_pair, eps_host, accuracy, max_order=MAX_ORDER):
    """Smallest binned gap (in radii of the smaller sphere) at which the point dipole suffices."""
    hi = 4 * _BINS_PER_DECADE  # gap 1e4 radii
    lo = -9 * _BINS_PER_DECADE
    if _pair_model_cached(hi, eps_pair, eps_host, accuracy, max_order)[0] > 1:
        return 10.0 ** (hi / _BINS_PER_DECADE)
    while hi - lo > 1:
        mid = (hi + lo) // 2
        if _pair_model_cached(mid, eps_pair, eps_host, accuracy, max_order)[0] > 1:
            lo = mid
        else:
            hi = mid
    return 10.0 ** (hi / _BINS_PER_DECADE)


def _geometric_order(ratio, accuracy, cap):
    """Largest degree ``l`` with ``(l + 2) ratio^(l + 1) > accuracy`` (at least 1), capped."""
    ls = np.arange(1, cap + 1)
    ok = (ls[None, :] + 2) * np.asarray(ratio)[:, None] ** (ls[None, :] + 1) > accuracy
    last = np.where(ok.any(axis=1), cap - np.argmax(ok[:, ::-1], axis=1), 1)
    return last.astype(np.int64)


LOW_ORDER = 3  # pairs up to this degree couple through the harmonic-tensor kernel (crossover measured)


@lru_cache(maxsize=16)
def _kernel_axial(order):
    """Axial table laid out ``[m, j, l]`` for the kernel, dipole-dipole entries zeroed (read-only, cached)."""
    A = np.ascontiguousarray(axial_coefficients(order, order).transpose(2, 0, 1))
    A[:2, 1, 1] = 0.0
    A.setflags(write=False)
    return A


def _key(value):
    return complex(value) if np.iscomplexobj(value) else float(value)


@register_backend("multipole")
class MultipoleOperator(InteractionOperator):
    """Spheres coupled to multipole order ``L`` near each other, as point dipoles far apart.

    Every pair of bodies couples through the point-dipole operator of the scene (direct
    or fast multipole, chosen as for dipoles); pairs whose gap needs more than the dipole
    get the full multipole coupling between their degrees, by rotating the pair axis onto
    z, translating along it and rotating back (O(L^3) per pair).

    Parameters
    ----------
    scene : Scene
        Open boundary. Non-spherical bodies stay at dipole level.
    order : int or "auto"
        ``"auto"``: every near pair gets the order its gap and contrast need for
        ``accuracy`` (from the two-sphere model :func:`pair_model`), every sphere the
        largest order of its pairs. An integer ``L``: every sphere with a near neighbour
        carries degree ``L`` and all its near pairs couple to ``L`` (``L = 1`` is the
        point-dipole model).
    accuracy : float
        Relative accuracy wanted on the dipole moments; selects the near pairs (gap
        below :func:`dipole_cutoff_gap`) and, for ``"auto"``, the orders.
    max_order : int
        Largest degree ``"auto"`` may use.
    dipole_backend : str
        Backend of the all-pairs dipole part (``"auto"``, ``"direct"`` or ``"fmm"``).
    adaptive : bool
        Whether :func:`dipolearray.solvers.solve` adds the pairs that the solved
        multipoles show are needed (:meth:`extended`) and solves again (up to three
        rounds).
    check_error : bool
        Whether :func:`dipolearray.solvers.solve` follows the solve with the a posteriori
        model-error estimate (a second solve with the closest pairs refined), recorded
        in ``Solution.extra["model_error"]``.

    Attributes
    ----------
    orders : (N,) ndarray of int
        Degree carried by each body.
    pairs : (P, 2) ndarray of int
        Near pairs ``i < j``.
    pair_orders : (P,) ndarray of int
    closest_gap : float
        Smallest surface gap between spheres (reduced length), ``inf`` when N < 2.
    unresolved_pairs : int
        Near pairs whose order hit ``max_order`` before the pair model converged.

    References
    ----------
    Pinchon, D. and Hoggan, P. E. (2007), J. Phys. A 40, 1597 (real rotations);
    Greengard, L. and Rokhlin, V. (1997), Acta Numerica 6, 229 (rotate-translate-rotate
    for the translation operators of the fast multipole method).
    """

    def __init__(
        self,
        scene,
        order="auto",
        accuracy=1e-6,
        max_order=MAX_ORDER,
        dipole_backend="auto",
        check_error=True,
        adaptive=True,
    ):
        super().__init__(scene)
        if scene.boundary != "open":
            raise InputError(
                "backend: MultipoleOperator sums an open boundary; for a periodic scene "
                "make_operator(scene, 'multipole') builds the lattice-sum operator",
                "backend",
            )
        self._positions = np.ascontiguousarray(scene.positions, dtype=np.float64)
        self._configure(order, accuracy, max_order, check_error, adaptive, 200)
        self._setup_kernels()
        dip_opts = {"accuracy": 0.1 * self.accuracy} if dipole_backend in ("auto", "fmm") else {}
        self._dipole = make_operator(scene, dipole_backend, **dip_opts)

    def _configure(self, order, accuracy, max_order, check_error, adaptive, order_limit):
        """Validate the settings, choose the near pairs and the orders."""
        self.check_error = bool(check_error)
        self.adaptive = bool(adaptive)
        self.n_added = 0
        self.accuracy = as_positive(accuracy, "accuracy")
        if not 0 < self.accuracy < 1:
            raise InputError(f"accuracy: expected 0 < accuracy < 1, got {accuracy}", "accuracy")
        self.max_order = as_int(max_order, "max_order", minimum=1, maximum=order_limit)
        if isinstance(order, str):
            if order != "auto":
                raise InputError(f"order: expected 'auto' or an integer >= 1, got {order!r}", "order")
            fixed = None
        else:
            fixed = as_int(order, "order", minimum=1, maximum=order_limit)
        self.order_rule = "auto" if fixed is None else f"uniform {fixed}"
        self._select_pairs(fixed)
        self.n_per_body = n_unknowns(int(self.orders.max()))

    _order_cap = 10**6  # largest degree :meth:`refined` may raise a body to

    # -- geometry -------------------------------------------------------------------
    def _candidate_pairs(self, radius):
        """Pairs ``i < j`` closer than ``radius`` (centre to centre) and their distances."""
        from scipy.spatial import cKDTree

        if self.n_bodies > 1:
            cand = cKDTree(self._positions).query_pairs(radius, output_type="ndarray")
        else:
            cand = np.zeros((0, 2), dtype=np.int64)
        cand = cand.reshape(-1, 2).astype(np.int64)
        i, j = cand[:, 0], cand[:, 1]
        return i, j, np.linalg.norm(self._positions[i] - self._positions[j], axis=1)

    def _tree(self):
        """k-d tree of the body centres (periodic where the scene is)."""
        from scipy.spatial import cKDTree

        return cKDTree(self._positions)

    def _pair_distance(self, i, j):
        """Centre distances of pairs ``(i, j)``."""
        return np.linalg.norm(self._positions[i] - self._positions[j], axis=1)

    def _min_image(self, dv):
        """Separation vectors as the geometry sees them (identity in an open scene)."""
        return dv

    def _select_pairs(self, fixed):
        scene = self.scene
        n = scene.n_bodies
        spherical = np.asarray(scene.is_spherical, dtype=bool)
        radii = np.asarray(scene.semi_axes)[:, 0].astype(float)
        bound = np.asarray(scene.bounding_radii, dtype=float)
        eps = np.asarray(scene.eps_inclusion)
        eh = _key(scene.eps_host)
        acc = self.accuracy
        pops = np.asarray(scene.population_index)
        upops = np.unique(pops)
        pop_eps = {int(a): _key(eps[pops == a][0]) for a in upops}

        def pair_key(a, b):
            ea, eb = pop_eps[int(a)], pop_eps[int(b)]
            return (ea, eb) if str(ea) <= str(eb) else (eb, ea)

        # Cut-off gap per population pair, from the two-sphere model.
        npop = int(pops.max()) + 1 if n else 1
        cutmat = np.zeros((npop, npop))
        for a in upops:
            for b in upops:
                cutmat[a, b] = dipole_cutoff_gap(pair_key(a, b), eh, acc, self.max_order)
        rmax = float(bound.max()) if n else 0.0
        gmax = float(cutmat.max())
        i, j, d = self._candidate_pairs(2.0 * rmax + gmax * rmax)
        gap = d - bound[i] - bound[j]
        rmin = np.minimum(bound[i], bound[j])
        self.closest_gap = float(gap.min()) if gap.size else float("inf")
        rel = gap / np.where(rmin > 0, rmin, 1.0)
        keep = rel < cutmat[pops[i], pops[j]]
        i, j, d, rel, rmin = i[keep], j[keep], d[keep], rel[keep], rmin[keep]
        both = spherical[i] & spherical[j]
        bins = np.floor(np.log10(np.maximum(rel, 1e-9)) * _BINS_PER_DECADE).astype(np.int64)
        rows = np.stack([pops[i], pops[j], bins], axis=1)
        L = np.ones(i.size, dtype=np.int64)
        ok = np.ones(i.size, dtype=bool)
        if i.size:
            uniq, inverse = np.unique(rows, axis=0, return_inverse=True)
            inverse = np.asarray(inverse).reshape(-1)
            tab_L = np.empty(uniq.shape[0], dtype=np.int64)
            tab_ok = np.empty(uniq.shape[0], dtype=bool)
            for u, (pa, pb, b) in enumerate(uniq):
                Lu, _err, oku = _pair_model_cached(int(b), pair_key(pa, pb), eh, acc, self.max_order)
                tab_L[u], tab_ok[u] = Lu, oku
            L, ok = tab_L[inverse], tab_ok[inverse]
        near = L > 1
        cap = self.max_order if fixed is None else fixed
        if fixed is not None:
            L = np.full(i.size, fixed, dtype=np.int64)
        safe_rmin = np.where(rmin > 0, rmin, 1.0)

        def want(c):
            # A larger sphere must resolve the smaller one's field: scale its order by the size ratio.
            scaled = np.minimum(np.ceil(L * radii[c] / safe_rmin - 1e-9).astype(np.int64), cap)
            w = np.where((fixed is not None) | ~both, L, scaled)
            return np.where(spherical[c], w, 1)

        wi, wj = want(i), want(j)
        body = np.ones(n, dtype=np.int64)
        np.maximum.at(body, i[near], wi[near])
        np.maximum.at(body, j[near], wj[near])
        self.pairs = np.stack([i[near], j[near]], axis=1).astype(np.int64)
        po = np.maximum(wi, wj)[near].astype(np.int64)
        self.orders = body
        if fixed is None:
            # A sphere that carries a high order because of one close partner must also
            # see its other neighbours to that order (its strong response at high degree
            # amplifies them): couple each pair up to the larger body order, as far as the
            # geometric factor (l + 2) (a_max / d)^(l + 1) stays above the accuracy.
            ii, jj = i[near], j[near]
            dist = d[near]
            ratio = np.maximum(bound[ii], bound[jj]) / dist
            geo = _geometric_order(ratio, acc, cap)
            po = np.maximum(po, np.minimum(np.maximum(body[ii], body[jj]), geo))
        self.pair_orders = po
        self.unresolved_pairs = int(np.count_nonzero(near & ~ok)) if fixed is None else 0

    def _setup_kernels(self, targets=None):
        """Directed near-pair lists of the kernels; ``targets`` (mask) keeps only those rows."""
        lmax = int(self.orders.max())
        n = self.n_bodies
        i, j = self.pairs[:, 0], self.pairs[:, 1]
        tgt = np.concatenate([i, j])
        src = np.concatenate([j, i])
        po = np.concatenate([self.pair_orders, self.pair_orders])
        if targets is not None:
            keep = np.asarray(targets, dtype=bool)[tgt]
            tgt, src, po = tgt[keep], src[keep], po[keep]
        order = np.argsort(tgt, kind="stable")
        self._neighbours = np.ascontiguousarray(src[order], dtype=np.int64)
        self._nb_orders = np.ascontiguousarray(po[order], dtype=np.int64)
        self._offsets = np.zeros(n + 1, dtype=np.int64)
        np.cumsum(np.bincount(tgt, minlength=n), out=self._offsets[1:])
        self._XB = quarter_turn_blocks(max(lmax, 1))
        self._XTB = quarter_turn_blocks(max(lmax, 1), transpose=True)
        self._A = _kernel_axial(lmax + 1)
        # The apply splits the directed pairs: low orders by harmonics and the sparse
        # translation tensor (per directed pair with 3 fields: 0.6 against 1.9 us at order 2,
        # 1.8 against 3.0 at 3, even at 4, slower above; measured), the rest by rotations.
        tgt_s = tgt[order]
        lt = np.minimum(self.orders[tgt_s], self._nb_orders)
        ls = np.minimum(self.orders[self._neighbours], self._nb_orders)
        low = (np.maximum(lt, ls) <= LOW_ORDER) & (np.minimum(lt, ls) >= 1)

        def lists(mask):
            off = np.zeros(n + 1, dtype=np.int64)
            np.cumsum(np.bincount(tgt_s[mask], minlength=n), out=off[1:])
            return off, np.ascontiguousarray(self._neighbours[mask])

        self._hi_offsets, self._hi_neighbours = lists(~low)
        self._hi_orders = np.ascontiguousarray(self._nb_orders[~low])
        self._lo_offsets, self._lo_neighbours = lists(low)
        self._lo_lt = np.ascontiguousarray(lt[low], dtype=np.int64)
        self._lo_ls = np.ascontiguousarray(ls[low], dtype=np.int64)
        if np.any(low):
            from ._lattice import translation_tensor

            C = translation_tensor(LOW_ORDER)
            self._lo_tensor = (
                C.indptr.astype(np.int64),
                C.indices.astype(np.int64),
                C.data,
                n_unknowns(LOW_ORDER),
            )

    # -- contract -------------------------------------------------------------------
    def _apply(self, x):
        out = np.zeros_like(x)
        out[:, :3] = self._dipole._apply(np.ascontiguousarray(x[:, :3]))
        self._near_apply(x, out)
        return out

    def _near_apply(self, x, out):
        """Add the near pairs' multipole coupling (beyond dipole-dipole) of ``x`` to ``out``."""
        from ._kernels import multipole_low_order_field, multipole_near_field

        if self._hi_neighbours.size:
            multipole_near_field(
                self._positions, self.orders, self._hi_offsets, self._hi_neighbours, self._hi_orders,
                self._XB, self._XTB, self._A, x, out,
            )  # fmt: skip
        if self._lo_neighbours.size:
            indptr, indices, data, mc = self._lo_tensor
            multipole_low_order_field(
                self._positions, self._lo_offsets, self._lo_neighbours, self._lo_lt, self._lo_ls,
                indptr, indices, data, mc, x, out,
            )  # fmt: skip

    def near_rows(self, x, rows):
        """The near pairs' coupling of ``x`` (as in :meth:`apply`, without the dipole part) on ``rows``.

        Costs the directed pairs that end on ``rows`` only; other rows of the result are zero.

        Parameters
        ----------
        x : (N, M, K) ndarray
        rows : array_like of int

        Returns
        -------
        (N, M, K) ndarray
        """
        import copy

        mask = np.zeros(self.n_bodies, dtype=bool)
        mask[np.asarray(rows, dtype=np.int64)] = True
        part = copy.copy(self)
        part._setup_kernels(targets=mask)
        x = np.ascontiguousarray(x)
        out = np.zeros_like(x)
        part._near_apply(x, out)
        return out

    def response(self) -> BodyResponse:
        """Block-diagonal response ``K`` of the bodies (see :class:`BodyResponse`)."""
        return self._response(1.0)

    def response_sqrt(self) -> BodyResponse:
        """Principal square root of :meth:`response` (complex where a block is negative)."""
        return self._response(0.5)

    def _response(self, power):
        scene = self.scene
        dip = np.asarray(scene.polarizability if power == 1.0 else scene.polarizability_sqrt)
        n, m = self.n_bodies, self.n_per_body
        radii = np.asarray(scene.semi_axes)[:, 0]
        eps = np.asarray(scene.eps_inclusion)
        eh = scene.eps_host
        high = np.zeros(
            (n, m - 3), dtype=np.result_type(eps, complex(eh) if np.iscomplexobj(eh) else eh, float)
        )
        for l, a, b in degree_slices(int(self.orders.max())):
            if l == 1:
                continue
            k = sphere_response(l, eps, eh) * radii ** (2 * l + 1)
            k = np.where(self.orders >= l, k, 0.0)
            high[:, a - 3 : b - 3] = k[:, None]
        if power != 1.0:
            if np.any(np.real(high) < 0) and not np.iscomplexobj(high):
                high = high.astype(complex)
            high = high**power
        if np.iscomplexobj(high) and not np.any(high.imag) and not np.iscomplexobj(dip):
            high = high.real
        if np.iscomplexobj(high) and not np.iscomplexobj(dip):
            dip = dip.astype(complex)
        return BodyResponse(dip, high)

    def describe(self) -> str:
        """One line: orders and near pairs."""
        return (
            f"multipole ({self.order_rule}, accuracy {self.accuracy:g}): orders up to "
            f"{int(self.orders.max())}, {self.pairs.shape[0]} near pairs, dipole part {self._dipole.backend}"
        )

    def near_potential(self, x, extra_degrees=1):
        """Regular-expansion coefficients at each body of the near pairs' potential.

        Parameters
        ----------
        x : (N, M, K) ndarray of float
            Multipole coefficients of all bodies.
        extra_degrees : int
            Degrees beyond each body's own order to expand to (1 for forces).

        Returns
        -------
        (N, M', K) ndarray of float
            ``V`` of ``sum_j u_j I(r - c_j)`` over the near neighbours j of each body, to
            degree ``orders + extra_degrees`` (``M' = n_unknowns(max order + extra)``);
            the dipole-dipole degree (1 from 1) is left out, as in :meth:`apply`.
        """
        from ._kernels import multipole_near_field

        lmax = int(self.orders.max()) + extra_degrees
        m_out = n_unknowns(lmax)
        xin = np.zeros((x.shape[0], m_out, x.shape[2]))
        xin[:, : x.shape[1]] = x
        out = np.zeros_like(xin)
        if self.pairs.shape[0]:
            multipole_near_field(
                self._positions, self.orders + extra_degrees, self._offsets, self._neighbours,
                self._nb_orders + extra_degrees, quarter_turn_blocks(lmax), quarter_turn_blocks(lmax, True),
                _kernel_axial(lmax), xin, out,
            )  # fmt: skip
        return -out

    def refined(self, n_pairs=20, extra_degrees=None):
        """A copy with higher orders on the ``n_pairs`` closest near pairs.

        Parameters
        ----------
        n_pairs : int
            How many of the closest near pairs (by gap over the smaller radius) to refine.
        extra_degrees : int, optional
            Degrees added to those pairs and their bodies (default ``max(4, L/2)`` of
            each pair's order).

        Returns
        -------
        MultipoleOperator
            Same scene and dipole part; used for the a posteriori model-error estimate.
        """
        import copy

        new = copy.copy(self)
        if self.pairs.shape[0] == 0:
            return new
        i, j = self.pairs[:, 0], self.pairs[:, 1]
        d = self._pair_distance(i, j)
        bound = np.asarray(self.scene.bounding_radii, dtype=float)
        ratio = (d - bound[i] - bound[j]) / np.minimum(bound[i], bound[j])
        pick = np.argsort(ratio, kind="stable")[: int(n_pairs)]
        po = self.pair_orders.copy()
        orders = self.orders.copy()
        spherical = np.asarray(self.scene.is_spherical, dtype=bool)
        cap = self._order_cap
        for e in pick:
            add = extra_degrees if extra_degrees is not None else max(4, int(np.ceil(po[e] / 2)))
            po[e] = min(po[e] + add, cap)
            for c in (i[e], j[e]):
                if spherical[c]:
                    orders[c] = max(orders[c], min(self.orders[c] + add, cap))
        new.pair_orders = po
        new.orders = orders
        new.n_per_body = n_unknowns(int(orders.max()))
        new.n_applies = 0
        new._setup_kernels()
        new.order_rule = self.order_rule + f", {len(pick)} closest pairs refined"
        return new

    def _degree_norms(self, x):
        """``q[i, l]``: largest norm over right-hand sides of body i's degree-l coefficients."""
        lmax = int(self.orders.max())
        q = np.zeros((self.n_bodies, lmax + 1))
        for l, a, b in degree_slices(lmax):
            if l >= 2:
                q[:, l] = np.max(np.sqrt(np.sum(np.abs(x[:, a:b]) ** 2, axis=1)), axis=-1)
        return q

    def _unlisted_pairs(self, x, tau, chunk=200_000):
        """Chunks ``(i, j, d, q_i, q_j)`` of unlisted pairs within a body's multipole reach.

        Reach: where one body's degree >= 2 multipoles exceed ``tau`` by the bound
        ``(l + 1) q_l / d^(l+2)``.
        """
        n = self.n_bodies
        q = self._degree_norms(x)
        ls = np.arange(q.shape[1])
        with np.errstate(divide="ignore"):
            reach = np.where(q > 0, ((ls + 1) * q / tau) ** (1.0 / (ls + 2)), 0.0)
        reach[:, :2] = 0.0
        radius = reach.max(axis=1)
        bound = np.asarray(self.scene.bounding_radii, dtype=float)
        strong = np.nonzero(radius > 2.0 * bound)[0]
        if strong.size == 0:
            return
        tree = self._tree()
        lists = tree.query_ball_point(self._positions[strong], radius[strong])
        cj = np.repeat(strong, [len(v) for v in lists])
        ci = np.concatenate([np.asarray(v, dtype=np.int64) for v in lists])
        lo, hi = np.minimum(ci, cj), np.maximum(ci, cj)
        keep = lo != hi
        code = np.unique(lo[keep] * n + hi[keep])
        if self.pairs.shape[0]:
            code = np.setdiff1d(code, self.pairs[:, 0] * n + self.pairs[:, 1])
        lo, hi = code // n, code % n
        for c0 in range(0, lo.size, chunk):
            a_, b_ = lo[c0 : c0 + chunk], hi[c0 : c0 + chunk]
            d = self._pair_distance(a_, b_)
            yield a_, b_, d, q[a_], q[b_]

    def neglected_field(self, x, field_scale=1.0):
        """Bound on the field at each body from the multipoles (degree >= 2) this operator leaves out.

        Sums ``(l + 1) |u_jl| / d^(l+2)`` over the pairs outside the near list, for every
        pair within reach of a hundredth of ``accuracy * field_scale``.

        Returns
        -------
        (N,) ndarray of float
            Relative to ``field_scale``.
        """
        lmax = int(self.orders.max())
        out = np.zeros(self.n_bodies)
        if lmax < 2:
            return out
        ls = np.arange(lmax + 1)
        for a_, b_, d, qa, qb in self._unlisted_pairs(x, 0.01 * self.accuracy * field_scale):
            w = (ls + 1)[None, :] / d[:, None] ** (ls + 2)[None, :]
            np.add.at(out, a_, np.sum(w[:, 2:] * qb[:, 2:], axis=1))
            np.add.at(out, b_, np.sum(w[:, 2:] * qa[:, 2:], axis=1))
        return out / field_scale

    def extended(self, x, field_scale=1.0):
        """A copy that also couples, at multipole level, the pairs that ``x`` shows are needed.

        The two-sphere model chooses the near pairs as if every sphere's partner were
        isolated; a sphere of a near-contact pair carries strong higher multipoles that
        reach third bodies further away. From the solved coefficients ``x`` the field at
        distance ``d`` of body j's degree-l multipoles is bounded by
        ``(l + 1) |u_jl| / d^(l+2)``; every pair where that exceeds a tenth of
        ``accuracy * field_scale`` is added, with the degrees that do.

        Parameters
        ----------
        x : (N, M, K) ndarray
            Multipole coefficients of a solve with this operator.
        field_scale : float
            Magnitude of the applied field.

        Returns
        -------
        MultipoleOperator
            ``self`` when nothing needs adding, else a copy with ``n_added`` set.
        """
        import copy

        lmax = int(self.orders.max())
        if lmax < 2:
            return self
        ls = np.arange(lmax + 1)
        bound = np.asarray(self.scene.bounding_radii, dtype=float)
        tau = 0.1 * self.accuracy * field_scale
        new_i, new_j, new_L = [], [], []
        for a_, b_, d, qa, qb in self._unlisted_pairs(x, tau):
            terms = (ls + 1)[None, :] * np.maximum(qa, qb) / d[:, None] ** (ls + 2)[None, :]
            over = terms[:, 2:] > tau
            any_over = over.any(axis=1)
            if not np.any(any_over):
                continue
            last = over.shape[1] - 1 - np.argmax(over[:, ::-1], axis=1) + 2
            geo = _geometric_order(np.maximum(bound[a_], bound[b_]) / d, self.accuracy, lmax)
            body_max = np.maximum(self.orders[a_], self.orders[b_])
            Lp = np.maximum(last, np.minimum(body_max, geo))
            new_i.append(a_[any_over])
            new_j.append(b_[any_over])
            new_L.append(Lp[any_over])
        new_i = np.concatenate(new_i) if new_i else np.zeros(0, np.int64)
        new_j = np.concatenate(new_j) if new_j else np.zeros(0, np.int64)
        new_L = np.concatenate(new_L) if new_L else np.zeros(0, np.int64)
        if new_i.size == 0:
            return self
        new = copy.copy(self)
        new.pairs = np.concatenate([self.pairs, np.stack([new_i, new_j], axis=1)]).astype(np.int64)
        new.pair_orders = np.concatenate([self.pair_orders, np.asarray(new_L, dtype=np.int64)])
        new.n_added = int(new_i.size)
        new.n_applies = 0
        new._setup_kernels()
        new.order_rule = self.order_rule + f", {new_i.size} pairs added from the solved multipoles"
        return new

    # -- fields ---------------------------------------------------------------------
    def incident(self, x):
        """Regular coefficients ``V`` of the potential incident on each body (``-(F0 + apply(x))``).

        Parameters
        ----------
        x : (N, M, K) ndarray
            Solved coefficients (the applied fields are the scene's).

        Returns
        -------
        (N, M, K) ndarray
        """
        e0 = np.asarray(self.scene.field, dtype=float).T
        F = self.apply(x)
        F = F.astype(np.result_type(F, float), copy=True)
        F[:, :3] += e0[None]
        return -F

    def field_at(self, points, x):
        """Field of the bodies at points outside them (no applied field added).

        Every body contributes its dipole (through the dipole backend); bodies carrying
        degrees above 1 add those within the distance where they exceed a hundredth of
        the accuracy (same bound as :meth:`neglected_field`).

        Parameters
        ----------
        points : (P, 3) ndarray of float
        x : (N, M, K) ndarray

        Returns
        -------
        (P, 3, K) ndarray
        """
        from ._harmonics import expansion_field

        pts = np.ascontiguousarray(points, dtype=np.float64)
        x = np.asarray(x)
        out = np.asarray(self._dipole.field_at(pts, np.ascontiguousarray(x[:, :3])))
        out = out.astype(np.result_type(out, x), copy=True)
        lmax = int(self.orders.max())
        if lmax < 2 or pts.shape[0] == 0:
            return out
        q = self._degree_norms(x)
        ls = np.arange(lmax + 1)
        tau = 0.01 * self.accuracy
        with np.errstate(divide="ignore"):
            reach = np.where(q > 0, ((ls + 1) * q / tau) ** (1.0 / (ls + 2)), 0.0)
        reach[:, :2] = 0.0
        radius = reach.max(axis=1)
        pts, tree, radius = self._point_tree(pts, radius)
        high = x.copy()
        high[:, :3] = 0.0
        for j in np.nonzero(self.orders > 1)[0]:
            idx = tree.query_ball_point(self._positions[j], radius[j])
            if not idx:
                continue
            idx = np.asarray(idx)
            Lj = int(self.orders[j])
            rel = self._min_image(pts[idx] - self._positions[j])
            out[idx] += expansion_field(rel, high[j, : n_unknowns(Lj)], Lj, "irregular")
        return out

    def _point_tree(self, pts, radius):
        """Points as the geometry sees them, their k-d tree and each body's reach."""
        from scipy.spatial import cKDTree

        return pts, cKDTree(pts), radius

    def interior_field_at(self, body, points, x, incident=None):
        """Field inside sphere ``body`` at ``points``, from its interior expansion.

        Inside a sphere the potential is ``sum C_lm R_lm(rho)`` with
        ``C_lm = V_lm + u_lm / a^(2l+1)`` (continuity of the potential at ``r = a``;
        ``V`` incident, ``u`` induced).

        Returns
        -------
        (P, 3, K) ndarray
        """
        from ._harmonics import expansion_field

        V = self.incident(x) if incident is None else incident
        L = int(self.orders[body])
        a = float(np.asarray(self.scene.semi_axes)[body, 0])
        C = V[body, : n_unknowns(L)].copy()
        for l, s0, s1 in degree_slices(L):
            C[s0:s1] = C[s0:s1] + x[body, s0:s1] / a ** (2 * l + 1)
        rel = np.asarray(points, dtype=float) - self._positions[body]
        return expansion_field(rel, C, L, "regular")

    def surface_host_field(self, x, samples=None):
        """Largest host-side field magnitude on each sphere's surface, per right-hand side.

        Just outside sphere i the potential is ``sum V_lm R_lm + sum u_lm I_lm`` (its
        incident and own expansions, both to its order ``L_i``); it is sampled on a
        Gauss-Legendre (in cos theta) by uniform (in phi) grid of ``L_i + 4`` by
        ``2 L_i + 8`` points at radius ``a (1 + 1e-9)``, plus the directions of the
        exciting field and of every near neighbour (where the peaks sit). Non-spherical bodies and spheres
        of order 1 return NaN (use the uniform-interior model for them).

        Returns
        -------
        (N, K) ndarray of float
            ``max |E|`` over each surface (reduced field, applied field not divided out).
        """
        from ._harmonics import expansion_field, sphere_grid

        V = self.incident(x)
        n, k = self.n_bodies, x.shape[2]
        out = np.full((n, k), np.nan)
        radii = np.asarray(self.scene.semi_axes)[:, 0]
        spherical = np.asarray(self.scene.is_spherical, dtype=bool)
        for i in np.nonzero(spherical & (self.orders > 1))[0]:
            L = int(self.orders[i])
            dirs, _w = sphere_grid(L + 4 if samples is None else samples)
            # Where the peaks sit: along the exciting field and towards each near neighbour.
            extra = [np.real(-V[i, :3, r]) for r in range(k)] + [np.imag(-V[i, :3, r]) for r in range(k)]
            nb = self._neighbours[self._offsets[i] : self._offsets[i + 1]]
            extra += list(self._min_image(self._positions[nb] - self._positions[i]))
            extra = np.array([e / np.linalg.norm(e) for e in extra if np.linalg.norm(e) > 0]).reshape(-1, 3)
            dirs = np.concatenate([dirs, extra, -extra])
            pts = dirs * radii[i] * (1 + 1e-9)
            m = n_unknowns(L)
            E = expansion_field(pts, V[i, :m], L, "regular") + expansion_field(pts, x[i, :m], L, "irregular")
            out[i] = np.max(np.sqrt(np.sum(np.abs(E) ** 2, axis=1)), axis=0)
        return out
