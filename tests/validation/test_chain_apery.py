"""Long straight chain along (and across) the field.

Source: the lattice sum of a linear chain, sum_{n != 0} 1/|n|^3 = 2 zeta(3) (Apery's
constant), gives the infinite-chain moments p_par = alpha/(1 - 4 zeta(3) alpha/d^3) and
p_perp = alpha/(1 + 2 zeta(3) alpha/d^3). A chain of 2M+1 bodies misses the tail
sum_{n > M} n^-3 on each side; to first order the middle body's deficit is
p_inf * c alpha S_M / (1 - c zeta(3) alpha / d^3) with S_M = sum_{n>M} n^-3 / d^3, c = 4 or 2.
"""

import pytest
from scipy.special import zeta

import dipolearray as da
from dipolearray.arrange import chain

pytestmark = pytest.mark.slow


@pytest.mark.parametrize("M", [25, 100])
def test_middle_moment_tends_to_infinite_chain(M):
    d, eps = 2.2, 20.0
    lay = chain(2 * M + 1, d)
    s = da.Scene(
        lay.positions, da.Population(da.Sphere(1.0), da.Material(eps)), field=[[0, 0, 1.0], [1.0, 0, 0]]
    )
    sol = da.solve(s, "cocg", rtol=1e-13)
    a = s.polarizability[0, 0, 0]
    z3 = zeta(3)
    tail = zeta(3, M + 1)  # Hurwitz zeta: sum_{n > M} n^-3
    for c, comp, col, sign in ((4, 2, 0, 1), (2, 0, 1, -1)):
        k = sign * c * a / d**3
        p_inf = a / (1 - k * z3)
        p_mid = sol.moments[M, comp, col]
        deficit = p_inf * k * tail / (1 - k * z3)
        assert p_inf - p_mid == pytest.approx(deficit, rel=0.05)
        assert (p_mid + deficit) == pytest.approx(p_inf, rel=2e-6 if M == 100 else 1e-4)
