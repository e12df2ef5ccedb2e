from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import as_positive
from ..errors import InputError
from ._fields import total_moment


@dataclass(frozen=True)
class EffectivePermittivity:
    """Effective relative permittivity of a spherical sample or of a periodic (bulk) box.

    Attributes
    ----------
    tensor : (3, 3) ndarray or None
        Full tensor when the applied fields span three dimensions.
    along_field : (K,) ndarray
        ``e^T eps_eff e`` along each applied field direction ``e``.
    sample_radius : float or None
        Radius used, reduced length (``None`` for a periodic box).
    eps_host : complex or float
    boundary : {"open", "periodic"}
    """

    tensor: np.ndarray | None
    along_field: np.ndarray
    sample_radius: float | None
    eps_host: complex | float
    boundary: str = "open"

    @property
    def loss_tangent(self):
        """``eps''/eps'`` of the isotropic part (``eps = eps' - j eps''``)."""
        iso = complex(self.isotropic)
        return -iso.imag / iso.real

    @property
    def axes(self):
        """Principal axes (columns, ascending like ``eigenvalues``) of the real symmetric part."""
        if self.tensor is None:
            return None
        sym = 0.5 * (self.tensor + self.tensor.T).real
        return np.linalg.eigh(sym)[1]

    @property
    def isotropic(self):
        """Trace over three (mean of the along-field values without a tensor)."""
        if self.tensor is not None:
            return np.trace(self.tensor) / 3.0
        return np.mean(self.along_field)

    @property
    def eigenvalues(self):
        """Principal values of the tensor, ascending in their real part (``None`` without a tensor)."""
        if self.tensor is None:
            return None
        sym = 0.5 * (self.tensor + self.tensor.T)
        if np.iscomplexobj(sym):
            return np.sort_complex(np.linalg.eigvals(sym))
        return np.linalg.eigvalsh(sym)


def effective_permittivity(sol, sample_radius=None):
    """Effective permittivity of the spherical sample the bodies fill, or of the bulk (periodic box).

    For a periodic scene (conducting outer boundary, so the mean field is the applied
    field ``E0``) the bulk tensor follows from the mean polarization,
    ``eps = eps_h (I + 4 pi <P> / E0)`` with ``<P> = sum_i p_i / V`` column by column
    (reduced units); ``sample_radius`` is not used.

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
    if sol.scene.boundary == "periodic":
        return _bulk(sol)
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


def _bulk(sol):
    scene = sol.scene
    eh = scene.eps_host
    V = float(np.prod(scene.box))
    P = total_moment(sol) / V  # (3, K)
    E = np.asarray(scene.field, dtype=float)  # (K, 3)
    along = []
    for k in range(E.shape[0]):
        e = E[k] / np.linalg.norm(E[k])
        along.append(eh * (1 + 4 * np.pi * (e @ P[:, k]) / np.linalg.norm(E[k])))
    tensor = None
    if E.shape[0] >= 3 and np.linalg.matrix_rank(E) == 3:
        Xt, *_ = np.linalg.lstsq(E, P.T, rcond=None)
        tensor = eh * (np.eye(3) + 4 * np.pi * Xt.T)
    return EffectivePermittivity(
        tensor=tensor, along_field=np.array(along), sample_radius=None, eps_host=eh, boundary="periodic"
    )
