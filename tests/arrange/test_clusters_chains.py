"""Clustered and chained arrangements: the parameters a formulator sets are the ones measured back."""

import numpy as np
import pytest
from scipy.spatial import cKDTree

import dipolearray as da
from dipolearray.arrange import (
    chain_lengths,
    chains,
    cluster_aggregation,
    clustered,
    clusters,
    field_chains,
    nearest_gaps,
    place_groups,
)
from dipolearray.scene._overlap import find_overlaps


def _no_overlap(arr):
    if arr.region == "periodic":
        tree = cKDTree(np.mod(arr.positions, arr.box), boxsize=arr.box)
        d, _ = tree.query(np.mod(arr.positions, arr.box), k=2)
        return d[:, 1].min() >= 2 * arr.radii.max() * (1 - 1e-9)
    return find_overlaps(arr.positions, arr.body_semi_axes, np.asarray(arr.body_rotations)) == []


def test_aggregation_makes_one_connected_cluster():
    pos, labels, hist = cluster_aggregation(60, box_fraction=0.02, rng=3)
    assert set(labels) == {0} and hist[-1, 0] == 60 and len(hist) == 59
    d = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    np.fill_diagonal(d, np.inf)
    assert d.min() >= 2 * (1 - 1e-9)  # touching, never overlapping
    arr = da.arrange.Arrangement(pos, np.ones(60), None, "aggregate")
    assert clusters(arr, gap=1e-7).n_clusters == 1
    with pytest.raises(da.InputError, match="box_fraction"):
        cluster_aggregation(10, box_fraction=0.3)


def test_aggregation_with_gap_sticks_at_the_gap():
    pos, _, _ = cluster_aggregation(40, gap=0.2, box_fraction=0.02, rng=1)
    arr = da.arrange.Arrangement(pos, np.ones(40), None, "aggregate")
    np.testing.assert_allclose(nearest_gaps(arr), 0.2, atol=1e-9)


@pytest.mark.parametrize("kind", ["fractal", "compact"])
def test_clustered_fraction_and_sizes(kind):
    arr = clustered(1200, 0.05, cluster_size=20, fraction_clustered=0.5, kind=kind, region="cube", rng=4)
    assert arr.volume_fraction == pytest.approx(0.05, rel=1e-12)
    assert _no_overlap(arr)
    counts = np.bincount(arr.groups + 1)
    assert counts[0] == 600 and set(counts[1:]) == {20} and len(counts) == 31
    # Members of one cluster are connected within a small gap, dispersed bodies mostly alone.
    gap = 1e-7 if kind == "fractal" else 0.5
    rep = clusters(arr, gap=gap)
    for c in range(30):
        assert len(set(rep.labels[arr.groups == c])) == 1
    assert rep.largest >= 20


def test_clustered_errors():
    with pytest.raises(da.InputError, match="fraction_clustered"):
        clustered(100, 0.05, cluster_size=10, fraction_clustered=1.5)
    with pytest.raises(da.InputError, match="kind"):
        clustered(100, 0.05, cluster_size=10, fraction_clustered=0.5, kind="lamellar")
    with pytest.raises(da.InputError, match="volume_fraction"):
        place_groups([np.zeros((1, 3)), np.array([[0, 0, -30.0], [0, 0, 30.0]])], 1.0, 0.3, region="cube")


def test_chain_length_distributions():
    rng = np.random.default_rng(0)
    for dist in ("fixed", "geometric", "poisson"):
        k = chain_lengths(200000, 8, dist, rng)
        assert k.sum() == 200000 and k.min() >= 1
        assert k[:-1].mean() == pytest.approx(8.0, rel=0.02)
    geo = chain_lengths(200000, 8, "geometric", rng)
    assert geo.std() == pytest.approx(np.sqrt(1 - 1 / 8) * 8, rel=0.05)  # geometric variance (1-p)/p^2
    assert chain_lengths(1000, 8, "geometric", rng, max_length=5).max() == 5


def test_field_chains_are_found_by_chain_analysis():
    arr = field_chains(600, 0.1, mean_length=12, axis=[1.0, 0.0, 0.0], gap=0.05, region="cube", rng=5)
    assert _no_overlap(arr) and arr.volume_fraction == pytest.approx(0.1, rel=1e-12)
    true_sizes = np.bincount(arr.groups)
    assert true_sizes.max() == 11  # 12 is cut to what 80 % of the cube edge holds
    ch = chains(arr, gap=0.06, axis=[1.0, 0.0, 0.0])
    assert ch.fraction_in_chains == 1.0
    # Chains placed at random may touch another by chance; nearly all stay separate.
    assert len(ch.sizes) >= 0.9 * len(true_sizes)
    assert np.median(ch.alignment) > 1 - 1e-12
    k = np.median(true_sizes)
    assert np.median(ch.lengths) == pytest.approx(k * 2 + (k - 1) * 0.05, rel=1e-9)
    tilted = field_chains(600, 0.1, mean_length=12, misalignment=20, region="periodic", rng=5)
    s2 = chains(tilted, gap=1e-7).order_parameter
    # Tilt angle with 2D-Gaussian components of 20 degrees: <P2> = 1 - 3 sigma^2 to leading order.
    assert 0.55 < s2 < 0.9


@pytest.mark.parametrize("layout", ["sheets", "columns"])
def test_sheets_and_columns(layout):
    arr = field_chains(
        700, 0.1, mean_length=10, layout=layout, chains_per_group=5, region="periodic", gap=0.0, rng=6
    )
    assert _no_overlap(arr)
    labels = arr.groups
    n_chains = labels.max() + 1
    assert np.bincount(labels).max() == 7  # 10 cut to half the periodic box (edge 30.8)
    rep = clusters(arr, gap=1e-7)
    # Each group of five touching chains is one connected cluster.
    for c in range(0, n_chains - n_chains % 5, 5):
        group = np.isin(labels, np.arange(c, c + 5))
        assert len(set(rep.labels[group])) == 1
    with pytest.raises(da.InputError, match="chains_per_group"):
        field_chains(100, 0.1, mean_length=10, chains_per_group=3)


@pytest.mark.parametrize("layout", ["chains", "columns"])
def test_box_spanning_chains_percolate_along_the_field_only(layout):
    per = 1 if layout == "chains" else 4
    arr = field_chains(
        480, 0.1, mean_length=12, layout=layout, chains_per_group=per, region="periodic", spanning=True, rng=3
    )
    assert arr.box[2] == pytest.approx(24.0) and arr.volume_fraction == pytest.approx(0.1)
    assert _no_overlap(arr)
    rep = clusters(arr, gap=1e-7)
    assert rep.n_clusters == 40 // per
    np.testing.assert_array_equal(rep.percolates, [False, False, True])
    ch = chains(arr, gap=1e-7)
    np.testing.assert_allclose(ch.lengths, 24.0)
    with pytest.raises(da.InputError, match="spanning"):
        field_chains(480, 0.1, mean_length=12, spanning=True)
    with pytest.raises(da.InputError, match="n_bodies"):
        field_chains(100, 0.1, mean_length=12, region="periodic", spanning=True)
