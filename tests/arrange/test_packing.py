"""Random packings: exact non-overlap, exact fractions, reproducibility, orientation statistics."""

import math

import numpy as np
import pytest
from scipy.spatial import cKDTree
from scipy.spatial.transform import Rotation

import dipolearray as da
from dipolearray.arrange import (
    dense_packing,
    equilibrate,
    lognormal_radii,
    order_parameter,
    orientations,
    random_sequential_addition,
)
from dipolearray.arrange._kernels import Bodies, contact_scales
from dipolearray.scene._overlap import _contact_function_max, find_overlaps


def _min_periodic_gap(arr):
    box = arr.box
    tree = cKDTree(np.mod(arr.positions, box), boxsize=box)
    pairs = tree.query_pairs(3 * arr.radii.max(), output_type="ndarray")
    d = arr.positions[pairs[:, 1]] - arr.positions[pairs[:, 0]]
    d -= box * np.round(d / box)
    return (np.linalg.norm(d, axis=1) - arr.radii[pairs[:, 0]] - arr.radii[pairs[:, 1]]).min()


def _scene(arr):
    semi = arr.body_semi_axes
    return find_overlaps(arr.positions, semi, np.asarray(arr.body_rotations), max_pairs=5)


def test_contact_kernel_matches_numpy_twin():
    rng = np.random.default_rng(5)
    n = 400
    semi = rng.uniform(0.3, 2.0, (n, 3))
    rot = Rotation.random(n, random_state=rng).as_matrix()
    i = np.arange(0, n, 2)
    j = np.arange(1, n, 2)
    d = rng.normal(size=(len(i), 3)) * 2.0
    mu = contact_scales(Bodies(semi, rot), i, j, d)
    ref = np.sqrt(_contact_function_max(d, semi[i], rot[i], semi[j], rot[j]))
    np.testing.assert_allclose(mu, ref, rtol=1e-9)
    # Spheres: centre distance over the radius sum, exactly.
    r = rng.uniform(0.5, 1.5, n)
    mu = contact_scales(Bodies(np.repeat(r[:, None], 3, 1)), i, j, d)
    np.testing.assert_allclose(mu, np.linalg.norm(d, axis=1) / (r[i] + r[j]), rtol=1e-14)


@pytest.mark.parametrize("region", ["sphere", "cube", "periodic"])
def test_addition_regions(region):
    arr = random_sequential_addition(800, 0.3, region=region, rng=11)
    assert arr.region == region and arr.volume_fraction == pytest.approx(0.3, rel=1e-12)
    if region == "periodic":
        assert np.all((arr.positions >= 0) & (arr.positions < arr.box))
        assert _min_periodic_gap(arr) >= 0
    else:
        assert _scene(arr) == []
        if region == "sphere":
            assert np.linalg.norm(arr.positions, axis=1).max() <= arr.sample_radius - 1 + 1e-12
        else:
            assert np.abs(arr.positions).max() <= arr.edges[0] / 2 - 1 + 1e-12
    again = random_sequential_addition(800, 0.3, region=region, rng=11)
    np.testing.assert_array_equal(arr.positions, again.positions)


def test_polydisperse_addition_keeps_order_and_sizes():
    r = lognormal_radii(600, median=1.0, sigma=0.3, rng=2)
    arr = random_sequential_addition(600, 0.25, radii=r, region="cube", rng=3)
    np.testing.assert_array_equal(arr.radii, r)
    assert _scene(arr) == []
    assert arr.volume_fraction == pytest.approx(0.25, rel=1e-12)


def test_spheroid_addition_is_exact_not_bounding_sphere():
    """Prolate 3:1 spheroids at 0.25: bounding spheres would fill 9 x 0.25 > 1, so an
    overlap-free result proves the exact (Perram-Wertheim) test is in use."""
    n = 500
    rot = orientations(n, "isotropic", rng=1)
    arr = random_sequential_addition(n, 0.25, semi_axes=(1.0, 1.0, 3.0), rotations=rot, region="cube", rng=4)
    assert arr.volume_fraction == pytest.approx(0.25, rel=1e-12)
    assert _scene(arr) == []
    np.testing.assert_array_equal(arr.rotations, rot)
    scene = da.Scene(
        arr.positions,
        da.Population(da.Spheroid(polar=3.0, equatorial=1.0), da.Material(6.0)),
        rotations=arr.rotations,
    )
    assert scene.n_bodies == n


@pytest.mark.parametrize("S", [-0.3, 0.0, 0.5, 0.9])
def test_nematic_order_parameter(S):
    R = orientations(20000, "nematic", axis=[1.0, 1.0, 0.0], order_parameter=S, rng=8)
    np.testing.assert_allclose(
        np.einsum("nji,njk->nik", R, R), np.broadcast_to(np.eye(3), R.shape), atol=1e-12
    )
    assert np.allclose(np.linalg.det(R), 1.0)
    assert order_parameter(R, [1.0, 1.0, 0.0]) == pytest.approx(S, abs=0.015)


def test_orientation_errors():
    with pytest.raises(da.InputError, match="order_parameter"):
        orientations(5, "nematic")
    with pytest.raises(da.InputError, match="order_parameter"):
        orientations(5, "nematic", order_parameter=1.2)
    with pytest.raises(da.InputError, match="kind"):
        orientations(5, "smectic")
    assert order_parameter(orientations(10, "aligned", axis=[0, 1, 0]), [0, 1, 0]) == pytest.approx(1.0)


def test_dense_packing_055_has_no_overlap():
    arr = dense_packing(2000, 0.55, rng=7)
    assert arr.volume_fraction == pytest.approx(0.55, rel=1e-12)
    assert _min_periodic_gap(arr) > 0
    sphere = dense_packing(1500, 0.55, region="sphere", rng=8)
    assert _scene(sphere) == []
    assert np.linalg.norm(sphere.positions, axis=1).max() <= sphere.sample_radius - 1 + 1e-9


def test_dense_polydisperse_and_spheroids():
    r = lognormal_radii(1000, sigma=0.2, rng=1)
    arr = dense_packing(1000, 0.55, radii=r, region="cube", rng=2)
    assert _scene(arr) == []
    rot = orientations(800, "nematic", order_parameter=0.7, rng=3)
    sph = dense_packing(800, 0.45, semi_axes=(1, 1, 2), rotations=rot, region="cube", rng=4)
    assert _scene(sph) == []
    assert order_parameter(sph.rotations) == pytest.approx(order_parameter(rot))


def test_equilibrate_moves_bodies_and_keeps_them_disjoint():
    arr = random_sequential_addition(500, 0.3, region="cube", rng=0)
    eq = equilibrate(arr, 40, rng=1)
    assert not np.allclose(eq.positions, arr.positions)
    assert _scene(eq) == []
    assert np.abs(eq.positions).max() <= eq.edges[0] / 2 - 1 + 1e-12
    assert "40 Monte Carlo sweeps" in eq.description


def test_packing_errors():
    with pytest.raises(da.InputError, match="volume_fraction"):
        random_sequential_addition(100, 0.55)
    with pytest.raises(da.InputError, match="volume_fraction") as info:
        dense_packing(300, 0.70, max_steps=3000, rng=0)
    assert "jam" in str(info.value)
    with pytest.raises(da.InputError, match="n_bodies"):
        random_sequential_addition(3, 0.3, region="periodic")
    with pytest.raises(da.InputError, match="semi_axes"):
        random_sequential_addition(10, 0.1, semi_axes=np.ones((3, 3)))
    with pytest.raises(da.InputError, match="rotations"):
        random_sequential_addition(10, 0.1, rotations=np.ones((3, 3)))
    with pytest.raises(da.InputError, match="sigma"):
        lognormal_radii(10, sigma=3)
    with pytest.raises(da.InputError, match="region"):
        dense_packing(100, 0.3, region="slab")
    overlapping = random_sequential_addition(50, 0.1, region="cube", rng=0)
    pos = overlapping.positions.copy()
    pos[1] = pos[0]
    with pytest.raises(da.InputError, match="overlaps"):
        equilibrate(overlapping.replace(positions=pos), 5)


def test_addition_volume_matches_bodies():
    semi = np.array([0.5, 0.5, 1.5])
    arr = random_sequential_addition(200, 0.1, semi_axes=semi, rotations=orientations(200, rng=0), rng=1)
    v = 200 * 4 / 3 * math.pi * np.prod(semi)
    assert v / (4 / 3 * math.pi * arr.sample_radius**3) == pytest.approx(0.1, rel=1e-12)
