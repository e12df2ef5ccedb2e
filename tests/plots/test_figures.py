"""Figures: written as PNG (fixed canvas, not blank) and SVG, with the data they were given."""

import matplotlib
import matplotlib.image as mpimg
import numpy as np
import pytest

import dipolearray as da
from dipolearray.observables import field_enhancement
from dipolearray.plots import (
    DPI,
    plot_bodies,
    plot_enhancement_histogram,
    plot_field_slice,
    plot_residual_history,
    save_figure,
)

matplotlib.use("Agg")


@pytest.fixture(scope="module")
def sol():
    rng = np.random.default_rng(4)
    arr = da.arrange.random_sequential_addition(60, 0.1, region="sphere", rng=rng)
    sc = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(30.0)), host=da.Material(2.5)
    )
    return da.solve(sc, "cocg", rtol=1e-9)


def _check_png(path, size):
    img = mpimg.imread(path)
    assert img.shape[:2] == (round(size[1] * DPI), round(size[0] * DPI))
    assert img[..., :3].std() > 0.05  # not a blank canvas


@pytest.mark.parametrize("which", ["bodies", "slice", "residual", "histogram"])
def test_each_figure_is_written_with_its_size(sol, tmp_path, which):
    if which == "bodies":
        ax, size = plot_bodies(sol, max_arrows=20), (6.4, 5.6)
        assert len(ax.collections) >= 2  # scatter + arrows
        offsets = np.asarray(ax.collections[0]._offsets3d).T
        np.testing.assert_allclose(offsets, sol.scene.positions)
    elif which == "slice":
        ax, size = plot_field_slice(sol, resolution=41), (6.0, 4.5)
        assert len(ax.patches) > 0  # body outlines
    elif which == "residual":
        ax, size = plot_residual_history(sol), (6.0, 4.5)
        np.testing.assert_allclose(ax.lines[0].get_ydata(), sol.residual_history[:, 0])
    else:
        enh = field_enhancement(sol)
        ax, size = plot_enhancement_histogram(enh), (6.0, 4.5)
        counts = sum(p.get_height() for p in ax.patches)
        assert counts == enh.surface.size
    png, svg = save_figure(ax, tmp_path / which)
    _check_png(png, size)
    assert svg.read_text().lstrip().startswith("<?xml") and svg.stat().st_size > 5000


def test_histogram_kind_is_checked(sol):
    with pytest.raises(da.InputError, match="kind"):
        plot_enhancement_histogram(field_enhancement(sol), kind="peak")


def test_slice_outlines_follow_the_plane_of_precomputed_data(sol):
    from dipolearray.observables import field_slice, slice_outlines

    data = field_slice(sol, normal="x", offset=0.3, resolution=24)
    ax = plot_field_slice(sol, data=data)
    # Two patches (white and black outline) per body cut by the plane x = 0.3.
    assert len(ax.patches) == 2 * len(slice_outlines(sol.scene, "x", 0.3))
    assert "slice x = 0.3" in ax.get_title()
