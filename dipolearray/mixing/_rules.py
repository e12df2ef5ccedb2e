from __future__ import annotations

import numpy as np


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
