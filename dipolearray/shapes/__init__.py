"""Shapes: spheres, spheroids and ellipsoids and their isolated response.

Every shape is an ellipsoid with semi-axes ``(a, b, c)`` along its body axes.
Depolarization factors come from Carlson's symmetric elliptic integral,
``L_x = (a b c / 3) R_D(b**2, c**2, a**2)`` (and cyclically), which sum to one.
The polarizability in reduced units (``4 pi eps0 eps_h l**3``) along body axis k is

    alpha_k = (a b c / 3) (eps_i - eps_h) / (eps_h + L_k (eps_i - eps_h)),

rotated to the lab frame as ``R diag(alpha_k) R^T`` where the columns of ``R`` are
the body axes in lab coordinates. A sphere gives ``a**3 (eps_i - eps_h)/(eps_i + 2 eps_h)``.

Public names
------------
Sphere, Spheroid, Ellipsoid
    Shape records (reduced lengths).
depolarization_factors
    ``(L_a, L_b, L_c)`` for semi-axes, vectorised.
spheroid_depolarization
    Closed-form axial factor of a spheroid (Osborn 1945; Stoner 1945).
polarizability_tensors
    Lab-frame ``(N, 3, 3)`` polarizabilities for many bodies.
interior_field_factors
    Lab-frame ``(N, 3, 3)`` maps from exciting field to the uniform interior field.
rotation_to_axis
    Rotation matrix that turns the body z axis onto a given direction.
"""

from ._shapes import (
    Ellipsoid,
    Sphere,
    Spheroid,
    depolarization_factors,
    interior_field_factors,
    polarizability_tensors,
    rotation_to_axis,
    spheroid_depolarization,
)

__all__ = [
    "Sphere",
    "Spheroid",
    "Ellipsoid",
    "depolarization_factors",
    "spheroid_depolarization",
    "polarizability_tensors",
    "interior_field_factors",
    "rotation_to_axis",
]
