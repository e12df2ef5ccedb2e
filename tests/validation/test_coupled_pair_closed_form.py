"""Two coupled point dipoles, closed form.

Source: the pair equations p = alpha (E0 + T p) reduce by symmetry to
p_par = alpha/(1 - 2 alpha/d^3) along the line and p_perp = alpha/(1 + alpha/d^3)
across it (e.g. Jackson 1999, sec. 4.1 dipole field, solved by hand; common practice).
"""

import numpy as np
import pytest

import dipolearray as da


@pytest.mark.parametrize("eps", [5.0, 40.0, 6.0 - 4.0j])
@pytest.mark.parametrize("d", [2.0, 2.5, 6.0])
def test_pair(eps, d):
    s = da.Scene(
        [[0, 0, 0], [0, 0, d]], da.Population(da.Sphere(1.0), da.Material(eps)), host=da.Material(1.5)
    )
    a = s.polarizability[0, 0, 0]
    for method in ("direct", "cocg", "gmres"):
        sol = da.solve(s, method, rtol=1e-13)
        np.testing.assert_allclose(sol.moments[:, 2, 2], a / (1 - 2 * a / d**3), rtol=1e-12)
        np.testing.assert_allclose(sol.moments[:, 0, 0], a / (1 + a / d**3), rtol=1e-12)
        np.testing.assert_allclose(sol.moments[:, 1, 1], a / (1 + a / d**3), rtol=1e-12)
        off = sol.moments.copy()
        off[:, [0, 1, 2], [0, 1, 2]] = 0
        assert np.abs(off).max() < 1e-13
