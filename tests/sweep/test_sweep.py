"""Sweeps: statistics, resuming without redoing or losing work, Dask workers giving the same answers."""

from dataclasses import dataclass

import numpy as np
import pytest

import dipolearray as da
from dipolearray.errors import ConfigError
from dipolearray.sweep import RandomDispersion, comparison_table, load_sweep, run_sweep

POINTS = [
    {"volume_fraction": 0.1, "eps_inclusion": 12.0, "eps_host": 2.0},
    {"volume_fraction": 0.2, "eps_inclusion": 12.0, "eps_host": 2.0, "eps_inclusion_loss": 1.5},
]
MAKER = RandomDispersion(n_bodies=40)
OPTS = {"rtol": 1e-10}


@dataclass(frozen=True)
class Flaky:
    """Fails on one state point and realization seed, like a worker dying mid-sweep."""

    bad_seed: int

    def __call__(self, point, seed):
        if seed == self.bad_seed:
            raise RuntimeError("simulated failure")
        return MAKER(point, seed)


def test_statistics_and_comparison(tmp_path):
    res = run_sweep(tmp_path / "s.h5", MAKER, POINTS, 4, solve_options=OPTS, workers=0, progress=False)
    assert list(res.n) == [4, 4]
    m = res.mean
    assert m.shape == (2, 3, 3)
    # Random arrangements are isotropic on average: off-diagonal small against the diagonal.
    assert np.abs(m[:, 0, 1]).max() < 0.05 * np.abs(m[:, 0, 0]).min()
    se = res.standard_error
    assert np.all(se.real > 0)
    ci = res.confidence_interval()
    assert np.all((ci[:, 0] < res.isotropic_mean.real) & (res.isotropic_mean.real < ci[:, 1]))
    assert res.isotropic_mean[1].imag < 0  # lossy filler: eps'' > 0
    rows = comparison_table(res)
    for row in rows:
        assert row["hashin_shtrikman_lower"] == pytest.approx(row["maxwell_garnett"])
        assert (
            row["maxwell_garnett"] - 4 * row["standard_error"]
            <= row["computed"]
            <= row["hashin_shtrikman_upper"]
        )
        assert np.isfinite(row["significance"])
    for rec in res.records[0]:
        assert rec["converged"] and rec["n_bodies"] == 40 and rec["volume_fraction"] == pytest.approx(0.1)


def test_resume_keeps_finished_work(tmp_path):
    path = tmp_path / "s.h5"
    first = run_sweep(path, MAKER, POINTS, 2, solve_options=OPTS, workers=0, progress=False)
    # A failure mid-sweep (point 1, realization 3): everything finished before it is on disk.
    with pytest.raises(RuntimeError, match="simulated"):
        run_sweep(path, Flaky(_seed_of(1, 3)), POINTS, 4, solve_options=OPTS, workers=0, progress=False)
    partial = load_sweep(path)
    assert partial.n.sum() >= 4 + 1 and partial.n[1] < 4
    np.testing.assert_array_equal(partial.tensors[0][:2], first.tensors[0])
    done = run_sweep(path, MAKER, POINTS, 4, solve_options=OPTS, workers=0, progress=False)
    assert list(done.n) == [4, 4]  # no duplicates: one group per realization
    fresh = run_sweep(tmp_path / "fresh.h5", MAKER, POINTS, 4, solve_options=OPTS, workers=0, progress=False)
    for i in range(2):
        np.testing.assert_array_equal(done.tensors[i], fresh.tensors[i])  # identical to an uninterrupted run
    for i in range(2):
        np.testing.assert_array_equal(done.tensors[i][: len(partial.tensors[i])], partial.tensors[i])
    with pytest.raises(da.InputError, match="points"):
        run_sweep(path, MAKER, POINTS[:1], 4, workers=0, progress=False)


def _seed_of(i, r):
    from dipolearray.sweep._run import _seed

    return _seed(0, i, r)


def test_dask_workers_match_serial(tmp_path):
    serial = run_sweep(tmp_path / "a.h5", MAKER, POINTS[:1], 3, solve_options=OPTS, workers=0, progress=False)
    parallel = run_sweep(
        tmp_path / "b.h5", MAKER, POINTS[:1], 3, solve_options=OPTS, workers=2, progress=False
    )
    np.testing.assert_allclose(parallel.tensors[0], serial.tensors[0], rtol=1e-12)


CONFIG = """
[host]
eps = 2.0
[[population]]
shape = "spheroid"
polar = "1 um"
equatorial = "0.5 um"
eps = 20.0
orientation = "aligned"
[arrangement]
kind = "random"
n_bodies = 60
volume_fraction = 0.1
region = "periodic"
"""


def test_config_sweep_over_aspect_ratio(tmp_path):
    from dipolearray.config import ConfigScene
    from dipolearray.mixing import maxwell_garnett_ellipsoids

    points = [{"population.0.polar": "0.5 um"}, {"population.0.polar": "1.5 um"}]
    res = run_sweep(
        tmp_path / "aspect.h5", ConfigScene(CONFIG), points, 2, solve_options=OPTS, workers=0, progress=False
    )
    sphere, prolate = res.mean.real
    np.testing.assert_allclose(np.diag(sphere), np.trace(sphere) / 3, rtol=0.03)
    assert prolate[2, 2] > 1.15 * prolate[0, 0]  # aligned along z: anisotropic bulk
    mg = maxwell_garnett_ellipsoids(2.0, 20.0, 0.1, 3.0, orientation="aligned")
    np.testing.assert_allclose(np.diag(prolate), mg, rtol=0.05)
    with pytest.raises(ConfigError, match="population"):
        ConfigScene(CONFIG)({"population.x.eps": 3.0}, 1)


def test_plot_and_reference_comparison(tmp_path):
    from dipolearray.plots import plot_sweep, save_figure

    pts = [{"volume_fraction": v, "eps_inclusion": 15.0, "eps_host": 2.0} for v in (0.05, 0.15)]
    res = run_sweep(tmp_path / "p.h5", MAKER, pts, 3, solve_options=OPTS, workers=0, progress=False)
    ax = plot_sweep(res)
    # Computed means drawn as error-bar markers at the state points.
    xs = np.concatenate([ln.get_xdata() for ln in ax.lines if ln.get_marker() == "o"])
    np.testing.assert_allclose(np.sort(xs), [0.05, 0.15])
    png, svg = save_figure(ax, tmp_path / "figs" / "sweep")
    assert png.stat().st_size > 5000 and svg.read_text().startswith("<?xml")
    same = comparison_table(res, reference=res)
    assert all(r["excess_over_reference"] == 0 and r["significance_over_reference"] == 0 for r in same)
    with pytest.raises(da.InputError, match="reference"):
        comparison_table(
            res, reference=load_sweep(tmp_path / "p.h5").__class__(pts[:1], res.tensors[:1], res.records[:1])
        )
