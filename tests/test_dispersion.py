"""Permittivity models against their closed forms and limits."""

import math

import numpy as np
import pytest

from dipolearray import InputError
from dipolearray.materials import EPS0, cole_cole, constant, debye, drude, havriliak_negami

F = np.logspace(0, 10, 41)


def test_debye_closed_form_and_loss_peak():
    # Debye (1929): eps'' = delta w tau / (1 + w^2 tau^2), largest at w tau = 1 with delta / 2.
    m = debye(3.0, 12.0, 2e-6)
    w = 2 * math.pi * F
    eps = m(F)
    np.testing.assert_allclose(eps.real, 3.0 + 12.0 / (1 + (w * 2e-6) ** 2), rtol=1e-13)
    np.testing.assert_allclose(-eps.imag, 12.0 * w * 2e-6 / (1 + (w * 2e-6) ** 2), rtol=1e-13)
    f_peak = 1 / (2 * math.pi * 2e-6)
    assert -m(f_peak).imag == pytest.approx(6.0)
    assert m.eps_static == 15.0


def test_cole_cole_and_havriliak_negami_reduce_to_debye():
    d = debye(2.0, 5.0, 1e-3)(F)
    np.testing.assert_allclose(cole_cole(2.0, 5.0, 1e-3, 0.0)(F), d, rtol=1e-13)
    np.testing.assert_allclose(havriliak_negami(2.0, 5.0, 1e-3, 1.0, 1.0)(F), d, rtol=1e-13)
    # Broadened forms keep eps'' >= 0 and a lower, wider peak (Cole & Cole 1941).
    cc = cole_cole(2.0, 5.0, 1e-3, 0.4)(F)
    hn = havriliak_negami(2.0, 5.0, 1e-3, 0.6, 0.5)(F)
    assert np.all(-cc.imag >= 0) and np.all(-hn.imag >= 0)
    assert -cc.imag.min() >= 0 and (-cc.imag).max() < (-d.imag).max()


def test_drude_dc_conductivity_and_plasma_edge():
    # Drude: sigma_dc = eps0 w_p^2 / gamma (Ashcroft & Mermin 1976, ch. 1); eps' crosses eps_inf - 1
    # ... and eps' = 0 near w = w_p for weak damping.
    wp, g = 2e15, 1e13
    m = drude(1.0, wp, g)
    f_low = 1e6
    sigma = EPS0 * (2 * math.pi * wp) ** 2 / (2 * math.pi * g)
    assert -m(f_low).imag * EPS0 * 2 * math.pi * f_low == pytest.approx(sigma, rel=1e-6)
    assert abs(m(wp).real) < 1e-3 * abs(m(f_low).real)


def test_conductivity_term_and_bad_values():
    m = constant(3.0, 0.01, sigma_dc=1e-8)
    f = 50.0
    assert m(f) == pytest.approx(3.0 - 0.01j - 1j * 1e-8 / (EPS0 * 2 * math.pi * f))
    with pytest.raises(InputError, match="tau_s"):
        debye(2.0, 1.0, -1.0)
    with pytest.raises(InputError, match="alpha"):
        cole_cole(2.0, 1.0, 1.0, 1.0)
    with pytest.raises(InputError, match="beta"):
        havriliak_negami(2.0, 1.0, 1.0, 0.5, 0.0)
    with pytest.raises(InputError, match="sigma_dc"):
        debye(2.0, 1.0, 1.0, sigma_dc=-1)
    with pytest.raises(InputError, match="frequency"):
        debye(2.0, 1.0, 1.0)(0.0)
