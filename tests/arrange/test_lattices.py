"""Lattice generators against crystallographic facts of sphere packings.

Touching fractions: sc pi/6, bcc pi sqrt(3)/8, fcc and hcp pi/(3 sqrt 2) (Kepler packing;
common practice, no source); bct electrorheological ground state a = sqrt(6) r, c = 2 r,
fraction 2 pi/9 (Tao and Sun 1991, Phys. Rev. Lett. 67, 398). Coordination numbers at
contact: 6, 8, 12, 12 and, for that bct cell, 2 chain neighbours plus 8 body-centre
neighbours = 10 (derived from the cell geometry).
"""

import math

import numpy as np
import pytest
from scipy.spatial import cKDTree

import dipolearray as da
from dipolearray.arrange import LATTICES, chain_array, lattice, touching_fraction

EXPECTED = {
    "sc": (math.pi / 6, 6),
    "bcc": (math.pi * math.sqrt(3) / 8, 8),
    "fcc": (math.pi / (3 * math.sqrt(2)), 12),
    "hcp": (math.pi / (3 * math.sqrt(2)), 12),
    "bct": (2 * math.pi / 9, 10),
}


@pytest.mark.parametrize("kind", LATTICES)
def test_touching_fraction_and_coordination(kind):
    phi, z = EXPECTED[kind]
    assert touching_fraction(kind) == pytest.approx(phi, rel=1e-12)
    arr = lattice(kind, volume_fraction=phi, sample="periodic", cells=4)
    vol = arr.n_bodies * 4 / 3 * math.pi / float(np.prod(arr.box))
    assert vol == pytest.approx(phi, rel=1e-12)
    tree = cKDTree(np.mod(arr.positions, arr.box), boxsize=arr.box)
    counts = [len(n) - 1 for n in tree.query_ball_point(np.mod(arr.positions, arr.box), r=2.0 + 1e-7)]
    assert set(counts) == {z}
    d, _ = tree.query(np.mod(arr.positions, arr.box), k=2)
    assert d[:, 1].min() == pytest.approx(2.0, rel=1e-10)


@pytest.mark.parametrize("sample", ["sphere", "cube", "slab"])
@pytest.mark.parametrize("kind", ["bcc", "hcp"])
def test_finite_cuts_are_valid_scenes(kind, sample):
    arr = lattice(kind, volume_fraction=0.4, sample=sample, size=6.0)
    scene = da.Scene(arr.positions, da.Population(da.Sphere(1.0), da.Material(5.0)))
    assert scene.n_bodies == arr.n_bodies > 10
    pos = arr.positions
    if sample == "sphere":
        assert np.linalg.norm(pos, axis=1).max() <= 6.0 + 1e-9
        assert arr.volume_fraction == pytest.approx(0.4, rel=1e-12)
    elif sample == "cube":
        assert np.abs(pos).max() <= 3.0 + 1e-9
    else:
        assert np.abs(pos[:, 2]).max() <= 3.0 + 1e-9 and np.ptp(pos[:, 0]) > 3 * np.ptp(pos[:, 2])


def test_lattice_constant_and_errors():
    arr = lattice("sc", lattice_constant=2.5, sample="cube", size=5.0)
    assert arr.n_bodies == 27
    with pytest.raises(da.InputError, match="volume_fraction"):
        lattice("bcc", volume_fraction=0.7, size=5.0)
    with pytest.raises(da.InputError, match="lattice_constant"):
        lattice("fcc", size=5.0)
    with pytest.raises(da.InputError, match="lattice_constant"):
        lattice("fcc", lattice_constant=2.0, size=5.0)  # nearest distance sqrt(2) < 2
    with pytest.raises(da.InputError, match="c_over_a"):
        lattice("fcc", lattice_constant=3.0, c_over_a=1.2, size=5.0)
    with pytest.raises(da.InputError, match="kind"):
        lattice("diamond", lattice_constant=3.0, size=5.0)
    with pytest.raises(da.InputError, match="sample"):
        lattice("sc", lattice_constant=3.0, sample="ball", size=5.0)


def test_chain_array_geometry():
    arr = chain_array(3, 2, 5, radius=1.0, gap=0.1, chain_spacing=4.0, axis=[1.0, 0, 0])
    assert arr.n_bodies == 30
    tree = cKDTree(arr.positions)
    d, _ = tree.query(arr.positions, k=2)
    np.testing.assert_allclose(d[:, 1], 2.1, rtol=1e-12)
    # Chains run along x: five distinct x positions, six chains across.
    assert len(np.unique(arr.positions[:, 0].round(9))) == 5
    assert len({tuple(p) for p in arr.positions[:, 1:].round(9)}) == 6
    with pytest.raises(da.InputError, match="chain_spacing"):
        chain_array(2, 2, 3, chain_spacing=1.0)
