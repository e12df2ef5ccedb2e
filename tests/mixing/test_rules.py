"""Mixing rules and bounds: limits with exact answers, orderings every rule must respect."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import dipolearray as da
from dipolearray.mixing import (
    bruggeman,
    dilute,
    dilute_spheres,
    hashin_shtrikman_bounds,
    lichtenecker,
    looyenga,
    maxwell_garnett,
    maxwell_garnett_ellipsoids,
    wiener_bounds,
)

PHI = np.linspace(0.0, 1.0, 21)


def test_ellipsoid_forms_reduce_to_spheres_and_laminates():
    eh, ei = 2.0, 30.0 - 4.0j
    sphere = (1 / 3, 1 / 3, 1 / 3)
    np.testing.assert_allclose(maxwell_garnett_ellipsoids(eh, ei, PHI, sphere), maxwell_garnett(eh, ei, PHI))
    al = maxwell_garnett_ellipsoids(eh, ei, PHI, sphere, orientation="aligned")
    np.testing.assert_allclose(al, np.repeat(maxwell_garnett(eh, ei, PHI)[:, None], 3, 1))
    series, parallel = wiener_bounds(eh, ei, PHI)
    # Aligned needles (N = 0 along the axis) are parallel layers, discs (N = 1) series layers.
    needles = maxwell_garnett_ellipsoids(eh, ei, PHI, (0.5, 0.5, 0.0), orientation="aligned")
    discs = maxwell_garnett_ellipsoids(eh, ei, PHI, (0.0, 0.0, 1.0), orientation="aligned")
    np.testing.assert_allclose(needles[:, 2], parallel, rtol=1e-13)
    np.testing.assert_allclose(discs[:, 2], series, rtol=1e-13)
    # An aspect ratio is accepted in place of the factors (spheroid closed form).
    np.testing.assert_allclose(maxwell_garnett_ellipsoids(eh, ei, 0.2, 1.0), maxwell_garnett(eh, ei, 0.2))


def test_dilute_slopes_match_the_rules():
    eh, ei, h = 2.5, 40.0, 1e-7
    np.testing.assert_allclose(dilute(eh, ei, 0.01), dilute_spheres(eh, ei, 0.01), rtol=1e-14)
    for rule in (maxwell_garnett, bruggeman):
        slope = (rule(eh, ei, h) - eh) / h
        assert slope == pytest.approx((dilute_spheres(eh, ei, 1.0) - eh), rel=1e-5)
    for m in (0.2, 5.0):
        slope = (maxwell_garnett_ellipsoids(eh, ei, h, m) - eh) / h
        assert slope == pytest.approx(dilute(eh, ei, 1.0, m) - eh, rel=1e-5)
        slope = (bruggeman(eh, ei, h, m) - eh) / h
        assert slope == pytest.approx(dilute(eh, ei, 1.0, m) - eh, rel=1e-4)


def test_bruggeman_solves_its_equation_and_percolates_at_one_third():
    eh, ei = 3.0 - 0.1j, 50.0 - 20.0j
    for m in (None, 3.0):
        e = bruggeman(eh, ei, PHI, m)
        from dipolearray.mixing._rules import _depol

        N = _depol(m)
        inc = sum((ei - e) / (e + n * (ei - e)) for n in N) / 3
        res = PHI * inc + (1 - PHI) * 3 * (eh - e) / (eh + 2 * e)
        assert np.abs(res).max() < 1e-10
        assert np.all(e.imag <= 1e-12)  # eps'' >= 0
    # Symmetric in the phases for spheres.
    np.testing.assert_allclose(bruggeman(eh, ei, PHI), bruggeman(ei, eh, 1 - PHI), rtol=1e-12)
    # Nearly conducting spheres in an insulator: finite below 1/3, enormous above (Bruggeman 1935).
    below, above = bruggeman(1.0, 1e9, [0.30, 0.36])
    assert below == pytest.approx(1 / (1 - 3 * 0.30), rel=1e-3) and above > 1e7


def test_empirical_rules():
    eh, ei = 2.0, 18.0
    assert lichtenecker(eh, ei, 0.5) == pytest.approx(np.sqrt(eh * ei))
    assert looyenga(eh, ei, 0.0) == pytest.approx(eh) and looyenga(eh, ei, 1.0) == pytest.approx(ei)
    with pytest.raises(da.InputError, match="volume_fraction"):
        looyenga(eh, ei, 1.2)
    with pytest.raises(da.InputError, match="depolarization"):
        dilute(eh, ei, 0.1, (0.5, 0.5, 0.5))


@settings(max_examples=200, deadline=None)
@given(
    eh=st.floats(1.0, 50.0),
    ratio=st.floats(1.01, 1e3),
    phi=st.floats(0.0, 1.0),
    swap=st.booleans(),
)
def test_bounds_order_every_isotropic_rule(eh, ratio, phi, swap):
    ei = eh * ratio
    if swap:
        eh, ei = ei, eh
    series, parallel = wiener_bounds(eh, ei, phi)
    lo, hi = hashin_shtrikman_bounds(eh, ei, phi)
    tol = 1e-9 * parallel
    assert series - tol <= lo <= hi + tol and hi <= parallel + tol
    for rule in (maxwell_garnett, bruggeman, looyenga, lichtenecker):
        v = rule(eh, ei, phi)
        assert series - tol <= v <= parallel + tol
    # Maxwell Garnett with the low phase as host is the HS lower bound; Bruggeman is inside HS.
    assert lo - tol <= bruggeman(eh, ei, phi) <= hi + tol
    assert maxwell_garnett(min(eh, ei), max(eh, ei), phi if ei > eh else 1 - phi) == pytest.approx(
        lo, rel=1e-9
    )


def test_hand_checked_values():
    """Values worked by hand from each formula (eps_h = 1, eps_i = 4 or 8, phi = 1/2)."""
    assert float(maxwell_garnett(1.0, 4.0, 0.5)) == pytest.approx(2.0, rel=1e-14)  # beta 1/2
    lo, hi = hashin_shtrikman_bounds(1.0, 4.0, 0.5)
    assert (float(lo), float(hi)) == pytest.approx((2.0, 16.0 / 7.0), rel=1e-14)
    assert float(bruggeman(1.0, 4.0, 0.5)) == pytest.approx((2.5 + np.sqrt(38.25)) / 4, rel=1e-14)
    assert float(looyenga(1.0, 8.0, 0.5)) == pytest.approx(3.375, rel=1e-14)
    assert float(lichtenecker(1.0, 4.0, 0.5)) == pytest.approx(2.0, rel=1e-14)
    s, p = wiener_bounds(1.0, 4.0, 0.5)
    assert (float(s), float(p)) == pytest.approx((1.6, 2.5), rel=1e-14)
