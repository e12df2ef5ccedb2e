"""Equilibrated hard-sphere fluids: contact value of g(r) against Carnahan-Starling.

Source: Carnahan, N. F. and Starling, K. E. (1969). Equation of state for nonattracting
rigid spheres. J. Chem. Phys. 51, 635: Z = (1 + phi + phi^2 - phi^3)/(1 - phi)^3, and
with Z = 1 + 4 phi g(sigma+) the contact value g(sigma+) = (1 - phi/2)/(1 - phi)^3.
The generator relaxes a random start to the target fraction and equilibrates it with
hard-sphere Monte Carlo; g(r) is averaged over later sweeps and its contact value
extrapolated from the first bins.
"""

import numpy as np
import pytest

from dipolearray.arrange import contact_value, dense_packing, equilibrate, radial_distribution

pytestmark = pytest.mark.slow


@pytest.mark.parametrize("phi", [0.30, 0.45])
def test_contact_value_matches_carnahan_starling(phi):
    rng = np.random.default_rng(21)
    arr = dense_packing(1000, phi, equilibration_sweeps=600, rng=rng)
    g_sum = 0.0
    n_samples = 60
    for _ in range(n_samples):
        arr = equilibrate(arr, 10, rng=rng)
        r, g = radial_distribution(arr, 6.0, n_bins=120)
        g_sum = g_sum + g
    g = g_sum / n_samples
    assert g[r < 2.0].max() == 0.0  # no pair inside contact
    expected = (1 - phi / 2) / (1 - phi) ** 3
    assert contact_value(r, g, 2.0, 0.1 * 2.0) == pytest.approx(expected, rel=0.03)
    # Three diameters out the fluid is nearly uncorrelated.
    assert np.mean(g[r > 5.0]) == pytest.approx(1.0, abs=0.05)
