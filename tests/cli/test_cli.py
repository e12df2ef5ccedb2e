import json

import h5py
import numpy as np

from dipolearray.cli import EXIT_BAD_INPUT, EXIT_NOT_CONVERGED, EXIT_OK, EXIT_SCHEMA, main

CFG = """
[run]
name = "cli-test"
[host]
eps = 2.5
eps_loss = 0.01
[[population]]
radius = "100 nm"
eps = 25.0
[arrangement]
n_bodies = 120
volume_fraction = 0.1
seed = 9
[field]
strength = "2 kV/mm"
[solver]
rtol = 1e-9
"""


def _write(tmp_path, text=CFG):
    p = tmp_path / "run.toml"
    p.write_text(text)
    return p


def test_solve_writes_result_and_summary(tmp_path, capsys):
    cfg = _write(tmp_path)
    out = tmp_path / "res.h5"
    assert main(["solve", str(cfg), "--output", str(out)]) == EXIT_OK
    text = capsys.readouterr().out
    assert "effective permittivity" in text and "Caution" in text and "Maxwell Garnett" in text
    with h5py.File(out) as f:
        assert f["solution/moments"].shape == (120, 3, 3)
        assert "forces" in f["observables"]
        assert "cli-test" in f["config"][()].decode()
    # A second run refuses to clobber the result, --overwrite replaces it.
    assert main(["solve", str(cfg), "--output", str(out), "--quiet"]) == EXIT_BAD_INPUT
    assert "exists" in capsys.readouterr().err
    assert main(["solve", str(cfg), "--output", str(out), "--json", "--overwrite"]) == EXIT_OK
    info = json.loads(capsys.readouterr().out)
    assert info["converged"] and info["n_bodies"] == 120
    assert info["volume_fraction"] == np.round(0.1, 6)
    assert main(["inspect", str(out), "--config"]) == EXIT_OK
    shown = capsys.readouterr().out
    assert "120 bodies" in shown and "[arrangement]" in shown


def test_check_and_bad_input_exit_codes(tmp_path, capsys):
    cfg = _write(tmp_path)
    assert main(["check", str(cfg)]) == EXIT_OK
    assert "120 bodies" in capsys.readouterr().out
    bad = _write(tmp_path, CFG.replace("eps = 25.0", "epsilon = 25.0"))
    assert main(["check", str(bad)]) == EXIT_BAD_INPUT
    err = capsys.readouterr().err
    assert "population[0].epsilon" in err and err.count("\n") == 1


def test_not_converged_exit_code_and_no_file(tmp_path, capsys):
    cfg = _write(tmp_path, CFG.replace("rtol = 1e-9", "rtol = 1e-12\nmethod = 'fixed_point'\nmaxiter = 2"))
    out = tmp_path / "nc.h5"
    assert main(["solve", str(cfg), "--output", str(out), "--quiet"]) == EXIT_NOT_CONVERGED
    assert not out.exists()
    assert "maxiter" in capsys.readouterr().err


def test_inspect_rejects_foreign_file(tmp_path, capsys):
    p = tmp_path / "x.h5"
    with h5py.File(p, "w") as f:
        f["a"] = 1
    assert main(["inspect", str(p)]) == EXIT_SCHEMA
    assert "not a dipolearray result" in capsys.readouterr().err


def test_help_lists_commands(capsys):
    assert main([]) == EXIT_BAD_INPUT
    text = capsys.readouterr().out
    for name in ("solve", "check", "inspect"):
        assert name in text


def test_bundled_example_runs_end_to_end(tmp_path, capsys):
    from pathlib import Path

    from dipolearray import load_result
    from dipolearray.mixing import maxwell_garnett

    cfg = Path(__file__).resolve().parents[2] / "configs" / "capacitor_film.toml"
    out = tmp_path / "film.h5"
    assert main(["solve", str(cfg), "--output", str(out), "--json"]) == EXIT_OK
    info = json.loads(capsys.readouterr().out)
    sol = load_result(out)
    assert sol.converged and sol.scene.n_bodies == 3000 and sol.method == "cocg"
    # A random dispersion at 15 % sits within a few per cent of Maxwell Garnett
    # (finite-concentration and finite-sample corrections), above the host.
    mg = maxwell_garnett(3.1 - 0.012j, 40.0 - 0.4j, 0.15)
    eps_real = info["eps_eff_isotropic"][0]
    assert 3.1 < eps_real and abs(eps_real - mg.real) / mg.real < 0.03


def test_arrange_describes_and_writes(tmp_path, capsys):
    from dipolearray.arrange import read_arrangement

    text = CFG.replace("n_bodies = 120", "n_bodies = 200\nkind = 'field_chains'\nmean_length = 6")
    cfg = _write(tmp_path, text)
    out = tmp_path / "fluid.csv"
    assert main(["arrange", str(cfg), "--output", str(out), "--json"]) == EXIT_OK
    info = json.loads(capsys.readouterr().out)
    assert info["n_bodies"] == 200 and info["largest_cluster"] >= 6
    # 34 chains (33 of six, one of two): 2 (200 - 34) contacts over 200 bodies.
    assert abs(info["mean_coordination"] - 2 * (200 - 34) / 200) < 0.05
    back = read_arrangement(out, length_unit_m=100e-9)
    np.testing.assert_allclose(back.radii, 1.0, rtol=1e-12)
    assert main(["arrange", str(cfg), "--output", str(out)]) == EXIT_BAD_INPUT
    assert main(["arrange", str(cfg), "--contact-gap", "-1"]) == EXIT_BAD_INPUT
    periodic = _write(
        tmp_path, text.replace("volume_fraction = 0.1", "volume_fraction = 0.1\nregion = 'periodic'")
    )
    assert main(["arrange", str(periodic)]) == EXIT_OK
    assert "periodic" in capsys.readouterr().out
    out_h5 = tmp_path / "bulk.h5"
    assert main(["solve", str(periodic), "--output", str(out_h5), "--json"]) == EXIT_OK
    bulk = json.loads(capsys.readouterr().out)
    assert bulk["boundary"] == "periodic" and abs(bulk["volume_fraction"] - 0.1) < 1e-9
    assert bulk["eps_eff_isotropic"][0] > 2.5  # filler raises the host's 2.5


def test_arrange_dense_shows_progress(tmp_path, capsys):
    text = CFG.replace("n_bodies = 120", "n_bodies = 300\nkind = 'dense'\nequilibration_sweeps = 20").replace(
        "volume_fraction = 0.1", "volume_fraction = 0.5\nregion = 'cube'"
    )
    assert main(["arrange", str(_write(tmp_path, text))]) == EXIT_OK
    captured = capsys.readouterr()
    assert "dense random packing" in captured.out and "20 Monte Carlo sweeps" in captured.out
    assert "relax" in captured.err or "equilibrate" in captured.err  # the progress bar's stages
