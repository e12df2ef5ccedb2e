from __future__ import annotations

import numpy as np

from ..errors import InputError


def _beta(eps_i, eps_h):
    return (eps_i - eps_h) / (eps_i + 2 * eps_h)


def maxwell_garnett(eps_host, eps_inclusion, volume_fraction):
    """Maxwell Garnett effective permittivity of spheres in a host.

    Notes
    -----
    ``(eps - eps_h)/(eps + 2 eps_h) = phi beta``, ``beta = (eps_i - eps_h)/(eps_i + 2 eps_h)``,
    so ``eps = eps_h (1 + 2 phi beta)/(1 - phi beta)``.

    References
    ----------
    Maxwell Garnett, J. C. (1904). Colours in metal glasses and in metallic films.
    Phil. Trans. R. Soc. Lond. A 203, 385.

    Examples
    --------
    >>> float(maxwell_garnett(1.0, 1.0, 0.3))
    1.0
    """
    phi = np.asarray(volume_fraction)
    x = phi * _beta(eps_inclusion, eps_host)
    return eps_host * (1 + 2 * x) / (1 - x)


def clausius_mossotti(eps_host, polarizability, number_density):
    """Effective permittivity of point polarizabilities on a cubic lattice.

    Parameters
    ----------
    polarizability : complex or float, reduced (``4 pi eps0 eps_h l^3``)
    number_density : float, bodies per reduced volume

    Notes
    -----
    With the Lorentz local field ``E_loc = E + 4 pi P / 3`` (reduced units),
    ``(eps - eps_h)/(eps + 2 eps_h) = 4 pi n alpha / 3``. Spheres of radius ``a``
    with ``alpha = a^3 beta`` give back Maxwell Garnett at ``phi = 4 pi n a^3 / 3``.

    References
    ----------
    Jackson, J. D. (1999). Classical Electrodynamics, 3rd ed., sec. 4.5.
    """
    x = 4 * np.pi * np.asarray(number_density) * np.asarray(polarizability) / 3
    return eps_host * (1 + 2 * x) / (1 - x)


def dilute_spheres(eps_host, eps_inclusion, volume_fraction):
    """First-order dilute limit ``eps = eps_h (1 + 3 beta phi)``.

    References
    ----------
    Maxwell, J. C. (1873). A Treatise on Electricity and Magnetism, vol. 1, art. 314.
    """
    return eps_host * (1 + 3 * _beta(eps_inclusion, eps_host) * np.asarray(volume_fraction))


def _depol(depolarization):
    """Three depolarization factors summing to one, or an aspect ratio (spheroid)."""
    from ..shapes import spheroid_depolarization

    if depolarization is None:
        return np.full(3, 1.0 / 3.0)
    d = np.asarray(depolarization, dtype=float)
    if d.ndim == 0:
        Lp = float(spheroid_depolarization(d))
        return np.array([(1 - Lp) / 2, (1 - Lp) / 2, Lp])
    if d.shape != (3,) or np.any(d < 0) or abs(d.sum() - 1) > 1e-9:
        raise InputError(
            f"depolarization: expected an aspect ratio or three factors >= 0 summing to 1, got {d}",
            "depolarization",
        )
    return d


def _phi(volume_fraction):
    phi = np.asarray(volume_fraction, dtype=float)
    if np.any((phi < 0) | (phi > 1)):
        raise InputError("volume_fraction: must lie in [0, 1]", "volume_fraction")
    return phi


def maxwell_garnett_ellipsoids(
    eps_host, eps_inclusion, volume_fraction, depolarization, orientation="random"
):
    """Maxwell Garnett for ellipsoidal (spheroidal) inclusions, aligned or randomly oriented.

    Parameters
    ----------
    eps_host, eps_inclusion : complex or array_like
    volume_fraction : array_like
    depolarization : float or (3,) array_like
        Aspect ratio ``polar / equatorial`` of a spheroid, or the three factors ``N_k``.
    orientation : {"random", "aligned"}
        ``aligned`` returns the three principal values ``(..., 3)`` along the body axes.

    Notes
    -----
    With ``A_k = (eps_i - eps_h) / (eps_h + N_k (eps_i - eps_h))``: aligned,
    ``eps_k = eps_h + phi eps_h (eps_i - eps_h) / (eps_h + (1 - phi) N_k (eps_i - eps_h))``;
    random, ``eps = eps_h + eps_h (phi/3) sum_k A_k / (1 - (phi/3) sum_k N_k A_k)``. Both give
    Maxwell Garnett for spheres; aligned needles (``N = 0``) and discs (``N = 1``) give the
    parallel and series Wiener values.

    References
    ----------
    Sihvola, A. (1999). Electromagnetic Mixing Formulas and Applications. IEE, ch. 4
    (formulas from memory, checked here against their sphere, needle and disc limits).
    Polder, D. and van Santen, J. H. (1946). Physica 12, 257.
    """
    from .._validate import check_choice

    check_choice(orientation, "orientation", ("random", "aligned"))
    N = _depol(depolarization)
    phi = _phi(volume_fraction)
    eh, ei = np.asarray(eps_host), np.asarray(eps_inclusion)
    d = ei - eh
    if orientation == "aligned":
        return np.stack([eh + phi * eh * d / (eh + (1 - phi) * n * d) for n in N], axis=-1)
    A = [d / (eh + n * d) for n in N]
    s = sum(A) / 3.0
    t = sum(n * a for n, a in zip(N, A, strict=True)) / 3.0
    return eh + eh * phi * s / (1 - phi * t)


def dilute(eps_host, eps_inclusion, volume_fraction, depolarization=None):
    """First order in volume fraction for randomly oriented ellipsoids (spheres by default).

    ``eps = eps_h (1 + (phi/3) sum_k (eps_i - eps_h)/(eps_h + N_k (eps_i - eps_h)))``; spheres give
    ``eps_h (1 + 3 beta phi)`` (Maxwell 1873; Polder and van Santen 1946 for ellipsoids).
    """
    N = _depol(depolarization)
    eh, ei = np.asarray(eps_host), np.asarray(eps_inclusion)
    d = ei - eh
    return eh * (1 + _phi(volume_fraction) / 3.0 * sum(d / (eh + n * d) for n in N))


def bruggeman(eps_host, eps_inclusion, volume_fraction, depolarization=None, *, tol=1e-13, maxiter=200):
    """Symmetric Bruggeman (effective medium) permittivity; inclusions may be randomly oriented ellipsoids.

    Solves ``(phi/3) sum_k (eps_i - eps)/(eps + N_k (eps_i - eps))
    + (1 - phi) 3 (eps_h - eps)/(eps_h + 2 eps) = 0`` (host grains spherical). For spheres the
    root is closed form,
    ``eps = (b + sqrt(b^2 + 8 eps_i eps_h))/4`` with ``b = (3 phi - 1) eps_i + (2 - 3 phi) eps_h``,
    the branch with ``eps'' >= 0`` (``eps = eps' - j eps''``); other shapes by Newton's method
    started from it. Spheres percolate at ``phi = 1/3``.

    References
    ----------
    Bruggeman, D. A. G. (1935). Berechnung verschiedener physikalischer Konstanten von
    heterogenen Substanzen. Ann. Phys. 416, 636.
    Polder, D. and van Santen, J. H. (1946). Physica 12, 257 (ellipsoids).
    """
    phi = _phi(volume_fraction)
    eh = np.asarray(eps_host, dtype=complex)
    ei = np.asarray(eps_inclusion, dtype=complex)
    b = (3 * phi - 1) * ei + (2 - 3 * phi) * eh
    disc = np.sqrt(b * b + 8 * ei * eh)
    eps = (b + disc) / 4
    other = (b - disc) / 4
    # The physical root has non-negative loss (imag <= 0) and, for real data, is positive.
    bad = (eps.imag > 1e-12 * np.abs(eps)) | (eps.real <= 0)
    eps = np.where(bad, other, eps)
    N = _depol(depolarization)
    if not np.allclose(N, 1.0 / 3.0):

        def F(e):
            inc = sum((ei - e) / (e + n * (ei - e)) for n in N) / 3.0
            return phi * inc + (1 - phi) * 3 * (eh - e) / (eh + 2 * e)

        def dF(e):
            inc = sum(-ei / (e + n * (ei - e)) ** 2 for n in N) / 3.0
            return phi * inc + (1 - phi) * (-9 * eh) / (eh + 2 * e) ** 2

        for _ in range(maxiter):
            step = F(eps) / dF(eps)
            eps = eps - step
            if np.all(np.abs(step) <= tol * np.abs(eps)):
                break
        else:  # pragma: no cover - Newton from the sphere root converges in practice
            raise ValueError("bruggeman: Newton iteration did not converge")
    if not (np.iscomplexobj(eps_host) or np.iscomplexobj(eps_inclusion)):
        eps = eps.real
    return eps


def looyenga(eps_host, eps_inclusion, volume_fraction):
    """Looyenga: ``eps^(1/3) = phi eps_i^(1/3) + (1 - phi) eps_h^(1/3)``.

    References
    ----------
    Looyenga, H. (1965). Dielectric constants of heterogeneous mixtures. Physica 31, 401.
    """
    phi = _phi(volume_fraction)
    return (phi * np.asarray(eps_inclusion) ** (1 / 3) + (1 - phi) * np.asarray(eps_host) ** (1 / 3)) ** 3


def lichtenecker(eps_host, eps_inclusion, volume_fraction):
    """Lichtenecker's logarithmic rule: ``ln eps = phi ln eps_i + (1 - phi) ln eps_h``.

    References
    ----------
    Lichtenecker, K. (1926). Die Dielektrizitaetskonstante natuerlicher und kuenstlicher
    Mischkoerper. Phys. Z. 27, 115.
    """
    phi = _phi(volume_fraction)
    return np.exp(phi * np.log(np.asarray(eps_inclusion)) + (1 - phi) * np.log(np.asarray(eps_host)))


def wiener_bounds(eps_host, eps_inclusion, volume_fraction):
    """Wiener bounds ``(series, parallel)``: layers across and along the field.

    ``series = 1/(phi/eps_i + (1 - phi)/eps_h)``, ``parallel = phi eps_i + (1 - phi) eps_h``;
    every isotropic or anisotropic two-phase mixture of real permittivities lies between.

    References
    ----------
    Wiener, O. (1912). Die Theorie des Mischkoerpers fuer das Feld der stationaeren
    Stroemung. Abh. Math.-Phys. Kl. Saechs. Akad. Wiss. 32, 509.
    """
    phi = _phi(volume_fraction)
    eh, ei = np.asarray(eps_host), np.asarray(eps_inclusion)
    return 1 / (phi / ei + (1 - phi) / eh), phi * ei + (1 - phi) * eh


def hashin_shtrikman_bounds(eps_host, eps_inclusion, volume_fraction):
    """Hashin-Shtrikman bounds ``(lower, upper)`` for isotropic two-phase mixtures.

    The bounds are the Maxwell Garnett values with the lower- and the higher-permittivity
    phase as host: ``lower = MG(eps_lo host, eps_hi inclusions at its fraction)``. They are
    the tightest bounds from volume fraction and isotropy alone, for real permittivities;
    for complex ones the two values are corners of the (lens-shaped) bounded region and are
    returned in host-first order without ranking.

    References
    ----------
    Hashin, Z. and Shtrikman, S. (1962). A variational approach to the theory of the
    effective magnetic permeability of multiphase materials. J. Appl. Phys. 33, 3125.
    """
    phi = _phi(volume_fraction)
    eh, ei = np.asarray(eps_host), np.asarray(eps_inclusion)
    host_first = maxwell_garnett(eh, ei, phi)
    incl_first = maxwell_garnett(ei, eh, 1 - phi)
    if np.iscomplexobj(host_first) or np.iscomplexobj(incl_first):
        return host_first, incl_first
    return np.minimum(host_first, incl_first), np.maximum(host_first, incl_first)
