from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import as_positive
from ..errors import InputError
from ._fields import total_moment


@dataclass(frozen=True)
class EffectivePermittivity:
    """Effective relative permittivity of a spherical sample.

    Attributes
    ----------
    tensor : (3, 3) ndarray or None
        Full tensor when the applied fields span three dimensions.
    along_field : (K,) ndarray
        ``e^T eps_eff e`` along each applied field direction ``e``.
    sample_radius : float
        Radius used, reduced length.
    eps_host : complex or float
    """

    tensor: np.ndarray | None
    along_field: np.ndarray
    sample_radius: float
    eps_host: complex | float

    @property
    def isotropic(self):
        """Trace over three (mean of the along-field values without a tensor)."""
        if self.tensor is not None:
            return np.trace(self.tensor) / 3.0
        return np.mean(self.along_field)

    @property
    def eigenvalues(self):
        """Principal values of the tensor (``None`` without a tensor)."""
        if self.tensor is None:
            return None
        sym = 0.5 * (self.tensor + self.tensor.T)
        if np.iscomplexobj(sym):
            return np.linalg.eigvals(sym)
        return np.linalg.eigvalsh(sym)


def effective_permittivity(sol, sample_radius=None):
    """Effective permittivity of the spherical sample the bodies fill.

    Parameters
    ----------
    sol : Solution
    sample_radius : float, optional
        Sample radius ``R`` (reduced length); default ``sol.scene.sample_radius``.

    Returns
    -------
    EffectivePermittivity

    Notes
    -----
    A uniform sphere of permittivity ``eps`` in a host ``eps_h`` acquires the moment
    ``P = R^3 (eps - eps_h)/(eps + 2 eps_h) E0`` (reduced units). With
    ``B = P / (R^3 E0)`` (a tensor when three independent fields were solved),
    ``eps = eps_h (I - B)^-1 (I + 2 B)``. The answer is that of the finite sample:
    near its surface the arrangement differs from the bulk, which is an O(R^-1)
    correction.

    References
    ----------
    Jackson, J. D. (1999). Classical Electrodynamics, 3rd ed., sec. 4.4 and 4.5.
    """
    R = sample_radius if sample_radius is not None else sol.scene.sample_radius
    if R is None:
        raise InputError(
            "sample_radius: the scene has no sample radius; pass sample_radius= (the radius "
            "of the spherical sample the bodies fill)",
            "sample_radius",
        )
    R = as_positive(R, "sample_radius")
    eh = sol.scene.eps_host
    P = total_moment(sol)  # (3, K)
    E = np.asarray(sol.scene.field, dtype=float)  # (K, 3)
    along = []
    for k in range(E.shape[0]):
        e = E[k] / np.linalg.norm(E[k])
        b = (e @ P[:, k]) / (R**3 * np.linalg.norm(E[k]))
        along.append(eh * (1 + 2 * b) / (1 - b))
    tensor = None
    if E.shape[0] >= 3 and np.linalg.matrix_rank(E) == 3:
        # P = R^3 B E0 for every column: least squares over the K fields.
        Bt, *_ = np.linalg.lstsq(E, P.T, rcond=None)
        B = Bt.T / R**3
        eye = np.eye(3)
        tensor = eh * np.linalg.solve(eye - B, eye + 2 * B)
    return EffectivePermittivity(tensor=tensor, along_field=np.array(along), sample_radius=R, eps_host=eh)
