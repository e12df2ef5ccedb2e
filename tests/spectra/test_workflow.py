"""Dielectric spectra from a config: models in the config, the spectrum verb, its file, figures and report."""

import json
import math
import subprocess
import sys
from pathlib import Path

import h5py
import numpy as np
import pytest
from schema_walk import walk_spectrum

from dipolearray.cli import EXIT_BAD_INPUT, EXIT_OK, main
from dipolearray.config import dispersion_of, parse_config, run_config_spectrum
from dipolearray.errors import ConfigError
from dipolearray.spectra import loss_peak

ROOT = Path(__file__).resolve().parents[2]

CFG = """
[run]
name = "spec-test"
[host]
eps = 2.5
[[population]]
radius = "1 um"
eps = 8.0
model = "debye"
delta_eps = 10.0
tau = "1 ms"
conductivity = "1e-8 S/m"
[arrangement]
kind = "lattice"
lattice = "sc"
region = "periodic"
cells = 2
volume_fraction = 0.1
[frequency]
min = "0.1 Hz"
max = "100 kHz"
points = 121
"""


def test_loss_peak_of_a_debye_relaxation():
    # A Debye loss peak sits at w tau = 1 and is log10((2 + sqrt 3)/(2 - sqrt 3)) = 1.1438 decades wide.
    from dipolearray.materials import debye

    f = np.logspace(0, 8, 801)
    pk = loss_peak(f, -debye(2.0, 5.0, 1e-4)(f).imag)
    assert pk["frequency_hz"] == pytest.approx(1 / (2 * math.pi * 1e-4), rel=1e-3)
    assert pk["width_decades"] == pytest.approx(math.log10((2 + math.sqrt(3)) / (2 - math.sqrt(3))), abs=2e-3)
    assert pk["inside"] and pk["eps_loss"] == pytest.approx(2.5, rel=1e-4)


def test_config_models_and_their_errors():
    cfg = parse_config(CFG)
    fill = dispersion_of(cfg.populations[0])
    assert fill.kind == "debye" and fill.tau_s == pytest.approx(1e-3) and fill.sigma_dc == pytest.approx(1e-8)
    with pytest.raises(ConfigError, match=r"population\[0\].tau: required"):
        parse_config(CFG.replace('tau = "1 ms"\n', ""))
    with pytest.raises(ConfigError, match="not a time"):
        parse_config(CFG.replace('tau = "1 ms"', 'tau = "1 m"'))
    with pytest.raises(ConfigError, match="frequency.max"):
        parse_config(CFG.replace('max = "100 kHz"', 'max = "0.01 Hz"'))
    with pytest.raises(ConfigError, match="did you mean 'population\\[0\\].conductivity'"):
        parse_config(CFG.replace("conductivity =", "conductivty ="))


def test_config_spectrum_matches_the_clausius_mossotti_composite(tmp_path):
    # A cubic lattice at point-dipole level is the Maxwell Garnett / Clausius-Mossotti composite
    # (Lorentz local field) at every frequency.
    out = run_config_spectrum(parse_config(CFG), output=tmp_path / "s.h5")
    iso = np.trace(out["eps_tensor"], axis1=1, axis2=2) / 3
    np.testing.assert_allclose(iso, out["maxwell_garnett"], rtol=1e-9)
    with h5py.File(out["path"]) as f:
        from schema_walk import walk_spectrum as walk

        assert walk(f) == []
        np.testing.assert_allclose(f["response/eps_loss"][...], -iso.imag)
        w = 2 * math.pi * f["response/frequency_Hz"][...]
        np.testing.assert_allclose(f["response/conductivity_S_per_m"][...], w * 8.8541878128e-12 * -iso.imag)


def test_spectrum_verb_report_and_figures(tmp_path):
    (tmp_path / "s.toml").write_text(CFG)
    run = lambda *a: subprocess.run(  # noqa: E731
        [sys.executable, "-m", "dipolearray", *a], capture_output=True, text=True, cwd=tmp_path, timeout=300
    )
    p = run("spectrum", "s.toml", "--json", "--output", "s.h5")
    assert p.returncode == EXIT_OK, p.stderr
    info = json.loads(p.stdout)
    assert info["converged"] and info["residue_sum_isotropic"] == pytest.approx(0.1, rel=1e-10)
    assert info["loss_peak"]["frequency_hz"] == pytest.approx(
        info["maxwell_garnett_loss_peak"]["frequency_hz"]
    )
    with h5py.File(tmp_path / "s.h5") as f:
        assert walk_spectrum(f) == []
    p = run("spectrum", "s.toml", "--output", "s.h5")
    assert p.returncode == EXIT_BAD_INPUT and "exists" in p.stderr
    assert main(["report", str(tmp_path / "s.h5"), "--quiet"]) == EXIT_OK
    html = (tmp_path / "s.html").read_text()
    for name in ("dielectric_spectrum", "cole_cole", "pole_density"):
        assert f"s_figures/{name}.png" in html and f"s_figures/{name}.svg" in html
    assert "licensed practice" in html and "Maxwell Garnett" in html


def test_bundled_spectrum_example_runs_reduced(tmp_path, capsys):
    cfg = ROOT / "configs" / "interfacial_loss.toml"
    argv = ["spectrum", str(cfg), "--set", "arrangement.n_bodies=150", "--set", "frequency.points=60"]
    assert main(argv + ["--output", str(tmp_path / "x.h5"), "--quiet"]) == EXIT_OK
    with h5py.File(tmp_path / "x.h5") as f:
        assert walk_spectrum(f) == [] and f["response/frequency_Hz"].shape == (60,)
    capsys.readouterr()


def test_inspect_spectrum_file(tmp_path, capsys):
    out = run_config_spectrum(parse_config(CFG), output=tmp_path / "i.h5")
    assert main(["inspect", str(out["path"]), "--json"]) == EXIT_OK
    info = json.loads(capsys.readouterr().out)
    assert info["kind"] == "spectrum" and info["n_poles"] == len(out["spectrum"].poles)
    assert info["loss_peak"]["frequency_hz"] == pytest.approx(out["peak"]["frequency_hz"])


def test_several_filler_materials_are_solved_frequency_by_frequency(tmp_path):
    import dipolearray as da
    from dipolearray.arrange import random_sequential_addition
    from dipolearray.materials import constant, debye
    from dipolearray.spectra import frequency_sweep

    arr = random_sequential_addition(120, 0.15, region="sphere", rng=5)
    arr = arr.replace(labels=np.arange(120) % 2)
    pops = (da.Population(da.Sphere(1.0), da.Material(10.0)), da.Population(da.Sphere(1.0), da.Material(5.0)))
    sc = da.Scene.from_arrangement(arr, pops, host=da.Material(2.5))
    f = np.logspace(1, 7, 25)
    host, fills = constant(2.5, 0.005), [debye(8.0, 40.0, 1e-5, sigma_dc=1e-6), constant(5.0, 0.1)]
    warm = frequency_sweep(sc, host, fills, f, rtol=1e-12)
    cold = frequency_sweep(sc, host, fills, f, rtol=1e-12, warm=False)
    assert warm["converged"].all() and warm["iterations"].sum() <= cold["iterations"].sum()
    np.testing.assert_allclose(warm["eps_tensor"], cold["eps_tensor"], rtol=1e-9, atol=1e-12)
    # Independent: a direct (LU) solve at one frequency.
    from dipolearray.observables import effective_permittivity

    i = 12
    pops_i = tuple(
        da.Population(p.shape, da.Material(complex(m(f[i])))) for p, m in zip(pops, fills, strict=True)
    )
    ref = effective_permittivity(
        da.solve(sc.replace(host=da.Material(complex(host(f[i]))), populations=pops_i), "direct")
    ).tensor
    np.testing.assert_allclose(warm["eps_tensor"][i], ref, rtol=1e-9)
    with pytest.raises(da.InputError, match="fillers"):
        frequency_sweep(sc, host, fills[:1] * 3, f)


def test_config_with_two_filler_materials_writes_a_response_without_spectrum(tmp_path, capsys):
    text = CFG.replace('[arrangement]\nkind = "lattice"\nlattice = "sc"\nregion = "periodic"\ncells = 2\n',
                       '[arrangement]\nkind = "random"\nn_bodies = 60\nregion = "sphere"\n')  # fmt: skip
    text += '\n[[population]]\nradius = "1 um"\neps = 4.0\nmodel = "constant"\n'
    (tmp_path / "two.toml").write_text(text)
    assert (
        main(["spectrum", str(tmp_path / "two.toml"), "--output", str(tmp_path / "two.h5"), "--quiet"]) == 0
    )
    with h5py.File(tmp_path / "two.h5") as f:
        assert "spectrum" not in f and walk_spectrum(f) == []
    assert main(["inspect", str(tmp_path / "two.h5")]) == EXIT_OK
    assert "frequency by frequency" in capsys.readouterr().out
    assert main(["report", str(tmp_path / "two.h5"), "--quiet"]) == EXIT_OK
    html = (tmp_path / "two.html").read_text()
    assert "two_figures/dielectric_spectrum.png" in html and "pole_density" not in html
