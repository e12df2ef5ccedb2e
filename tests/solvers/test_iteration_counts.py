"""Iteration counts stay flat as N grows at fixed volume fraction and contrast (body-wise preconditioning)."""

import pytest

import dipolearray as da
from dipolearray.arrange import dense_packing


@pytest.mark.parametrize("phi, contrast", [(0.2, 10.0), (0.5, 100.0)])
def test_cocg_iterations_do_not_grow_with_n(phi, contrast):
    # COCG runs on the alpha^1/2-symmetrised system, i.e. preconditioned by each body's own
    # response; the spectrum of alpha^1/2 T alpha^1/2 depends on the local structure, not on N.
    counts = []
    for n in (300, 1200, 3000):
        arr = dense_packing(n, phi, region="sphere", rng=1)
        sc = da.Scene.from_arrangement(
            arr, da.Population(da.Sphere(1.0), da.Material(contrast)), host=da.Material(1.0)
        )
        sol = da.solve(sc, "cocg", rtol=1e-6)
        assert sol.converged
        counts.append(sol.iterations)
    assert max(counts) - min(counts) <= 2, counts
