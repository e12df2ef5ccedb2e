from __future__ import annotations

import math

import numpy as np

from .._validate import as_positive
from ..errors import InputError
from ._base import InteractionOperator, register_backend


def ewald_parameters(box, n_bodies, accuracy):
    """Splitting ``alpha``, real cutoff ``r_c`` and reciprocal cutoff ``k_c`` for a relative accuracy.

    With ``s = sqrt(-ln(accuracy) + ln 30)`` both truncation errors fall like ``exp(-s^2)``
    when ``r_c = s/alpha`` and ``k_c = 2 alpha s`` (Kolafa and Perram 1992). ``alpha``
    balances the real-space pair count ``N^2 r_c^3 / V`` against the reciprocal one
    ``N V k_c^3`` (``alpha ~ (N/V^2)^(1/6)``, cost ~ N^1.5 overall), and is raised when
    needed so that ``r_c`` stays within half the smallest edge (minimum image).

    References
    ----------
    Kolafa, J. and Perram, J. W. (1992). Cutoff errors in the Ewald summation formulae
    for point charge systems. Mol. Simul. 9, 351.
    """
    L = np.asarray(box, dtype=float)
    V = float(np.prod(L))
    # ln 30: measured max-norm errors run up to ~20x exp(-s^2); this keeps them below accuracy.
    s = math.sqrt(-math.log(accuracy) + math.log(30.0))
    alpha = (2.0 * math.pi**3 * n_bodies / V**2) ** (1.0 / 6.0)
    alpha = max(alpha, 2.0 * s / float(L.min()) * (1.0 + 1e-9))
    return alpha, s / alpha, 2.0 * alpha * s


def screening_setup(alpha, r_cut, accuracy, r0):
    """Table of the real-space screening functions from ``r0`` to ``r_cut``: ``(table, r0, h)``.

    Cubic Hermite interpolation: the error ~ h^4 max|g| / 384 with g ~ 10 alpha^4 stays
    below 1e-3 accuracy for h = (3.8e-4 * accuracy)^(1/4) / alpha; at most 200001 nodes.
    """
    from ._kernels import screening_table

    h = min((3.8e-4 * accuracy) ** 0.25 / alpha, (r_cut - r0) / 16)
    n_nodes = min(int(math.ceil((r_cut - r0) / h)) + 2, 200001)
    h = (r_cut - r0) / (n_nodes - 2)
    return screening_table(alpha, r0, r0 + h * (n_nodes - 1), n_nodes), r0, h


def setup_real_space(op, scene):
    """Cell list, screening-function table and self term of an Ewald-split operator.

    Reads ``op.box``, ``op._pos`` (in ``[0, box)``), ``op.n_bodies``, ``op.accuracy``,
    ``op.r_cut`` and ``op.alpha``; sets the cell list, the table of the screening
    functions and ``op._self`` (the self term ``4 alpha^3 / (3 sqrt(pi))``).
    """
    L, pos, n, acc = op.box, op._pos, op.n_bodies, op.accuracy
    # Cell list for the real-space sum.
    ncell = np.maximum(1, np.floor(L / op.r_cut)).astype(np.int64)
    cell = np.minimum((pos / (L / ncell)).astype(np.int64), ncell - 1)
    flat = (cell[:, 0] * ncell[1] + cell[:, 1]) * ncell[2] + cell[:, 2]
    order = np.argsort(flat, kind="stable")
    op._items = np.ascontiguousarray(order, dtype=np.int64)
    op._start = np.ascontiguousarray(
        np.searchsorted(flat[order], np.arange(int(np.prod(ncell)) + 1)), dtype=np.int64
    )
    op._cell_of = np.ascontiguousarray(cell)
    op._ncell = ncell
    r0 = 0.25 * float(scene.bounding_radii.min()) if n else 0.0
    op._table, op._table_r0, op._table_h = screening_setup(op.alpha, op.r_cut, acc, r0)
    op._self = 4.0 * op.alpha**3 / (3.0 * math.sqrt(math.pi))


@register_backend("ewald")
class EwaldOperator(InteractionOperator):
    """Point-dipole coupling in an orthorhombic periodic box by Ewald summation (tin-foil boundary).

    The field at body ``i`` sums every other body and every periodic image (its own
    included) with a conducting outer boundary, so the mean field in the box is the
    applied field and no depolarizing surface term appears. Real-space pairs come
    from a cell list (minimum image, ``r_c <= L/2``), reciprocal vectors from
    separable phase factors; parameters follow :func:`ewald_parameters`.

    Parameters
    ----------
    scene : Scene
        ``boundary = "periodic"`` with its ``box``.
    accuracy : float
        Relative truncation error aimed at (default 1e-12).

    Notes
    -----
    ``E_i = sum_{j,n}' T(r_i - r_j - n L) p_j``, conditionally convergent, evaluated as
    real-space + reciprocal-space + self terms (see ``_kernels/_ewald.py``).

    References
    ----------
    Ewald, P. P. (1921). Die Berechnung optischer und elektrostatischer Gitterpotentiale.
    Ann. Phys. 369, 253.
    de Leeuw, S. W., Perram, J. W. and Smith, E. R. (1980). Simulation of electrostatic
    systems in periodic boundary conditions. I. Proc. R. Soc. Lond. A 373, 27 (dipoles,
    surface term, tin-foil boundary).
    """

    def __init__(self, scene, accuracy=1e-12):
        super().__init__(scene)
        if scene.boundary != "periodic":
            raise InputError(
                "backend: 'ewald' needs a periodic scene (boundary = 'periodic', box)", "backend"
            )
        acc = as_positive(accuracy, "accuracy")
        if not 1e-16 <= acc < 1e-2:
            raise InputError(f"accuracy: {acc} is outside [1e-16, 1e-2)", "accuracy")
        self.accuracy = acc
        self.box = np.ascontiguousarray(scene.box, dtype=np.float64)
        L = self.box
        pos = np.mod(np.asarray(scene.positions, dtype=np.float64), L)
        pos[pos >= L] = 0.0
        self._pos = np.ascontiguousarray(pos)
        n = self.n_bodies
        self.alpha, self.r_cut, self.k_cut = ewald_parameters(L, n, acc)
        self._setup_real_space(scene)
        # Reciprocal vectors in half of k-space.
        H = np.floor(self.k_cut * L / (2.0 * math.pi)).astype(int)
        grids = np.meshgrid(*[np.arange(-h, h + 1) for h in H], indexing="ij")
        hkl = np.stack([g.ravel() for g in grids], axis=1)
        half = (
            (hkl[:, 0] > 0)
            | ((hkl[:, 0] == 0) & (hkl[:, 1] > 0))
            | ((hkl[:, 0] == 0) & (hkl[:, 1] == 0) & (hkl[:, 2] > 0))
        )
        hkl = hkl[half]
        kvec = 2.0 * math.pi * hkl / L
        k2 = np.einsum("ij,ij->i", kvec, kvec)
        keep = k2 <= self.k_cut**2
        hkl, kvec, k2 = hkl[keep], kvec[keep], k2[keep]
        V = float(np.prod(L))
        self._weight = np.ascontiguousarray(2.0 * 4.0 * math.pi / V * np.exp(-k2 / (4 * self.alpha**2)) / k2)
        self._kvec = np.ascontiguousarray(kvec)
        self._hkl = np.ascontiguousarray(hkl + H[None, :], dtype=np.int64)
        self._H = H
        self._phases = []
        self._phases_t = []
        for ax in range(3):
            h = np.arange(-H[ax], H[ax] + 1)
            ph = np.exp(2j * math.pi * np.outer(pos[:, ax], h) / L[ax])
            self._phases.append(np.ascontiguousarray(ph))
            self._phases_t.append(np.ascontiguousarray(ph.T))
        self.n_kvectors = int(len(k2))

    def _setup_real_space(self, scene):
        """Cell list, screening-function table and self term for ``self.alpha`` and ``self.r_cut``."""
        setup_real_space(self, scene)

    def _apply(self, x):
        from ._kernels import ewald_field

        return ewald_field(self, x)

    def describe(self) -> str:
        """The Ewald parameters in one line."""
        return (
            f"Ewald: alpha {self.alpha:.4g}, r_c {self.r_cut:.4g}, k_c {self.k_cut:.4g}, "
            f"{self.n_kvectors} k-vectors (half space), accuracy {self.accuracy:g}"
        )

    def field_at(self, points, moments):
        """Field of every body and every periodic image at arbitrary points (no applied field).

        Parameters
        ----------
        points : (M, 3) ndarray of float, reduced length
            Anywhere; wrapped into the box.
        moments : (N, 3, K) ndarray of float or complex

        Returns
        -------
        (M, 3, K) ndarray

        Notes
        -----
        The same splitting as :meth:`apply` (real space by the cell list, minimum image;
        reciprocal space over the same k-vectors) with no self term (a point is not a
        dipole) and no surface term (conducting boundary).
        """
        from ._kernels import ewald_field_at

        x = np.mod(np.asarray(points, dtype=np.float64), self.box)
        x[x >= self.box] = 0.0
        p = np.asarray(moments)
        if np.iscomplexobj(p):
            return ewald_field_at(self, x, p.real) + 1j * ewald_field_at(self, x, p.imag)
        return ewald_field_at(self, x, p)
