import numpy as np
import pytest
from scipy.integrate import quad

from dipolearray import Ellipsoid, InputError, Sphere, Spheroid
from dipolearray.shapes import (
    depolarization_factors,
    interior_field_factors,
    polarizability_tensors,
    rotation_to_axis,
    spheroid_depolarization,
)


def quad_depolarization(a, b, c):
    """Defining integral of the depolarization factor along a, by adaptive quadrature
    (Osborn 1945, eq. for the general ellipsoid), independent of Carlson's R_D."""

    def f(s):
        return 1.0 / ((s + a * a) * np.sqrt((s + a * a) * (s + b * b) * (s + c * c)))

    return a * b * c / 2.0 * quad(f, 0, np.inf, limit=200)[0]


@pytest.mark.parametrize("axes", [(1, 1, 1), (1, 2, 3), (0.3, 1, 1), (5, 1, 0.5), (1, 1, 20)])
def test_rd_against_quadrature_and_sum_rule(axes):
    L = depolarization_factors(np.array(axes, dtype=float))
    ref = [quad_depolarization(*np.roll(axes, -k)) for k in range(3)]
    np.testing.assert_allclose(L, ref, rtol=1e-9)
    assert L.sum() == pytest.approx(1.0, abs=1e-13)


def test_sphere_is_one_third():
    np.testing.assert_allclose(depolarization_factors([2.5, 2.5, 2.5]), 1 / 3, rtol=1e-14)
    assert Sphere(3.0).depolarization == (1 / 3,) * 3


@pytest.mark.parametrize("m", [0.05, 0.2, 0.5, 0.9, 0.999, 1.001, 1.5, 3.0, 10.0, 50.0])
def test_spheroid_closed_forms_osborn(m):
    # Osborn (1945), Phys. Rev. 67, 351: prolate and oblate closed forms vs Carlson R_D.
    sph = Spheroid(polar=m, equatorial=1.0)
    Lz = sph.depolarization[2]
    assert Lz == pytest.approx(float(spheroid_depolarization(m)), rel=1e-10)
    assert sph.depolarization[0] == pytest.approx((1 - Lz) / 2, rel=1e-10)


def test_limits_needle_and_disc():
    # Common practice, no source: a needle has L_axial -> 0, a thin disc L_axial -> 1.
    assert spheroid_depolarization(1e4) < 1e-6
    assert spheroid_depolarization(1e-4) > 0.999


def test_sphere_polarizability_jackson():
    # Jackson (1999), sec. 4.4: p = 4 pi eps0 eps_h a^3 (eps_i - eps_h)/(eps_i + 2 eps_h) E0.
    a, ei, eh = 1.7, 7.0 - 2.0j, 2.2
    alpha = polarizability_tensors([[a, a, a]], [np.eye(3)], [ei], eh)[0]
    np.testing.assert_allclose(alpha, np.eye(3) * a**3 * (ei - eh) / (ei + 2 * eh), rtol=1e-14)
    g = interior_field_factors([[a, a, a]], [np.eye(3)], [ei], eh)[0]
    np.testing.assert_allclose(g, np.eye(3) * 3 * eh / (ei + 2 * eh), rtol=1e-14)


def test_rotated_tensor_is_rotation_of_body_tensor():
    R = rotation_to_axis([1.0, 2.0, -0.5])
    axes = np.array([[0.5, 0.5, 2.0]])
    body = polarizability_tensors(axes, [np.eye(3)], [9.0], 1.5)[0]
    lab = polarizability_tensors(axes, [R], [9.0], 1.5)[0]
    np.testing.assert_allclose(lab, R @ body @ R.T, atol=1e-14)
    # The long axis is the most polarizable direction.
    w, v = np.linalg.eigh(lab)
    assert abs(v[:, -1] @ R[:, 2]) == pytest.approx(1.0, abs=1e-12)


def test_square_root_squares_back():
    axes = np.array([[0.5, 1.0, 2.0], [1.0, 1.0, 1.0]])
    rots = np.array([rotation_to_axis([1, 1, 0]), np.eye(3)])
    for eps in (9.0, 0.5, 4.0 - 3.0j):
        a = polarizability_tensors(axes, rots, [eps, eps], 2.0)
        h = polarizability_tensors(axes, rots, [eps, eps], 2.0, power=0.5)
        np.testing.assert_allclose(h @ h, a, atol=1e-14)


def test_rotation_to_axis_is_proper():
    for v in ([0, 0, 1], [1, 0, 0], [0.3, -0.2, 0.9], [0, 0, -1]):
        R = rotation_to_axis(v)
        np.testing.assert_allclose(R.T @ R, np.eye(3), atol=1e-14)
        assert np.linalg.det(R) == pytest.approx(1.0)
        np.testing.assert_allclose(R[:, 2], np.array(v) / np.linalg.norm(v), atol=1e-14)
    with pytest.raises(InputError, match="axis"):
        rotation_to_axis([0, 0, 0])


@pytest.mark.parametrize(
    "make, key",
    [
        (lambda: Sphere(-1.0), "radius"),
        (lambda: Sphere(float("nan")), "radius"),
        (lambda: Spheroid(0.0, 1.0), "polar"),
        (lambda: Spheroid(1.0, "x"), "equatorial"),
        (lambda: Ellipsoid(1.0, 1.0, float("inf")), "c"),
    ],
)
def test_bad_sizes(make, key):
    with pytest.raises(InputError, match=key):
        make()
