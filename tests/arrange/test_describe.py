"""Descriptors on arrangements whose answers are known exactly (lattices, chains, ideal gas)."""

import math

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import (
    Arrangement,
    chain,
    chain_array,
    chains,
    clusters,
    coordination,
    lattice,
    nearest_gaps,
    radial_distribution,
)


def test_fcc_first_shell_holds_twelve():
    arr = lattice("fcc", volume_fraction=0.5, sample="periodic", cells=5)
    a_nn = (4 * 4 / 3 * math.pi / 0.5) ** (1 / 3) / math.sqrt(2)  # a / sqrt(2) with a^3 = 4 v / phi
    r, g = radial_distribution(arr, 1.2 * a_nn, n_bins=240)
    rho = arr.n_bodies / np.prod(arr.box)
    edges = np.linspace(0, 1.2 * a_nn, 241)
    shell = 4 / 3 * math.pi * (edges[1:] ** 3 - edges[:-1] ** 3)
    assert np.sum(g * rho * shell) == pytest.approx(12.0, rel=1e-12)
    assert r[np.argmax(g)] == pytest.approx(a_nn, abs=1.2 * a_nn / 240)
    assert set(coordination(lattice("fcc", volume_fraction=0.7404804896930611, sample="periodic"))) == {12}


def test_ideal_gas_is_uncorrelated():
    rng = np.random.default_rng(0)
    box = np.full(3, 40.0)
    pts = rng.uniform(0, 40.0, (20000, 3))
    gas = Arrangement(pts, np.full(len(pts), 1e-3), None, "points", box=box)
    r, g = radial_distribution(gas, 6.0, n_bins=12)
    np.testing.assert_allclose(g[2:], 1.0, atol=0.03)
    # Open cube: the guard zone keeps shells whole, so the answer is the same.
    cube = Arrangement(pts - 20.0, gas.radii, None, "points", region="cube", edges=box)
    r2, g2 = radial_distribution(cube, 6.0, n_bins=12)
    np.testing.assert_allclose(g2[2:], 1.0, atol=0.05)


def test_gaps_and_coordination_of_a_chain():
    arr = chain(10, 2.1)
    np.testing.assert_allclose(nearest_gaps(arr), 0.1, rtol=1e-12)
    np.testing.assert_array_equal(coordination(arr, gap=0.1), [1] + [2] * 8 + [1])
    assert coordination(arr, gap=0.05).sum() == 0


def test_spheroid_gap_tip_to_tip_is_exact():
    rot = np.broadcast_to(np.eye(3), (2, 3, 3)).copy()
    pos = np.array([[0, 0, 0], [0, 0, 6.3]])
    semi = np.array([[1, 1, 3.0]] * 2)
    arr = Arrangement(pos, np.full(2, 3.0), None, "pair", semi_axes=semi, rotations=rot)
    np.testing.assert_allclose(nearest_gaps(arr), 0.3, rtol=1e-9)
    side = arr.replace(positions=np.array([[0, 0, 0], [2.3, 0, 0]]))
    np.testing.assert_allclose(nearest_gaps(side), 0.3, rtol=1e-9)


def test_clusters_of_a_chain_array():
    arr = chain_array(3, 4, 6, gap=0.05, chain_spacing=3.0, axis=[1.0, 0, 0])
    rep = clusters(arr, gap=0.1)
    assert rep.n_clusters == 12 and set(rep.sizes) == {6} and rep.largest == 6
    assert clusters(arr, gap=1.0).n_clusters == 1  # 1.0 bridges the 1.0 lateral gaps
    ch = chains(arr, gap=0.1, axis=[1.0, 0, 0])
    np.testing.assert_allclose(ch.lengths, 6 * 2 + 5 * 0.05, rtol=1e-12)
    np.testing.assert_allclose(ch.alignment, 1.0, rtol=1e-12)
    assert ch.order_parameter == pytest.approx(1.0) and ch.fraction_in_chains == 1.0
    across = chains(arr, gap=0.1, axis=[0, 0, 1.0])
    assert across.order_parameter == pytest.approx(-0.5)


def test_periodic_percolation_along_chains_only():
    # Columns of touching spheres along z, 3 apart laterally, in a periodic box.
    g = np.arange(4)
    ix, iy, iz = np.meshgrid(g, g, np.arange(5), indexing="ij")
    pos = np.stack([ix * 3.0, iy * 3.0, iz * 2.0], -1).reshape(-1, 3)
    arr = Arrangement(pos, np.ones(len(pos)), None, "columns", box=np.array([12.0, 12.0, 10.0]))
    rep = clusters(arr, gap=0.01)
    assert rep.n_clusters == 16
    np.testing.assert_array_equal(rep.percolates, [False, False, True])
    # Break every column once: nothing wraps.
    broken = arr.replace(positions=pos[iz.ravel() != 4], radii=np.ones(int((iz != 4).sum())))
    assert not clusters(broken, gap=0.01).percolates.any()
    # Lateral bridges at 1.0 gap connect everything into one cluster wrapping all ways.
    assert clusters(arr, gap=1.0).percolates.all()


def test_open_percolation_of_a_spanning_chain():
    pos = np.zeros((10, 3))
    pos[:, 2] = -9 + 2.0 * np.arange(10)
    arr = Arrangement(pos, np.ones(10), None, "column", region="cube", edges=np.full(3, 20.0))
    np.testing.assert_array_equal(clusters(arr, gap=0.01).percolates, [False, False, True])
    short = arr.replace(positions=pos[:6], radii=np.ones(6))
    assert not clusters(short, gap=0.01).percolates.any()


def test_descriptor_errors():
    with pytest.raises(da.InputError, match="arrangement"):
        radial_distribution(chain(5, 2.5), 3.0)
    arr = lattice("sc", lattice_constant=3.0, sample="periodic", cells=3)
    with pytest.raises(da.InputError, match="r_max"):
        radial_distribution(arr, 6.0)
    with pytest.raises(da.InputError, match="axis"):
        chains(arr, 0.1, axis=[0, 0, 0])
