"""Spherical sample cut from a simple cubic lattice.

Source: Lorentz local field / Clausius-Mossotti (Jackson 1999, sec. 4.5): the lattice
sum over a cubic lattice vanishes at a site, so a spherical sample of point dipoles has
(eps - eps_h)/(eps + 2 eps_h) = 4 pi n alpha / 3. A finite cut has a rough surface whose
share of bodies falls as 1/R, so the deviation is expected to fall roughly as 1/R; we
require < 0.8 % of (eps_CM - eps_h) at about 1400 bodies, < 0.3 % at about 4200, a
decrease with size, and a linear-in-1/R extrapolation within 0.1 %. Cubic symmetry
makes the tensor isotropic exactly.
"""

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import cubic_lattice_sphere
from dipolearray.mixing import clausius_mossotti, maxwell_garnett

pytestmark = pytest.mark.slow


@pytest.mark.parametrize("eps", [10.0, 10.0 - 4.0j])
def test_cubic_sample_approaches_clausius_mossotti(eps):
    d = 2.5
    errs, inv_r = [], []
    for m in (5, 7, 10):
        lay = cubic_lattice_sphere(d, m * d)
        s = da.Scene(
            lay.positions, da.Population(da.Sphere(1.0), da.Material(eps)), sample_radius=lay.sample_radius
        )
        sol = da.solve(s, "cocg", rtol=1e-10)
        assert sol.converged
        eff = da.effective_permittivity(sol)
        iso = eff.isotropic
        np.testing.assert_allclose(eff.tensor, iso * np.eye(3), atol=1e-12)
        cm = clausius_mossotti(1.0, s.polarizability[0, 0, 0], 1 / d**3)
        errs.append(abs(iso - cm) / abs(cm - 1.0))
        inv_r.append(1.0 / lay.sample_radius)
    assert errs[0] > errs[1] > errs[2]
    assert errs[1] < 8e-3 and errs[2] < 3e-3
    slope, intercept = np.polyfit(inv_r, errs, 1)
    assert abs(intercept) < 1e-3 and slope > 0
    # For spheres alpha = a^3 beta, so Clausius-Mossotti is Maxwell Garnett at phi = 4 pi a^3/(3 d^3).
    assert cm == pytest.approx(maxwell_garnett(1.0, eps, 4 * np.pi / (3 * d**3)), rel=1e-14)
