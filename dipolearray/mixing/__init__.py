"""Mixing: analytic mixing rules and bounds to compare computed results against.

Each function states its formula and source. Vectorised over volume fraction and
complex permittivity (``eps = eps' - 1j eps''``).

Public names
------------
maxwell_garnett
    Spheres in a host (Maxwell Garnett 1904).
clausius_mossotti
    Point polarizabilities on a cubic lattice (Lorentz local field).
dilute_spheres, dilute
    First order in volume fraction (Maxwell 1873; randomly oriented ellipsoids).
maxwell_garnett_ellipsoids
    Aligned or randomly oriented spheroids and ellipsoids (Polder-van Santen form).
bruggeman
    Symmetric effective-medium theory, spheres (closed form) or randomly oriented
    ellipsoids (Bruggeman 1935).
looyenga, lichtenecker
    Empirical power-law and logarithmic rules (Looyenga 1965, Lichtenecker 1926).
wiener_bounds, hashin_shtrikman_bounds
    Bounds from volume fraction alone (Wiener 1912) and with isotropy (Hashin and
    Shtrikman 1962).
"""

from ._rules import (
    bruggeman,
    clausius_mossotti,
    dilute,
    dilute_spheres,
    hashin_shtrikman_bounds,
    lichtenecker,
    looyenga,
    maxwell_garnett,
    maxwell_garnett_ellipsoids,
    wiener_bounds,
)

__all__ = [
    "maxwell_garnett",
    "maxwell_garnett_ellipsoids",
    "clausius_mossotti",
    "dilute_spheres",
    "dilute",
    "bruggeman",
    "looyenga",
    "lichtenecker",
    "wiener_bounds",
    "hashin_shtrikman_bounds",
]
