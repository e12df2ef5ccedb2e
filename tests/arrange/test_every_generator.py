"""Every generator's output passes the scene's own overlap check (open samples) or the exact
minimum-image check (periodic boxes), and the two overlap tests agree with each other."""

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import dipolearray as da
from dipolearray import arrange as A
from dipolearray.scene._overlap import find_overlaps

ROT = A.orientations(300, "nematic", order_parameter=0.4, rng=0)
GENERATORS = {
    "sc sphere": lambda: A.lattice("sc", volume_fraction=0.5, sample="sphere", size=6.0),
    "hcp slab": lambda: A.lattice("hcp", volume_fraction=0.6, sample="slab", size=4.0),
    "bct cube": lambda: A.lattice("bct", volume_fraction=2 * np.pi / 9, sample="cube", size=8.0),
    "chain array": lambda: A.chain_array(3, 3, 8, chain_spacing=2.0),
    "addition lognormal": lambda: A.random_sequential_addition(
        500, 0.25, radii=A.lognormal_radii(500, sigma=0.4, rng=1), rng=2
    ),
    "addition oblate": lambda: A.random_sequential_addition(
        300, 0.2, semi_axes=(1.5, 1.5, 0.5), rotations=ROT, region="cube", rng=3
    ),
    "dense sphere": lambda: A.dense_packing(600, 0.58, region="sphere", rng=4),
    "dense ellipsoids": lambda: A.dense_packing(
        300, 0.4, semi_axes=(0.8, 1.0, 1.6), rotations=ROT, region="cube", rng=5
    ),
    "fractal clusters": lambda: A.clustered(400, 0.05, cluster_size=25, fraction_clustered=0.6, rng=6),
    "compact clusters": lambda: A.clustered(
        400, 0.15, cluster_size=40, fraction_clustered=0.8, kind="compact", region="cube", rng=7
    ),
    "chains": lambda: A.field_chains(
        400, 0.12, mean_length=8, distribution="poisson", misalignment=10, rng=8
    ),
    "sheets": lambda: A.field_chains(400, 0.12, mean_length=6, layout="sheets", chains_per_group=3, rng=9),
    "columns": lambda: A.field_chains(
        400, 0.12, mean_length=6, layout="columns", chains_per_group=6, region="cube", rng=10
    ),
}
PERIODIC = {
    "addition": lambda: A.random_sequential_addition(500, 0.35, region="periodic", rng=11),
    "dense": lambda: A.dense_packing(500, 0.6, rng=12),
    "prolate dense": lambda: A.dense_packing(300, 0.45, semi_axes=(1, 1, 2), rotations=ROT, rng=13),
    "clusters": lambda: A.clustered(
        500, 0.1, cluster_size=20, fraction_clustered=0.5, region="periodic", rng=14
    ),
    "columns": lambda: A.field_chains(
        500, 0.1, mean_length=5, layout="columns", chains_per_group=4, region="periodic", rng=15
    ),
    "fcc": lambda: A.lattice("fcc", volume_fraction=0.74, sample="periodic", cells=3),
}


@pytest.mark.parametrize("name", list(GENERATORS))
def test_open_output_is_a_valid_scene(name):
    arr = GENERATORS[name]()
    shape = da.Sphere(1.0) if arr.semi_axes is None else da.Ellipsoid(*arr.semi_axes[0])
    scene = da.Scene.from_arrangement(arr, da.Population(shape, da.Material(9.0)))
    assert scene.n_bodies == arr.n_bodies
    assert A.overlapping_pairs(arr) == []


@pytest.mark.parametrize("name", list(PERIODIC))
def test_periodic_output_has_no_overlap_by_minimum_image(name):
    arr = PERIODIC[name]()
    assert arr.region == "periodic" and A.overlapping_pairs(arr) == []
    # Shifting everything by half a box (wrapping) changes nothing.
    moved = arr.replace(positions=np.mod(arr.positions + arr.box / 2, arr.box))
    assert A.overlapping_pairs(moved) == []


def test_overlap_tests_agree_on_random_ellipsoids():
    rng = np.random.default_rng(3)
    n = 400
    semi = rng.uniform(0.4, 1.6, (n, 3))
    rot = Rotation.random(n, random_state=rng).as_matrix()
    pos = rng.uniform(-9, 9, (n, 3))
    arr = A.Arrangement(pos, semi.max(axis=1), None, "random", semi_axes=semi, rotations=rot)
    ours = A.overlapping_pairs(arr, max_pairs=None)
    scene = find_overlaps(pos, semi, rot, max_pairs=None)
    assert len(ours) > 20 and ours == scene
