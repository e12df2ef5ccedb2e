"""Observables: pure functions of a :class:`~dipolearray.solvers.Solution`.

All values are in reduced units (lengths in the reference length, fields in
``|E0|``, moments in ``4 pi eps0 eps_h l^3 |E0|``, forces in
``4 pi eps0 eps_h l^2 |E0|^2``, energies and torques in ``4 pi eps0 eps_h l^3 |E0|^2``).
The last axis ``K`` runs over the scene's applied field vectors.

For complex permittivities the moments and fields are phasors of a time-harmonic
field with peak amplitude ``E0`` (``eps = eps' - 1j eps''``); forces, torques and
energies are then cycle averages (``1/2 Re`` of the product with the complex
conjugate). For real permittivities they are the static values.

Public names
------------
local_field
    Exciting field at each body centre, ``E0 + sum_{j != i} T_ij p_j``.
interior_field
    Uniform field inside each ellipsoid (point-dipole model).
field_at
    Field at arbitrary points (interior field for points inside a body).
field_slice, slice_outlines
    Field magnitude on a grid in a plane through the sample; the bodies' cut outlines.
total_moment
    Sum of all moments.
effective_permittivity
    Effective permittivity of a spherical sample from its total moment.
EffectivePermittivity
    Its result record.
field_enhancement, FieldEnhancement
    Local, interior and host-surface field magnitudes over ``|E0|`` per body, with
    percentiles (the hot-spot statistics).
energy
    Electrostatic energy at fixed applied field, ``-1/2 sum p . E0``.
forces, torques
    Force on every body, torque on every body.
multipole_forces, maxwell_stress_forces
    Forces of a multipole solution: exact energy derivative (what ``forces`` returns for
    it) and the Maxwell stress integrated over each sphere, a second route.
OBSERVABLES
    Registry of names, shapes, unit kinds and descriptions (store, config, CLI).
"""

from ._effective import EffectivePermittivity, effective_permittivity
from ._enhancement import FieldEnhancement, field_enhancement
from ._fields import field_at, field_slice, interior_field, local_field, slice_outlines, total_moment
from ._mechanics import energy, forces, maxwell_stress_forces, multipole_forces, torques
from ._registry import OBSERVABLES, Observable

__all__ = [
    "local_field",
    "interior_field",
    "field_at",
    "field_slice",
    "slice_outlines",
    "total_moment",
    "effective_permittivity",
    "EffectivePermittivity",
    "field_enhancement",
    "FieldEnhancement",
    "energy",
    "forces",
    "multipole_forces",
    "maxwell_stress_forces",
    "torques",
    "OBSERVABLES",
    "Observable",
]
