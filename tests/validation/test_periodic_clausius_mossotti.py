"""Cubic lattices of point dipoles in a periodic box reproduce Clausius-Mossotti.

Source: the Lorentz local field. For a cubic Bravais lattice (and for bcc and fcc, whose
sites are all cubic-symmetric) the field of all other dipoles at a site, with the
conducting outer boundary that makes the mean field E0, is (4 pi/3) P, so
p = alpha (E0 + 4 pi n p / 3) and eps_eff = eps_h (1 + 2 phi beta)/(1 - phi beta) with
beta = (eps - eps_h)/(eps + 2 eps_h) (Jackson, Classical Electrodynamics, 3rd ed.,
sec. 4.5; Lorentz 1880, Lorenz 1880). The point-dipole model must give it to rounding.
"""

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import lattice

pytestmark = pytest.mark.slow


def _cm(eps, eps_h, phi):
    b = (eps - eps_h) / (eps + 2 * eps_h)
    return eps_h * (1 + 2 * phi * b) / (1 - phi * b)


@pytest.mark.parametrize("kind", ["sc", "bcc", "fcc"])
@pytest.mark.parametrize("eps", [12.0, 40.0 - 6.0j])
def test_periodic_lattice_is_clausius_mossotti(kind, eps):
    phi, eps_h = 0.35, 2.5 - 0.02j
    arr = lattice(kind, volume_fraction=phi, sample="periodic", cells=2)
    scene = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(eps)), host=da.Material(eps_h)
    )
    sol = da.solve(scene, "direct")
    eff = da.effective_permittivity(sol)
    expected = _cm(eps, eps_h, phi)
    np.testing.assert_allclose(eff.tensor, expected * np.eye(3), rtol=1e-8, atol=1e-8 * abs(expected))
    assert eff.boundary == "periodic" and eff.sample_radius is None


def test_iterative_path_on_a_larger_supercell():
    phi, eps = 0.5, 25.0
    arr = lattice("fcc", volume_fraction=phi, sample="periodic", cells=4)  # 256 bodies
    scene = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(eps)), host=da.Material(1.0)
    )
    sol = da.solve(scene, rtol=1e-11)
    assert sol.method == "cocg" and sol.converged
    eff = da.effective_permittivity(sol)
    np.testing.assert_allclose(np.diag(eff.tensor), _cm(eps, 1.0, phi), rtol=1e-8)
