from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.special import elliprd

from .._validate import as_float_array, as_positive


@dataclass(frozen=True)
class Sphere:
    """A sphere of a given radius (reduced length).

    Examples
    --------
    >>> Sphere(1.0).depolarization
    (0.3333333333333333, 0.3333333333333333, 0.3333333333333333)
    """

    radius: float = 1.0

    def __post_init__(self):
        object.__setattr__(self, "radius", as_positive(self.radius, "radius"))

    kind = "sphere"

    @property
    def semi_axes(self) -> tuple[float, float, float]:
        """Semi-axes ``(a, b, c)``, all equal to the radius."""
        r = self.radius
        return (r, r, r)

    @property
    def depolarization(self) -> tuple[float, float, float]:
        """Depolarization factors, exactly one third each."""
        return (1.0 / 3.0,) * 3

    volume = property(lambda self: _volume(self.semi_axes), doc="Volume ``4 pi a b c / 3``.")
    bounding_radius = property(lambda self: max(self.semi_axes), doc="Radius of the enclosing sphere.")


@dataclass(frozen=True)
class Spheroid:
    """A spheroid with its symmetry axis along the body z axis.

    Parameters
    ----------
    polar : float
        Semi-axis along the symmetry axis (reduced length).
    equatorial : float
        The two equal semi-axes across it. ``polar > equatorial`` is prolate
        (needle-like), ``polar < equatorial`` oblate (platelet-like).
    """

    polar: float
    equatorial: float

    kind = "spheroid"

    def __post_init__(self):
        object.__setattr__(self, "polar", as_positive(self.polar, "polar"))
        object.__setattr__(self, "equatorial", as_positive(self.equatorial, "equatorial"))

    @property
    def semi_axes(self) -> tuple[float, float, float]:
        """Semi-axes ``(equatorial, equatorial, polar)``."""
        return (self.equatorial, self.equatorial, self.polar)

    @property
    def aspect_ratio(self) -> float:
        """``polar / equatorial``."""
        return self.polar / self.equatorial

    @property
    def depolarization(self) -> tuple[float, float, float]:
        """Depolarization factors along the body axes (from Carlson's R_D)."""
        return tuple(float(v) for v in depolarization_factors(np.array(self.semi_axes)))

    volume = property(lambda self: _volume(self.semi_axes), doc="Volume ``4 pi a b c / 3``.")
    bounding_radius = property(lambda self: max(self.semi_axes), doc="Radius of the enclosing sphere.")


@dataclass(frozen=True)
class Ellipsoid:
    """A general ellipsoid with semi-axes ``a, b, c`` along the body x, y, z axes."""

    a: float
    b: float
    c: float

    kind = "ellipsoid"

    def __post_init__(self):
        for name in ("a", "b", "c"):
            object.__setattr__(self, name, as_positive(getattr(self, name), name))

    @property
    def semi_axes(self) -> tuple[float, float, float]:
        """Semi-axes ``(a, b, c)``."""
        return (self.a, self.b, self.c)

    @property
    def depolarization(self) -> tuple[float, float, float]:
        """Depolarization factors along the body axes (from Carlson's R_D)."""
        return tuple(float(v) for v in depolarization_factors(np.array(self.semi_axes)))

    volume = property(lambda self: _volume(self.semi_axes), doc="Volume ``4 pi a b c / 3``.")
    bounding_radius = property(lambda self: max(self.semi_axes), doc="Radius of the enclosing sphere.")


def _volume(axes) -> float:
    a, b, c = axes
    return 4.0 * math.pi * a * b * c / 3.0


def depolarization_factors(semi_axes):
    """Depolarization factors of ellipsoids.

    Parameters
    ----------
    semi_axes : (..., 3) array_like of float
        Semi-axes ``(a, b, c)``, any positive lengths.

    Returns
    -------
    (..., 3) ndarray of float
        ``(L_a, L_b, L_c)``; each row sums to one.

    Notes
    -----
    ``L_a = (a b c / 2) int_0^inf ds / ((s + a^2) sqrt((s+a^2)(s+b^2)(s+c^2)))``
    which equals ``(a b c / 3) R_D(b^2, c^2, a^2)`` with Carlson's symmetric integral
    ``R_D(x, y, z) = (3/2) int_0^inf dt / ((t+z) sqrt((t+x)(t+y)(t+z)))``.
    The axes are scaled by their maximum first so the integral is well conditioned.

    References
    ----------
    Osborn, J. A. (1945). Demagnetizing factors of the general ellipsoid.
    Phys. Rev. 67, 351. Carlson, B. C. (1995). Numerical computation of real or
    complex elliptic integrals. Numer. Algorithms 10, 13.

    Examples
    --------
    >>> depolarization_factors([2.0, 2.0, 2.0])
    array([0.33333333, 0.33333333, 0.33333333])
    """
    ax = np.asarray(semi_axes, dtype=float)
    ax = ax / ax.max(axis=-1, keepdims=True)
    a2, b2, c2 = ax[..., 0] ** 2, ax[..., 1] ** 2, ax[..., 2] ** 2
    pre = ax[..., 0] * ax[..., 1] * ax[..., 2] / 3.0
    la = pre * elliprd(b2, c2, a2)
    lb = pre * elliprd(c2, a2, b2)
    lc = pre * elliprd(a2, b2, c2)
    return np.stack([la, lb, lc], axis=-1)


def spheroid_depolarization(aspect_ratio):
    """Closed-form depolarization factor along the symmetry axis of a spheroid.

    Parameters
    ----------
    aspect_ratio : array_like of float
        ``m = polar / equatorial``; ``m > 1`` prolate, ``m < 1`` oblate.

    Returns
    -------
    ndarray of float
        ``L_polar``; the equatorial factors are ``(1 - L_polar) / 2``.

    Notes
    -----
    Prolate (``m > 1``, eccentricity ``e = sqrt(1 - 1/m^2)``):
    ``L = (1 - e^2)/e^3 (artanh(e) - e)``.
    Oblate (``m < 1``, ``g = sqrt(1/m^2 - 1)``):
    ``L = (1 + g^2)/g^3 (g - arctan(g))``.

    References
    ----------
    Osborn, J. A. (1945). Phys. Rev. 67, 351. Stoner, E. C. (1945). The
    demagnetizing factors for ellipsoids. Phil. Mag. 36, 803.
    """
    m = np.asarray(aspect_ratio, dtype=float)
    out = np.full(m.shape, 1.0 / 3.0)
    pro = m > 1.0
    obl = m < 1.0
    e = np.sqrt(1.0 - 1.0 / m[pro] ** 2)
    out[pro] = (1.0 - e**2) / e**3 * (np.arctanh(e) - e)
    g = np.sqrt(1.0 / m[obl] ** 2 - 1.0)
    out[obl] = (1.0 + g**2) / g**3 * (g - np.arctan(g))
    return out


def _rotate(diag, rotations):
    return np.einsum("nik,nk,njk->nij", rotations, diag, rotations)


def polarizability_tensors(semi_axes, rotations, eps_inclusion, eps_host, power=1.0):
    """Lab-frame polarizabilities of isolated ellipsoids in reduced units.

    Parameters
    ----------
    semi_axes : (N, 3) ndarray of float, reduced length
    rotations : (N, 3, 3) ndarray of float
        Columns are the body axes in lab coordinates.
    eps_inclusion : (N,) array_like of complex or float
    eps_host : complex or float
    power : float
        Return ``R diag(alpha_k**power) R^T`` (``0.5`` gives the principal square
        root used to symmetrise the moment equations).

    Returns
    -------
    (N, 3, 3) ndarray of float or complex, reduced moment per reduced field
        ``R diag(alpha_k) R^T`` with
        ``alpha_k = (abc/3)(eps_i - eps_h)/(eps_h + L_k (eps_i - eps_h))``.

    References
    ----------
    Jackson, J. D. (1999). Classical Electrodynamics, 3rd ed., sec. 4.4 (sphere);
    Osborn (1945) for the depolarization factors.
    """
    semi = np.asarray(semi_axes, dtype=float)
    L = depolarization_factors(semi)
    eps_i = np.asarray(eps_inclusion)[:, None]
    d = eps_i - eps_host
    alpha_k = (np.prod(semi, axis=1)[:, None] / 3.0) * d / (eps_host + L * d)
    if power != 1.0:
        alpha_k = np.asarray(alpha_k, dtype=complex) ** power
    return _rotate(alpha_k, np.asarray(rotations, dtype=float))


def interior_field_factors(semi_axes, rotations, eps_inclusion, eps_host):
    """Maps from exciting field to the uniform field inside each ellipsoid.

    Returns
    -------
    (N, 3, 3) ndarray
        ``R diag(eps_h / (eps_h + L_k (eps_i - eps_h))) R^T``; for a sphere
        ``3 eps_h / (eps_i + 2 eps_h)`` times the identity (Jackson 1999, sec. 4.4).
    """
    semi = np.asarray(semi_axes, dtype=float)
    L = depolarization_factors(semi)
    eps_i = np.asarray(eps_inclusion)[:, None]
    g = eps_host / (eps_host + L * (eps_i - eps_host))
    return _rotate(g * np.ones_like(L), np.asarray(rotations, dtype=float))


def rotation_to_axis(axis):
    """Rotation matrix whose third column is the unit vector along ``axis``.

    Parameters
    ----------
    axis : (3,) array_like of float
        Any non-zero direction.

    Returns
    -------
    (3, 3) ndarray of float
        A proper rotation (determinant +1) turning body z onto ``axis``.

    Examples
    --------
    >>> rotation_to_axis([0, 0, 1])[:, 2]
    array([0., 0., 1.])
    """
    v = as_float_array(axis, "axis", (3,))
    n = np.linalg.norm(v)
    if n == 0:
        from ..errors import InputError

        raise InputError("axis: must be a non-zero vector", "axis")
    z = v / n
    helper = np.array([1.0, 0.0, 0.0]) if abs(z[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    x = np.cross(helper, z)
    x /= np.linalg.norm(x)
    y = np.cross(z, x)
    return np.column_stack([x, y, z])
