"""Summaries and reports of result files."""

import numpy as np
import pytest

import dipolearray as da
from dipolearray.report import run_summary, write_report


def _lattice_solution():
    from dipolearray.arrange import lattice

    arr = lattice("sc", radius=1.0, volume_fraction=0.2, sample="periodic", cells=2)
    sc = da.Scene.from_arrangement(
        arr,
        da.Population(da.Sphere(1.0), da.Material(12.0 - 0.3j)),
        host=da.Material(2.0),
        length_unit_m=1e-6,
        field_V_per_m=4e6,
    )
    return da.solve(sc, rtol=1e-12)


def test_summary_of_cubic_lattice_equals_clausius_mossotti():
    # Point dipoles on a cubic lattice: the Lorentz local field gives Clausius-Mossotti, the same
    # closed form as Maxwell Garnett for spheres (Jackson 1999, sec. 4.5).
    info = run_summary(_lattice_solution())
    mg = info["mixing"]["rules"]["Maxwell Garnett"]
    assert info["eps_eff_isotropic"] == pytest.approx(mg, rel=1e-8)
    assert info["volume_fraction"] == pytest.approx(0.2)
    lo, hi = info["mixing"]["bounds"]["Hashin-Shtrikman (isotropic, eps')"]
    assert lo - 1e-9 <= info["eps_eff_isotropic"][0] <= hi
    # SI: 4 kV/mm applied; the peak host field is the surface enhancement times it.
    assert info["peak_host_field_V_per_m"] == pytest.approx(info["field_enhancement"]["surface"]["max"] * 4e6)
    assert any("applied field (4 kV/mm)" in n for n in info["breakdown_notes"])


@pytest.mark.parametrize("fmt", ["html", "markdown"])
def test_periodic_report_has_every_figure_and_the_cautions(tmp_path, fmt):
    path = da.save_result(tmp_path / "lat.h5", _lattice_solution())
    out = write_report(path, format=fmt, resolution=32)
    text = out["report"].read_text()
    names = [f["name"] for f in out["figures"]]
    assert names == ["bodies", "field_slice", "residual_history", "enhancement_histogram"]
    for f in out["figures"]:
        assert f["png"].name in text and f["svg"].name in text and f["png"].stat().st_size > 5000
    assert "licensed practice" in text and "Clausius" not in text
    assert "periodic box" in text
    with pytest.raises(da.InputError, match="exists"):
        write_report(path, format=fmt)
    with pytest.raises(da.InputError, match="format"):
        write_report(path, format="pdf", overwrite=True)


def test_several_populations_skip_the_two_phase_rules(tmp_path):
    pops = (da.Population(da.Sphere(1.0), da.Material(10.0)), da.Population(da.Sphere(0.5), da.Material(4.0)))
    pos = np.array([[0, 0, 0], [3.0, 0, 0], [0, 3.0, 0]])
    sc = da.Scene(pos, pops, population_index=[0, 1, 0], host=da.Material(2.0), sample_radius=6.0)
    info = run_summary(da.solve(sc))
    assert info["mixing"] is None and len(info["populations"]) == 2
    text = write_report(da.save_result(tmp_path / "two.h5", da.solve(sc)), resolution=24)[
        "report"
    ].read_text()
    assert "several populations" in text
