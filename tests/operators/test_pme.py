"""Smooth particle-mesh Ewald against plain Ewald; the cubic-lattice Clausius-Mossotti result."""

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import clustered, lattice, random_sequential_addition
from dipolearray.operators import PMEOperator, make_operator


def _scene(kind):
    if kind == "random":
        arr = random_sequential_addition(400, 0.2, region="periodic", rng=1)
    elif kind == "clustered":
        arr = clustered(
            400, 0.1, cluster_size=20, fraction_clustered=0.7, radius=1.0, gap=0.02, region="periodic", rng=2
        )
    else:
        arr = lattice("fcc", radius=1.0, volume_fraction=0.3, sample="periodic", cells=4)
    return da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(10.0)), host=da.Material(1.0)
    )


@pytest.mark.parametrize("kind", ["random", "clustered", "lattice"])
@pytest.mark.parametrize("accuracy", [1e-6, 1e-10])
def test_pme_agrees_with_ewald_to_the_requested_accuracy(kind, accuracy):
    sc = _scene(kind)
    x = np.random.default_rng(0).standard_normal((sc.n_bodies, 3, 2))
    ref = make_operator(sc, "ewald", accuracy=1e-13).apply(x)
    got = make_operator(sc, "pme", accuracy=accuracy).apply(x)
    assert np.linalg.norm(got - ref) <= accuracy * np.linalg.norm(ref)


@pytest.mark.parametrize("kind", ["sc", "bcc"])
def test_pme_reproduces_clausius_mossotti_on_cubic_lattices(kind):
    # Lorentz local field: eps = eps_h (1 + 2 phi beta) / (1 - phi beta) (Jackson 1999, sec. 4.5).
    phi, eps_i, eps_h = 0.2, 12.0, 2.0
    arr = lattice(kind, radius=1.0, volume_fraction=phi, sample="periodic", cells=3)
    sc = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(eps_i)), host=da.Material(eps_h)
    )
    sol = da.solve(sc, "cocg", rtol=1e-10, operator=PMEOperator(sc, accuracy=1e-9))
    beta = (eps_i - eps_h) / (eps_i + 2 * eps_h)
    cm = eps_h * (1 + 2 * phi * beta) / (1 - phi * beta)
    np.testing.assert_allclose(da.effective_permittivity(sol).tensor, cm * np.eye(3), rtol=1e-8, atol=1e-8)


def test_pme_bad_input():
    sc = _scene("random")
    with pytest.raises(da.InputError, match="order"):
        PMEOperator(sc, order=7)
    with pytest.raises(da.InputError, match="accuracy"):
        PMEOperator(sc, accuracy=1e-14)
    open_scene = da.Scene(np.zeros((1, 3)), da.Population(da.Sphere(1.0), da.Material(3.0)))
    with pytest.raises(da.InputError, match="backend"):
        PMEOperator(open_scene)
