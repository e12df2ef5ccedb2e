"""Mixing: analytic mixing rules and bounds to compare computed results against.

Each function states its formula and source. Vectorised over volume fraction and
complex permittivity (``eps = eps' - 1j eps''``).

Public names
------------
maxwell_garnett
    Spheres in a host (Maxwell Garnett 1904).
clausius_mossotti
    Point polarizabilities on a cubic lattice (Lorentz local field).
dilute_spheres
    First order in volume fraction (Maxwell 1873).
"""

from ._rules import clausius_mossotti, dilute_spheres, maxwell_garnett

__all__ = ["maxwell_garnett", "clausius_mossotti", "dilute_spheres"]
