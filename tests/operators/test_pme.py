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


def test_automatic_choice_picks_pme_only_above_the_crossover_and_meets_the_accuracy(monkeypatch):
    import dipolearray.operators._pme as pme

    sc = _scene("clustered")
    # Below the measured crossover: plain Ewald, as before.
    assert da.solve(sc, "cocg", rtol=1e-8).backend == "ewald"
    assert make_operator(sc, "auto", accuracy=1e-7).backend == "ewald"
    monkeypatch.setattr(pme, "PME_CROSSOVER", ((1e-5, 100), (1e-8, 300), (1e-10, 1000), (0.0, 10**12)))
    assert pme.pme_crossover(1e-4) == 100 and pme.pme_crossover(1e-9) == 1000
    assert pme.pme_crossover(1e-11) == 10**12 and pme.pme_crossover(0.05) == 10**12
    ref = make_operator(sc, "ewald", accuracy=1e-13)
    x = np.random.default_rng(3).standard_normal((sc.n_bodies, 3, 1))
    for acc in (1e-4, 1e-7):
        op = make_operator(sc, "auto", accuracy=acc)
        assert op.backend == "pme" and f"{acc:g}" in op.reason
        err = np.linalg.norm(op.apply(x) - ref.apply(x)) / np.linalg.norm(ref.apply(x))
        assert err <= acc
    # 1e-9 needs 1000 bodies here; 1e-11 is beyond the mesh: Ewald.
    assert make_operator(sc, "auto", accuracy=1e-9).backend == "ewald"
    assert make_operator(sc, "auto", accuracy=1e-11).backend == "ewald"
    # Through the solver: a tenth of the tolerance, and the tensor of the Ewald solve.
    sol = da.solve(sc, "cocg", rtol=1e-6)
    assert sol.backend == "pme" and "crossover" in sol.extra["backend_reason"]
    ewald = da.solve(sc, "cocg", rtol=1e-6, backend="ewald")
    np.testing.assert_allclose(
        da.effective_permittivity(sol).tensor, da.effective_permittivity(ewald).tensor, atol=3e-6
    )
