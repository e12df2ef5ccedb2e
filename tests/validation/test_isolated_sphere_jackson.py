"""Isolated dielectric sphere in a uniform field.

Source: Jackson, J. D. (1999). Classical Electrodynamics, 3rd ed., sec. 4.4: interior
field 3 eps_h/(eps_i + 2 eps_h) E0, dipole moment a^3 (eps_i - eps_h)/(eps_i + 2 eps_h) E0
(reduced units), exterior potential that of that dipole.
"""

import numpy as np
import pytest

import dipolearray as da


@pytest.mark.parametrize("eps_i, eps_h", [(10.0, 2.0), (1.0, 4.0), (7.5 - 2.5j, 2.2), (50.0, 3.0 - 0.3j)])
@pytest.mark.parametrize("method", ["direct", "cocg", "gmres", "fixed_point"])
def test_isolated_sphere(eps_i, eps_h, method):
    a = 1.3
    s = da.Scene([[0.5, -1, 2]], da.Population(da.Sphere(a), da.Material(eps_i)), host=da.Material(eps_h))
    sol = da.solve(s, method)
    beta = (eps_i - eps_h) / (eps_i + 2 * eps_h)
    np.testing.assert_allclose(sol.moments[0], a**3 * beta * np.eye(3), rtol=1e-14)
    np.testing.assert_allclose(
        da.interior_field(sol)[0], 3 * eps_h / (eps_i + 2 * eps_h) * np.eye(3), rtol=1e-14
    )
    # Exterior field on the axis at distance r: E0 (1 + 2 a^3 beta / r^3).
    r = 3.0
    E = da.field_at(sol, [[0.5, -1, 2 + r]])[0]
    assert E[2, 2] == pytest.approx(1 + 2 * a**3 * beta / r**3, rel=1e-14)
