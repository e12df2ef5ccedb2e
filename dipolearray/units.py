"""Reduced units of the engine and their SI scale factors.

Inside the solver lengths are in a reference length ``l``, the applied field in
``|E0|`` and dipole moments in ``4*pi*eps0*eps_h*l**3*|E0|``, so that the field of a
dipole is ``T(r) p`` with ``T = (3 r^ r^ - I)/r**3`` and the polarizability of a sphere
is ``a**3 * beta``. The factors below turn reduced values into SI; they are the only
place where ``eps0`` enters.

For a lossy host (complex ``eps_h``) the moment unit is complex. Forces, torques and
energies are reported with the real part ``eps_h'`` in their unit (exact for a
lossless host); the store says so in its attributes.
"""

from __future__ import annotations

import math

__all__ = ["EPS0", "SCALE_KINDS", "si_factor"]

#: Vacuum permittivity in F/m (CODATA 2018 recommended value, from memory).
EPS0 = 8.8541878128e-12

#: Kinds of reduced quantity and their SI unit.
SCALE_KINDS = {
    "dimensionless": "1",
    "length": "m",
    "field": "V/m",
    "moment": "C m",
    "force": "N",
    "energy": "J",
    "torque": "N m",
}


def si_factor(kind: str, *, length_m: float, field_V_per_m: float, eps_host) -> complex | float:
    """SI value of one reduced unit of ``kind``.

    Parameters
    ----------
    kind : str
        One of :data:`SCALE_KINDS`.
    length_m : float
        The reference length in metres.
    field_V_per_m : float
        The applied field strength ``|E0|`` in V/m.
    eps_host : complex or float
        Relative permittivity of the host.

    Returns
    -------
    complex or float
        Multiply a reduced value by this to get SI.
    """
    eh = complex(eps_host)
    k_moment = 4.0 * math.pi * EPS0 * l3(length_m) * field_V_per_m
    k_mech = 4.0 * math.pi * EPS0 * eh.real * field_V_per_m**2
    table = {
        "dimensionless": 1.0,
        "length": length_m,
        "field": field_V_per_m,
        "moment": k_moment * (eh if eh.imag else eh.real),
        "force": k_mech * length_m**2,
        "energy": k_mech * length_m**3,
        "torque": k_mech * length_m**3,
    }
    if kind not in table:
        raise KeyError(f"unknown quantity kind {kind!r}; known: {sorted(table)}")
    return table[kind]


def l3(length_m: float) -> float:
    """Cube of a length (kept separate so the moment unit reads like its formula)."""
    return length_m**3
