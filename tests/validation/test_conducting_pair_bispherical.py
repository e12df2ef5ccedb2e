"""Two perfectly conducting spheres in a field across their line of centres.

Source: the transverse polarizability of two equal conducting spheres (radius a,
centre distance d) by the method of images: a transverse dipole p at distance s from
the centre of a conducting sphere has the image dipole -(a/s)^3 p at distance a^2/s
from that centre, with no net image charge (Smythe, W. R. (1950), Static and Dynamic
Electricity, 2nd ed., sec. 5.08, images in a sphere; the bispherical-coordinate form of
the same series, alpha_perp = 2 a^3 sinh^3(mu) sum_n (-1)^(n+1) / sinh^3(n mu) with
cosh(mu) = d / 2a, is from memory and checked here against the image series).
Gaps from 1 to 0.001 radius.
"""

import warnings

import numpy as np
import pytest

from dipolearray import Material, Population, Scene, Sphere, solve
from dipolearray.operators import MultipoleOperator, pair_dipoles

pytestmark = pytest.mark.slow

CONDUCTOR = 1e12  # k_l = 1 - O(1e-12): a perfect conductor to the precision checked


def image_series(d, a=1.0):
    """Total transverse dipole of the pair in a unit field, by successive images."""
    total = 0.0
    x, p = 0.0, a**3  # the isolated sphere's dipole at its centre
    for _ in range(10_000_000):
        total += p
        s = d - x
        p = -((a / s) ** 3) * p
        x = a * a / s
        if abs(p) < 1e-18:
            break
    return 2.0 * total


def bispherical_series(d, a=1.0):
    mu = np.arccosh(d / (2 * a))
    n = np.arange(1, 200_000)
    terms = (
        (-1.0) ** (n + 1)
        * np.exp(3 * (mu - n * mu))
        * ((1 - np.exp(-2 * mu)) / (1 - np.exp(-2 * n * mu))) ** 3
    )
    return 2 * a**3 * float(np.sum(terms))


@pytest.mark.parametrize("gap", [1.0, 0.3, 0.1, 0.03, 0.01, 0.003, 0.001])
def test_image_series_and_bispherical_form_agree(gap):
    assert bispherical_series(2 + gap) == pytest.approx(image_series(2 + gap), rel=1e-12)


@pytest.mark.parametrize("gap", [1.0, 0.3, 0.1, 0.03, 0.01, 0.003, 0.001])
def test_two_sphere_multipole_solve_reproduces_the_series(gap):
    d = 2 + gap
    got = pair_dipoles(d, (1.0, 1.0), (CONDUCTOR, CONDUCTOR), 1.0, 120, 1).sum()
    assert got == pytest.approx(image_series(d), rel=1e-10)
    # The point dipole alone: 2 a^3 / (1 + a^3/d^3).
    dipole = pair_dipoles(d, (1.0, 1.0), (CONDUCTOR, CONDUCTOR), 1.0, 1, 1).sum()
    assert dipole == pytest.approx(2 / (1 + 1 / d**3), rel=1e-10)


@pytest.mark.parametrize("gap, order", [(1.0, 8), (0.1, 16), (0.01, 30)])
def test_three_dimensional_operator_reproduces_the_series(gap, order):
    d = 2 + gap
    axis = np.array([1.0, 2.0, -0.5]) / np.linalg.norm([1.0, 2.0, -0.5])
    across = np.cross(axis, [0.0, 0.0, 1.0])
    across /= np.linalg.norm(across)
    s = Scene(
        np.array([[0.0, 0.0, 0.0], d * axis]),
        Population(Sphere(1.0), Material(CONDUCTOR)),
        field=across[None, :],
    )
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sol = solve(s, rtol=1e-13, operator=MultipoleOperator(s, order=order, accuracy=1e-14))
    total = float(across @ sol.moments.sum(axis=0)[:, 0])
    assert total == pytest.approx(image_series(d), rel=1e-7)
