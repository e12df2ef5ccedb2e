import numpy as np
import pytest

import dipolearray as da
from dipolearray.errors import OverlapError
from dipolearray.scene import find_overlaps
from dipolearray.shapes import rotation_to_axis

POP = da.Population(da.Sphere(1.0), da.Material(10.0))


def test_arrays_are_read_only_and_inputs_untouched():
    pos = np.array([[0.0, 0, 0], [0, 0, 3.0]])
    keep = pos.copy()
    s = da.Scene(pos, POP)
    pos[0, 0] = 99.0
    np.testing.assert_array_equal(s.positions, keep)
    with pytest.raises(ValueError):
        s.positions[0, 0] = 1.0
    s2 = s.replace(host=da.Material(3.0))
    assert s2.eps_host == 3.0 and s.eps_host == 1.0


@pytest.mark.parametrize(
    "kwargs, key",
    [
        (dict(positions=[[0, 0]]), "positions"),
        (dict(positions=[[0, 0, np.nan]]), "positions"),
        (dict(positions=[[0, 0, np.inf]]), "positions"),
        (dict(positions=np.zeros((0, 3))), "positions"),
        (dict(positions=[["a", 0, 0]]), "positions"),
        (dict(populations=[]), "populations"),
        (dict(populations=["sphere"]), "populations"),
        (dict(population_index=[0, 1]), "population_index"),
        (dict(population_index=[0]), "population_index"),
        (dict(field=[[0, 0, 0]]), "field"),
        (dict(field=[[1, 0]]), "field"),
        (dict(scale=[1.0, -1.0]), "scale"),
        (dict(rotations=np.ones((2, 3, 3))), "rotations"),
        (dict(boundary="periodc"), "boundary"),
        (dict(sample_radius=-2.0), "sample_radius"),
        (dict(host="water"), "host"),
    ],
)
def test_bad_input_names_the_key(kwargs, key):
    args = dict(positions=[[0, 0, 0], [0, 0, 3.0]], populations=POP)
    args.update(kwargs)
    with pytest.raises(da.InputError, match=key) as info:
        da.Scene(**args)
    assert info.value.key == key


def test_suggests_nearest_boundary():
    with pytest.raises(da.InputError, match="did you mean 'open'"):
        da.Scene([[0, 0, 0]], POP, boundary="opn")


def test_unknown_replace_key():
    s = da.Scene([[0, 0, 0]], POP)
    with pytest.raises(da.InputError, match="colour"):
        s.replace(colour="red")


def test_sphere_overlap_exact_and_listed():
    pos = [[0, 0, 0], [0, 0, 1.999], [10, 0, 0], [10, 0, 2.0], [20, 0, 0], [21, 0, 0]]
    with pytest.raises(OverlapError) as info:
        da.Scene(pos, POP)
    assert info.value.pairs == [(0, 1), (4, 5)]  # touching pair (2, 3) is allowed
    assert "(0, 1)" in str(info.value)


def test_polydisperse_overlap_uses_each_radius():
    pos = [[0, 0, 0], [0, 0, 2.4]]
    ok = da.Scene(pos, POP, scale=[1.0, 1.3])
    assert ok.n_bodies == 2
    with pytest.raises(OverlapError):
        da.Scene(pos, POP, scale=[1.0, 1.5])


def _minkowski_overlap(shift, axes, R):
    # Two identical, equally oriented ellipsoids overlap iff the shift lies inside the
    # ellipsoid scaled by two (the Minkowski sum); common practice, no source.
    local = R.T @ shift
    return np.sum((local / (2 * np.asarray(axes))) ** 2) < 1


def test_spheroid_overlap_matches_minkowski_criterion():
    rng = np.random.default_rng(0)
    axes = (0.6, 0.6, 2.0)
    checked = 0
    for _ in range(300):
        R = rotation_to_axis(rng.normal(size=3))
        shift = rng.uniform(-4.5, 4.5, size=3)
        pos = np.array([np.zeros(3), shift])
        found = find_overlaps(pos, np.array([axes, axes]), np.array([R, R]))
        truth = _minkowski_overlap(shift, axes, R)
        margin = abs(np.sum(((R.T @ shift) / (2 * np.asarray(axes))) ** 2) - 1)
        if margin > 1e-6:
            assert bool(found) == truth
            checked += 1
    assert checked > 250


def test_crossed_spheroids_overlap_beyond_bounding_spheres():
    # Two needles crossing at right angles: bounding spheres overlap either way;
    # touching when the centre distance equals the sum of the equatorial semi-axes.
    axes = np.array([[0.5, 0.5, 3.0], [0.5, 0.5, 3.0]])
    rots = np.array([np.eye(3), rotation_to_axis([1, 0, 0])])
    assert find_overlaps(np.array([[0, 0, 0], [0, 1.01, 0]]), axes, rots) == []
    assert find_overlaps(np.array([[0, 0, 0], [0, 0.99, 0]]), axes, rots) == [(0, 1)]


def test_derived_quantities():
    pop2 = da.Population(da.Spheroid(2.0, 1.0), da.Material(5.0 - 1.0j), name="rods")
    s = da.Scene([[0, 0, 0], [10, 0, 0]], (POP, pop2), population_index=[0, 1], scale=[2.0, 1.0])
    np.testing.assert_allclose(s.semi_axes, [[2, 2, 2], [1, 1, 2]])
    assert s.is_complex and s.dtype == np.complex128
    np.testing.assert_allclose(s.volumes, 4 * np.pi / 3 * np.array([8.0, 2.0]))
    assert s.n_fields == 3


def test_scene_from_arrangement():
    from dipolearray.arrange import orientations, random_sequential_addition

    rot = orientations(100, "isotropic", rng=1)
    arr = random_sequential_addition(100, 0.1, semi_axes=(0.6, 0.6, 1.8), rotations=rot, rng=2)
    pop = da.Population(da.Spheroid(polar=0.9, equatorial=0.3), da.Material(7.0))
    s = da.Scene.from_arrangement(arr, pop, host=da.Material(2.0))
    np.testing.assert_allclose(s.scale, 2.0, rtol=1e-14)
    np.testing.assert_array_equal(s.rotations, rot)
    assert s.sample_radius == arr.sample_radius and s.eps_host == 2.0
    with pytest.raises(da.InputError, match="not a multiple"):
        da.Scene.from_arrangement(arr, da.Population(da.Sphere(1.0), da.Material(7.0)))
    two = arr.replace(labels=np.arange(100) % 3)
    with pytest.raises(da.InputError, match="population"):
        da.Scene.from_arrangement(two, [pop, pop])
    box = random_sequential_addition(100, 0.1, region="periodic", rng=3)
    s = da.Scene.from_arrangement(box, da.Population(da.Sphere(1.0), da.Material(7.0)))
    assert s.boundary == "periodic" and np.array_equal(s.box, box.box) and s.sample_radius is None
    s = da.Scene.from_arrangement(box, da.Population(da.Sphere(1.0), da.Material(7.0)), boundary="open")
    assert s.n_bodies == 100 and s.box is None
    with pytest.raises(da.InputError, match="boundary"):
        da.Scene.from_arrangement(arr, pop, boundary="periodic")


def test_periodic_scene_checks_box_and_overlaps_by_minimum_image():
    with pytest.raises(da.InputError, match="box"):
        da.Scene([[0, 0, 0]], POP, boundary="periodic")
    with pytest.raises(da.InputError, match="box"):
        da.Scene([[0, 0, 0]], POP, box=[10, 10, 10])
    with pytest.raises(da.InputError, match="box"):
        da.Scene([[0, 0, 0]], POP, boundary="periodic", box=[3, 10, 10])
    # Across the boundary the bodies are 1.5 apart: an overlap only by minimum image.
    with pytest.raises(OverlapError):
        da.Scene([[0.25, 0, 0], [9.75, 0, 0]], POP, boundary="periodic", box=[10, 10, 10])
    s = da.Scene([[0.25, 0, 0], [9.75, 0, 0]], POP)
    assert s.boundary == "open"
