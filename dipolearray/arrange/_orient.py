"""Orientation distributions for spheroids: aligned, isotropic, or with a nematic order parameter."""

from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from .._validate import as_float_array, as_int, check_choice
from ..errors import InputError

ORIENTATIONS = ("aligned", "isotropic", "nematic")


def frames_from_axes(axes, spin=None):
    """Rotations whose third column is each unit vector in ``axes``, turned by ``spin`` about it.

    Parameters
    ----------
    axes : (N, 3) ndarray of float
        Non-zero directions (normalised here).
    spin : (N,) ndarray of float, optional
        Angle (radians) about each axis; zero when omitted.

    Returns
    -------
    (N, 3, 3) ndarray of float
        Proper rotations.
    """
    z = np.asarray(axes, dtype=float)
    z = z / np.linalg.norm(z, axis=1, keepdims=True)
    helper = np.where(np.abs(z[:, :1]) < 0.9, [[1.0, 0.0, 0.0]], [[0.0, 1.0, 0.0]])
    x = np.cross(helper, z)
    x /= np.linalg.norm(x, axis=1, keepdims=True)
    y = np.cross(z, x)
    if spin is not None:
        c, s = np.cos(spin)[:, None], np.sin(spin)[:, None]
        x, y = c * x + s * y, -s * x + c * y
    return np.stack([x, y, z], axis=2)


def _p2(kappa, x):
    w = np.exp(kappa * (x**2 - 1.0)) if kappa > 0 else np.exp(kappa * x**2)
    return float(np.sum(w * 1.5 * (x**2 - 1.0 / 3.0)) / np.sum(w))


_X = (np.arange(20001) + 0.5) / 20001.0


def watson_concentration(order_parameter):
    """Concentration ``kappa`` of the Watson density ``f(cos t) ~ exp(kappa cos^2 t)`` with ``<P2> = S``.

    ``S`` in ``(-0.5, 1)``: 0 is isotropic, towards 1 aligned with the director, towards
    -0.5 spread in the plane normal to it.

    References
    ----------
    Watson, G. S. (1965). Equatorial distributions on a sphere. Biometrika 52, 193.
    """
    S = float(order_parameter)
    if abs(S) < 1e-12:
        return 0.0
    lo, hi = (1e-9, 1e6) if S > 0 else (-1e6, -1e-9)
    return float(brentq(lambda k: _p2(k, _X) - S, lo, hi, xtol=1e-12, rtol=1e-12))


def orientations(n_bodies, kind="isotropic", *, axis=(0.0, 0.0, 1.0), order_parameter=None, rng=None):
    """Body-to-lab rotations for ``n_bodies`` spheroids (the symmetry axis is the third column).

    Parameters
    ----------
    n_bodies : int
    kind : {"aligned", "isotropic", "nematic"}
        All symmetry axes along ``axis``; uniformly random rotations; or symmetry axes
        drawn from the Watson distribution about the director ``axis`` with the given
        nematic ``order_parameter`` ``S = <P2(cos theta)>``.
    axis : (3,) array_like
        Alignment axis or director.
    order_parameter : float
        ``S`` for ``kind = "nematic"``, in ``(-0.5, 1)``.
    rng : numpy.random.Generator or int, optional

    Returns
    -------
    (n_bodies, 3, 3) ndarray of float

    Examples
    --------
    >>> R = orientations(4000, "nematic", order_parameter=0.6, rng=0)
    >>> u = R[:, :, 2]
    >>> round(float(np.mean(1.5 * u[:, 2] ** 2 - 0.5)), 1)
    0.6
    """
    n = as_int(n_bodies, "n_bodies", minimum=1)
    check_choice(kind, "kind", ORIENTATIONS)
    d = as_float_array(axis, "axis", (3,))
    if not np.linalg.norm(d):
        raise InputError("axis: must be a non-zero vector", "axis")
    d = d / np.linalg.norm(d)
    rng = np.random.default_rng(rng)
    if kind == "aligned":
        if order_parameter not in (None, 1, 1.0):
            raise InputError(
                "order_parameter: only kind = 'nematic' takes an order parameter", "order_parameter"
            )
        return frames_from_axes(np.tile(d, (n, 1)))
    if kind == "isotropic":
        cos_t = rng.uniform(-1.0, 1.0, n)
    else:
        if order_parameter is None:
            raise InputError("order_parameter: required for kind = 'nematic'", "order_parameter")
        S = float(order_parameter)
        if not -0.5 < S < 1.0:
            raise InputError(
                f"order_parameter: {S} is outside (-0.5, 1) (1 is 'aligned'; -0.5 all in the plane)",
                "order_parameter",
            )
        kappa = watson_concentration(S)
        w = np.exp(kappa * (_X**2 - 1.0)) if kappa > 0 else np.exp(kappa * _X**2)
        cdf = np.concatenate([[0.0], np.cumsum(w)])
        cdf /= cdf[-1]
        grid = np.concatenate([[0.0], _X + 0.5 / len(_X)])
        grid[-1] = 1.0
        cos_t = np.interp(rng.random(n), cdf, grid) * rng.choice([-1.0, 1.0], n)
    phi = rng.uniform(0.0, 2.0 * np.pi, n)
    sin_t = np.sqrt(np.clip(1.0 - cos_t**2, 0.0, None))
    local = np.stack([sin_t * np.cos(phi), sin_t * np.sin(phi), cos_t], axis=1)
    frame = frames_from_axes(d[None, :])[0]
    axes = local @ frame.T
    return frames_from_axes(axes, rng.uniform(0.0, 2.0 * np.pi, n))


def order_parameter(rotations, axis=(0.0, 0.0, 1.0)):
    """Nematic order parameter ``<P2(u . n)>`` of the bodies' symmetry axes about ``axis``."""
    R = np.asarray(rotations, dtype=float)
    d = as_float_array(axis, "axis", (3,))
    d = d / np.linalg.norm(d)
    c = R[:, :, 2] @ d
    return float(np.mean(1.5 * c**2 - 0.5))
