"""Real solid harmonics in Racah normalisation, their rotations and axial translations.

Basis and ordering
------------------
Unknowns of one body are the real coefficients ``u[l, m]`` for ``1 <= l <= L`` and
``-l <= m <= l``, ``L (L + 2)`` numbers. The flat index of ``(l, m)`` is
``l*l - 1 + l + m`` except for ``l = 1``, which is stored in Cartesian order
``(x, y, z) = (m=+1, m=-1, m=0)`` so that the first three unknowns of a body are its
dipole moment exactly as in the point-dipole backends.

With ``C_l^m = sqrt((l-m)!/(l+m)!) P_l^m(cos theta) e^{i m phi}`` (no Condon-Shortley
phase) the real harmonics are ``c_l0 = C_l^0``, ``c_lm = sqrt(2) Re C_l^m`` and
``c_l,-m = sqrt(2) Im C_l^m`` for ``m > 0``; regular ``R_lm = r^l c_lm`` and irregular
``I_lm = c_lm / r^(l+1)``. Then ``R_1 = (x, y, z)`` and
``1/|r - r'| = sum_lm R_lm(r') I_lm(r)`` for ``|r'| < |r|`` (the addition theorem of
Legendre polynomials, e.g. Jackson, Classical Electrodynamics, 3rd ed., eq. 3.70), so the
coefficients of ``I_lm`` are the physical multipole moments ``Q_lm = int rho R_lm dV``.

References
----------
Pinchon, D. and Hoggan, P. E. (2007). Rotation matrices for real spherical harmonics:
general rotations of atomic orbitals in space-fixed axes. J. Phys. A 40, 1597 (the
factorisation of a general rotation into z-rotations and one fixed quarter turn).
"""

from __future__ import annotations

from functools import cache, lru_cache

import numpy as np
from scipy.special import gammaln, sph_harm_y


def n_unknowns(order: int) -> int:
    """Unknowns per body for multipoles up to ``order``: ``L (L + 2)``."""
    return order * (order + 2)


def flat_index(l: int, m: int) -> int:  # noqa: E741 - l is the conventional degree
    """Position of ``(l, m)`` in a body's coefficient vector."""
    if l == 1:
        return {1: 0, -1: 1, 0: 2}[m]
    return l * l - 1 + l + m


def degree_slices(order: int):
    """``[(l, start, stop)]``: where degree ``l`` lives in the flat vector."""
    return [(l, l * l - 1, (l + 1) * (l + 1) - 1) for l in range(1, order + 1)]


def _block_perm(l: int) -> np.ndarray:
    """Within-degree position of ``m = -l..l`` (identity except the Cartesian l = 1)."""
    if l == 1:
        return np.array([1, 2, 0])  # m=-1 -> y (1), m=0 -> z (2), m=+1 -> x (0)
    return np.arange(2 * l + 1)


def real_harmonics(l: int, directions) -> np.ndarray:  # noqa: E741
    """Real Racah harmonics ``c_lm`` of degree ``l`` at unit vectors.

    Parameters
    ----------
    l : int
    directions : (P, 3) ndarray of float
        Unit vectors.

    Returns
    -------
    (P, 2l+1) ndarray of float
        Column ``l + m`` holds ``c_lm`` (natural m order, no Cartesian permutation).
    """
    d = np.asarray(directions, dtype=float)
    theta = np.arccos(np.clip(d[:, 2], -1.0, 1.0))
    phi = np.arctan2(d[:, 1], d[:, 0])
    out = np.empty((d.shape[0], 2 * l + 1))
    scale = np.sqrt(4.0 * np.pi / (2 * l + 1))
    for m in range(0, l + 1):
        # scipy's Y_l^m carries the Condon-Shortley phase (-1)^m; Racah's C_l^m does not.
        c = scale * (-1.0) ** m * sph_harm_y(l, m, theta, phi)
        if m == 0:
            out[:, l] = c.real
        else:
            out[:, l + m] = np.sqrt(2.0) * c.real
            out[:, l - m] = np.sqrt(2.0) * c.imag
    return out


def solid_harmonics(points, order: int, kind: str = "regular") -> np.ndarray:
    """``R_lm`` (regular) or ``I_lm`` (irregular) at points, in the flat body ordering.

    Parameters
    ----------
    points : (P, 3) ndarray of float
    order : int
    kind : {"regular", "irregular"}

    Returns
    -------
    (P, L(L+2)) ndarray of float
    """
    pts = np.asarray(points, dtype=float)
    r = np.linalg.norm(pts, axis=1)
    safe = np.where(r > 0, r, 1.0)
    u = pts / safe[:, None]
    ct = np.clip(u[:, 2], -1.0, 1.0)
    st = np.sqrt(np.maximum(0.0, 1.0 - ct * ct))
    phi = np.arctan2(u[:, 1], u[:, 0])
    out = np.empty((pts.shape[0], n_unknowns(order)))
    regular = kind == "regular"
    rad = [r**l if regular else safe ** (-(l + 1)) for l in range(order + 1)]  # noqa: E741
    # Schmidt semi-normalised Legendre functions sqrt((l-m)!/(l+m)!) P_l^m (no Condon-Shortley
    # phase) by the standard stable recurrences in l at fixed m.
    pmm = np.ones_like(ct)
    r2 = np.sqrt(2.0)
    for m in range(0, order + 1):
        if m > 0:
            pmm = pmm * st * np.sqrt((2 * m - 1) / (2 * m))
        cm = np.cos(m * phi) * r2 if m else None
        sm = np.sin(m * phi) * r2 if m else None
        p_prev, p_cur = None, pmm
        for l in range(max(m, 1), order + 1):  # noqa: E741
            if l == m:
                p_cur = pmm
            elif l == m + 1:
                p_prev, p_cur = p_cur, np.sqrt(2 * m + 1.0) * ct * p_cur
            else:
                p_prev, p_cur = (
                    p_cur,
                    ((2 * l - 1) * ct * p_cur - np.sqrt((l - 1.0) ** 2 - m * m) * p_prev)
                    / np.sqrt(l * l - m * m * 1.0),
                )
            if m == 0:
                out[:, flat_index(l, 0)] = p_cur * rad[l]
            else:
                out[:, flat_index(l, m)] = p_cur * cm * rad[l]
                out[:, flat_index(l, -m)] = p_cur * sm * rad[l]
    return out


def _permute_degree(mat: np.ndarray, l: int) -> np.ndarray:  # noqa: E741
    """Express a natural-order (m = -l..l) degree-l matrix in the stored ordering."""
    if l != 1:
        return mat
    p = _block_perm(1)
    out = np.empty_like(mat)
    out[np.ix_(p, p)] = mat
    return out


@cache
def quarter_turn(l: int) -> np.ndarray:  # noqa: E741
    """``X_l``: the degree-l representation of the quarter turn about +x (stored ordering).

    ``c_lm(A^T u) = sum_m' X[m, m'] c_lm'(u)`` for ``A`` the rotation by +pi/2 about x.

    Notes
    -----
    In the standard (Condon-Shortley) basis the rotation is ``U = exp(-i pi/2 J_x)``
    with ``J_x = (J_+ + J_-)/2`` tridiagonal, ``<m+1|J_+|m> = sqrt((l-m)(l+m+1))``;
    ``U`` comes from the eigendecomposition of ``J_x`` (integer eigenvalues, so no
    loss of accuracy at high degree) and ``X = Q S U^T S^-1 Q^H`` with ``S`` the
    Condon-Shortley signs and ``Q`` the complex-to-real map (Edmonds, Angular Momentum
    in Quantum Mechanics, 1957, ch. 4; Pinchon & Hoggan 2007). The tests check ``X``
    against harmonics evaluated at rotated points.
    """
    m = np.arange(-l, l + 1)
    w = 2 * l + 1
    jp = np.sqrt((l - m[:-1]) * (l + m[:-1] + 1.0))
    Jx = np.zeros((w, w))
    Jx[np.arange(1, w), np.arange(w - 1)] = 0.5 * jp
    Jx[np.arange(w - 1), np.arange(1, w)] = 0.5 * jp
    lam, V = np.linalg.eigh(Jx)
    U = (V * np.exp(-0.5j * np.pi * np.round(lam))) @ V.conj().T
    s = np.where(m >= 0, (-1.0) ** m, 1.0)
    Q = np.zeros((w, w), dtype=complex)
    Q[l, l] = 1.0
    r2 = 1.0 / np.sqrt(2.0)
    for k in range(1, l + 1):
        Q[l + k, l + k] = Q[l + k, l - k] = r2
        Q[l - k, l + k] = -1j * r2
        Q[l - k, l - k] = 1j * r2
    X = (Q * s) @ U.T @ (Q.conj().T / s[:, None])
    return np.ascontiguousarray(_permute_degree(X.real, l))


def quarter_turns(order: int) -> np.ndarray:
    """All ``X_l`` for ``l = 1..L`` packed in one ``(L, 2L+1, 2L+1)`` array (zero padded)."""
    out = np.zeros((order, 2 * order + 1, 2 * order + 1))
    for l in range(1, order + 1):
        out[l - 1, : 2 * l + 1, : 2 * l + 1] = quarter_turn(l)
    return out


def axial_coefficients(order_out: int, order_in: int) -> np.ndarray:
    """Translation of irregular harmonics along +z into regular ones at the new centre.

    For a source at the origin and a target centre at ``t e_z`` (``t > 0``), a point
    ``t e_z + rho`` with ``|rho| < t`` has
    ``I_lm(t e_z + rho) = sum_j A[j, l, |m|] (-1)^(j+m) R_jm(rho) / t^(l+j+1)``, with
    ``A[j, l, m] = (l+j)! / sqrt((l-m)! (l+m)! (j-m)! (j+m)!)``, symmetric in ``l, j``
    (Racah normalisation; derived from the expansion of ``1/|t e_z + rho|`` in Legendre
    polynomials and checked numerically in the tests).

    Returns
    -------
    (order_out+1, order_in+1, min(order_out, order_in)+1) ndarray of float
        ``A`` with the sign ``(-1)^(j+m)`` folded in (zero where ``m > min(j, l)``).
    """
    out = np.zeros((order_out + 1, order_in + 1, min(order_out, order_in) + 1))
    for j in range(order_out + 1):
        for l in range(order_in + 1):
            for m in range(min(j, l) + 1):
                logc = gammaln(l + j + 1) - 0.5 * (
                    gammaln(l - m + 1) + gammaln(l + m + 1) + gammaln(j - m + 1) + gammaln(j + m + 1)
                )
                out[j, l, m] = (-1.0) ** (j + m) * np.exp(logc)
    return out


def _zrot(u, order, gamma):
    """``Z(gamma)`` on degrees 1..order of ``u`` (axis 1), out of place."""
    out = u.copy()
    for l in range(1, order + 1):  # noqa: E741
        for m in range(1, l + 1):
            ip, im = flat_index(l, m), flat_index(l, -m)
            c, s = np.cos(m * gamma), np.sin(m * gamma)
            out[:, ip] = c * u[:, ip] + s * u[:, im]
            out[:, im] = -s * u[:, ip] + c * u[:, im]
    return out


def _xrot(u, order, transpose=False):
    out = u.copy()
    for l, a, b in degree_slices(order):
        X = quarter_turn(l)
        out[:, a:b] = np.einsum("pq,nq...->np...", X.T if transpose else X, u[:, a:b])
    return out


def rotate_into(u, order: int, direction) -> np.ndarray:
    """Coefficients of the same functions in a frame whose +z axis is ``direction``.

    Parameters
    ----------
    u : (N, L(L+2), ...) ndarray
        Coefficients (irregular or regular: both transform alike).
    order : int
    direction : (3,) array_like

    Returns
    -------
    ndarray
        ``X^T Z(-theta) X Z(phi) u`` with ``(theta, phi)`` the polar angles of ``direction``.
    """
    n = np.asarray(direction, dtype=float)
    n = n / np.linalg.norm(n)
    theta = np.arccos(np.clip(n[2], -1.0, 1.0))
    phi = np.arctan2(n[1], n[0])
    w = _zrot(u, order, phi)
    w = _xrot(w, order)
    w = _zrot(w, order, -theta)
    return _xrot(w, order, transpose=True)


def z_derivative_weights(order: int) -> np.ndarray:
    """``w`` with ``d/dz R_lm = w[l, |m|] R_(l-1)m`` (Racah normalisation): ``sqrt((l-m)(l+m))``."""
    l = np.arange(order + 1)[:, None]  # noqa: E741
    m = np.arange(order + 1)[None, :]
    return np.sqrt(np.clip((l - m) * (l + m), 0, None).astype(float))


@lru_cache(maxsize=32)
def quarter_turn_blocks(order: int, transpose: bool = False):
    """The quarter turns ``X_l`` (or their transposes) as dense blocks, for the kernels.

    By parity ``X_l`` is a permuted direct sum of four dense blocks (three quarters of
    its entries vanish), so a rotation costs a quarter of a dense product.

    Returns
    -------
    tuple of ndarray
        ``(degree_start, rows_ptr, rows, cols, vals_ptr, vals)``: blocks of degree l are
        ``degree_start[l] .. degree_start[l+1]``; block b maps positions
        ``cols[rows_ptr[b]:rows_ptr[b+1]]`` of the degree to positions
        ``rows[rows_ptr[b]:rows_ptr[b+1]]`` with the row-major square matrix
        ``vals[vals_ptr[b]:vals_ptr[b+1]]``.
    """
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    start = [0, 0]
    rptr, rows, cols, vptr, vals = [0], [], [], [0], []
    for l in range(1, order + 1):  # noqa: E741
        X = quarter_turn(l)
        if transpose:
            X = X.T
        w = 2 * l + 1
        nz = np.abs(X) > 1e-13
        # Connected components of the row-column graph of the nonzeros (an entry that
        # happens to vanish inside a block does not split it).
        graph = coo_matrix(np.block([[np.zeros((w, w)), nz], [nz.T, np.zeros((w, w))]]))
        _n, label = connected_components(graph, directed=False)
        for comp in np.unique(label):
            rset = np.nonzero(label[:w] == comp)[0]
            cset = np.nonzero(label[w:] == comp)[0]
            if len(cset) != len(rset):  # pragma: no cover - orthogonality makes blocks square
                raise RuntimeError(f"quarter turn of degree {l}: non-square block")
            rows.extend(rset.tolist())
            cols.extend(cset.tolist())
            rptr.append(len(rows))
            vals.extend(X[np.ix_(rset, cset)].ravel())
            vptr.append(len(vals))
        start.append(len(rptr) - 1)
    out = tuple(
        np.ascontiguousarray(a, dtype=np.float64 if k == 5 else np.int64)
        for k, a in enumerate((start, rptr, rows, cols, vptr, vals))
    )
    for a in out:
        a.setflags(write=False)  # cached and shared
    return out


def _frame(direction):
    """Rotation ``A`` with ``A direction = e_z`` (``Ry(-theta) Rz(-phi)``), as in :func:`rotate_into`."""
    n = np.asarray(direction, dtype=float)
    n = n / np.linalg.norm(n)
    theta = np.arccos(np.clip(n[2], -1.0, 1.0))
    phi = np.arctan2(n[1], n[0])
    cz, sz = np.cos(phi), np.sin(phi)
    ct, st = np.cos(theta), np.sin(theta)
    Rz = np.array([[cz, sz, 0.0], [-sz, cz, 0.0], [0.0, 0.0, 1.0]])
    Ry = np.array([[ct, 0.0, -st], [0.0, 1.0, 0.0], [st, 0.0, ct]])
    return Ry @ Rz


def expansion_field(points, coeffs, order, kind):
    """Minus the gradient of ``sum u_lm S_lm(rho)`` at points ``rho`` (relative to the centre).

    Parameters
    ----------
    points : (P, 3) ndarray of float
        Positions relative to the expansion centre.
    coeffs : (M, K) ndarray
        Coefficients ``u`` in the flat body ordering, degrees 1..order.
    order : int
    kind : {"irregular", "regular"}
        ``S = I`` (outgoing; points outside the body) or ``S = R`` (local; points within
        the expansion's radius of convergence).

    Returns
    -------
    (P, 3, K) ndarray
        The field. Uses ``d/dz I_lm = -sqrt((l+1-m)(l+1+m)) I_(l+1)m`` and
        ``d/dz R_lm = sqrt((l-m)(l+m)) R_(l-1)m`` (Racah normalisation) in frames whose z
        axis is x, y and z in turn.
    """
    pts = np.asarray(points, dtype=float)
    u = np.asarray(coeffs)
    k = u.shape[1]
    out = np.zeros((pts.shape[0], 3, k), dtype=np.result_type(u, float))
    src, dst, coef, const = _derivative_map(order, kind)
    for a, axis in enumerate(np.eye(3)):
        ur = rotate_into(u[None], order, axis)[0] if a < 2 else u
        rp = pts @ _frame(axis).T if a < 2 else pts
        if kind == "irregular":
            basis = solid_harmonics(rp, order + 1, "irregular")
            out[:, a] = basis[:, dst] @ (coef[:, None] * ur[src])
        else:
            out[:, a] = -ur[const][None, :] * np.sqrt(1.0)
            if order > 1:
                basis = solid_harmonics(rp, order - 1, "regular")
                out[:, a] -= basis[:, dst] @ (coef[:, None] * ur[src])
    return out


@lru_cache(maxsize=64)
def _derivative_map(order, kind):
    """Index maps of the z-derivative: ``coef * u[src]`` lands on basis function ``dst``."""
    src, dst, coef = [], [], []
    for l in range(1, order + 1):  # noqa: E741
        if kind == "irregular":
            for m in range(-l, l + 1):
                src.append(flat_index(l, m))
                dst.append(flat_index(l + 1, m))
                coef.append(np.sqrt((l + 1 - m) * (l + 1 + m)))
        elif l >= 2:
            for m in range(-(l - 1), l):
                src.append(flat_index(l, m))
                dst.append(flat_index(l - 1, m))
                coef.append(np.sqrt((l - m) * (l + m)))
    # d/dz R_10 = 1 (R_10 = z): the constant term of a regular expansion's gradient.
    return np.array(src, dtype=np.int64), np.array(dst, dtype=np.int64), np.array(coef), flat_index(1, 0)


def sphere_grid(n_theta: int):
    """Product quadrature on the unit sphere: Gauss-Legendre in cos theta, uniform in phi.

    Returns
    -------
    directions : (P, 3) ndarray
        ``P = 2 n_theta^2`` unit vectors.
    weights : (P,) ndarray
        Solid-angle weights (sum ``4 pi``); exact for spherical harmonics of degree
        below ``2 n_theta``.
    """
    ct, w = np.polynomial.legendre.leggauss(int(n_theta))
    ph = np.linspace(0.0, 2 * np.pi, 2 * int(n_theta), endpoint=False)
    st = np.sqrt(1 - ct**2)
    dirs = np.stack(
        [np.outer(st, np.cos(ph)).ravel(), np.outer(st, np.sin(ph)).ravel(), np.repeat(ct, ph.size)], 1
    )
    return dirs, np.repeat(w, ph.size) * (2 * np.pi / ph.size)
