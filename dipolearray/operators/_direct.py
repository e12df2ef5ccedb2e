from __future__ import annotations

import numpy as np

from ._base import InteractionOperator, register_backend

#: Largest N for which :meth:`DirectOperator.dense` assembles (9 N^2 doubles, ~1.8 GB).
DENSE_MAX_BODIES = 5000


@register_backend("direct")
class DirectOperator(InteractionOperator):
    """Point-dipole coupling in an open boundary, summed over all pairs.

    Cost O(N^2 K) per apply, memory O(N K): nothing of size N x N is stored. The pair
    loop is a numba kernel, parallel over target bodies, vectorised over sources.

    Notes
    -----
    ``(T p)_i = sum_{j != i} (3 u (u . p_j) - p_j) / r^3`` with ``r = |r_i - r_j|``,
    ``u = (r_i - r_j)/r`` (reduced units, ``4 pi eps0 eps_h = 1``).
    """

    def __init__(self, scene):
        super().__init__(scene)
        self._positions = np.ascontiguousarray(scene.positions, dtype=np.float64)

    def _apply(self, x):
        from ._kernels import dipole_field

        return dipole_field(self._positions, self._positions, x)

    def dense(self) -> np.ndarray:
        """Assemble ``T`` as a dense ``(3N, 3N)`` matrix (small N only)."""
        from ..errors import InputError
        from ._kernels import dense_coupling

        if self.n_bodies > DENSE_MAX_BODIES:
            raise InputError(
                f"dense: N = {self.n_bodies} bodies exceeds the dense limit {DENSE_MAX_BODIES} "
                "(use the matrix-free apply)",
                "dense",
            )
        return dense_coupling(self._positions)

    def field_at(self, points, moments):
        """Field of the bodies' dipoles at arbitrary points (no applied field added).

        Parameters
        ----------
        points : (M, 3) ndarray of float, reduced length
        moments : (N, 3, K) ndarray of float or complex

        Returns
        -------
        (M, 3, K) ndarray
        """
        from ._kernels import dipole_field

        pts = np.ascontiguousarray(points, dtype=np.float64)
        if np.iscomplexobj(moments):
            k = moments.shape[2]
            both = np.concatenate([moments.real, moments.imag], axis=2)
            y = dipole_field(pts, self._positions, both)
            return y[:, :, :k] + 1j * y[:, :, k:]
        return dipole_field(pts, self._positions, np.ascontiguousarray(moments, dtype=np.float64))
