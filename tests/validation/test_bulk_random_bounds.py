"""Bulk (periodic) random dispersions against rigorous bounds and the dilute limit.

Sources: Hashin, Z. and Shtrikman, S. (1962). J. Appl. Phys. 33, 3125 (isotropic
two-phase bounds); Wiener, O. (1912) (bounds for any two-phase arrangement); Maxwell, J. C.
(1873), A Treatise on Electricity and Magnetism, art. 314 (dilute slope
d(eps/eps_h)/d phi = 3 beta, beta = (eps_i - eps_h)/(eps_i + 2 eps_h)).
"""

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import random_sequential_addition
from dipolearray.mixing import hashin_shtrikman_bounds, wiener_bounds

pytestmark = pytest.mark.slow


def _bulk(n, phi, eps_i, eps_h, seed):
    arr = random_sequential_addition(n, phi, region="periodic", rng=seed)
    scene = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(eps_i)), host=da.Material(eps_h)
    )
    return da.effective_permittivity(da.solve(scene, rtol=1e-10))


@pytest.mark.parametrize(("eps_i", "eps_h"), [(10.0, 1.0), (1.0, 6.0)])
@pytest.mark.parametrize("phi", [0.1, 0.25])
def test_every_realization_lies_within_the_bounds(phi, eps_i, eps_h):
    lo, hi = hashin_shtrikman_bounds(eps_h, eps_i, phi)
    series, parallel = wiener_bounds(eps_h, eps_i, phi)
    for seed in range(3):
        eff = _bulk(150, phi, eps_i, eps_h, seed)
        iso = float(np.real(eff.isotropic))
        assert lo <= iso <= hi
        assert np.all((eff.eigenvalues.real >= series) & (eff.eigenvalues.real <= parallel))


def test_dilute_slope_is_three_beta():
    eps_i, eps_h, phi = 20.0, 2.0, 0.004
    beta = (eps_i - eps_h) / (eps_i + 2 * eps_h)
    slopes = [(float(np.real(_bulk(60, phi, eps_i, eps_h, s).isotropic)) / eps_h - 1) / phi for s in range(6)]
    mean, se = np.mean(slopes), np.std(slopes, ddof=1) / np.sqrt(len(slopes))
    # The O(phi) term of Maxwell Garnett adds 3 beta^2 phi; allow it plus three standard errors.
    assert abs(mean - 3 * beta) <= 3 * se + 3 * beta**2 * phi * 1.5
