"""Every subcommand run as a user runs it, in a subprocess, with its documented error paths."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from dipolearray.cli import EXIT_BAD_INPUT, EXIT_OK, EXIT_SCHEMA

CFG = """
[run]
name = "proc-test"
[host]
eps = 2.5
[[population]]
radius = "100 nm"
eps = 25.0
eps_loss = 0.5
[arrangement]
n_bodies = 80
volume_fraction = 0.1
seed = 3
[field]
strength = "2 kV/mm"
[solver]
rtol = 1e-9
[sweep]
parameter = "arrangement.volume_fraction"
values = [0.05, 0.15]
realizations = 2
"""


def _run(*args, cwd):
    proc = subprocess.run(
        [sys.executable, "-m", "dipolearray", *map(str, args)],
        capture_output=True,
        text=True,
        cwd=cwd,
        timeout=300,
    )
    return proc.returncode, proc.stdout, proc.stderr


@pytest.fixture
def work(tmp_path):
    (tmp_path / "run.toml").write_text(CFG)
    return tmp_path


def test_help_of_every_subcommand_has_an_example():
    from dipolearray.cli._main import COMMANDS

    code, out, _ = _run("--help", cwd=".")
    assert code == 0 and all(name in out for name in COMMANDS)
    for name in COMMANDS:
        code, out, _ = _run(name, "--help", cwd=".")
        assert code == 0 and "example:" in out and f"dipolearray {name}" in out


def test_solve_inspect_figures_report(work):
    code, out, err = _run("solve", "run.toml", "--json", cwd=work)
    assert code == EXIT_OK, err
    info = json.loads(out)
    assert info["converged"] and info["n_bodies"] == 80 and Path(work / info["output"]).exists()
    res = work / info["output"]
    code, out, _ = _run("inspect", res, "--json", cwd=work)
    assert code == EXIT_OK and json.loads(out)["eps_eff_isotropic"] == info["eps_eff_isotropic"]
    code, out, _ = _run("figures", res, "--output-dir", "figs", "--resolution", "32", "--json", cwd=work)
    assert code == EXIT_OK
    names = {f["name"] for f in json.loads(out)}
    assert names == {"bodies", "field_slice", "residual_history", "enhancement_histogram"}
    assert all((work / "figs" / f"{n}.svg").exists() for n in names)
    code, out, _ = _run("report", res, "--resolution", "32", cwd=work)
    assert code == EXIT_OK and res.with_suffix(".html").exists()
    code, _, err = _run("report", res, cwd=work)  # refuses to replace without --overwrite
    assert code == EXIT_BAD_INPUT and "exists" in err


def test_check_arrange_and_sweep(work):
    code, out, _ = _run("check", "run.toml", "--json", cwd=work)
    assert code == EXIT_OK
    info = json.loads(out)
    assert info["n_bodies"] == 80 and info["sweep_points"] == 2
    code, out, _ = _run("arrange", "run.toml", "--output", "bodies.csv", "--json", cwd=work)
    assert code == EXIT_OK and json.loads(out)["n_bodies"] == 80 and (work / "bodies.csv").exists()
    code, out, err = _run("sweep", "run.toml", "--json", "--output", "s.h5", cwd=work)
    assert code == EXIT_OK, err
    rows = json.loads(out)["rows"]
    assert [r["n"] for r in rows] == [2, 2]
    assert all(
        r["hashin_shtrikman_lower"] - 1e-9 <= r["computed"] <= r["hashin_shtrikman_upper"] for r in rows
    )
    # Rerunning resumes: nothing left to do, same numbers.
    code, out2, _ = _run("sweep", "run.toml", "--json", "--output", "s.h5", cwd=work)
    assert code == EXIT_OK and json.loads(out2)["rows"] == rows
    code, out, _ = _run("inspect", "s.h5", cwd=work)
    assert code == EXIT_OK and "2 state point(s)" in out


@pytest.mark.parametrize(
    "change, key",
    [
        (('radius = "100 nm"', 'radus = "100 nm"'), "did you mean 'population[0].radius'"),
        (('strength = "2 kV/mm"', 'strength = "2 kV/s"'), "field.strength"),
        (('radius = "100 nm"', "radius = 100"), "give a unit"),
        (("values = [0.05, 0.15]", "values = [0.05, 0.9]"), "sweep.values[1]"),
        (('parameter = "arrangement.volume_fraction"', 'parameter = "arrangement.volum"'), "volume_fraction"),
    ],
    ids=["bad-key", "bad-unit", "missing-unit", "bad-sweep-value", "bad-sweep-key"],
)
def test_bad_config_exits_2_naming_the_key(work, change, key):
    (work / "bad.toml").write_text(CFG.replace(*change))
    code, out, err = _run("check", "bad.toml", cwd=work)
    assert code == EXIT_BAD_INPUT and key in err and err.count("\n") == 1 and out == ""


def test_overlapping_imported_bodies_exit_2(work):
    (work / "bodies.csv").write_text("# length_unit = nm\nx,y,z,radius\n0,0,0,100\n150,0,0,100\n")
    text = CFG.replace("[arrangement]\n", '[arrangement]\nkind = "file"\npath = "bodies.csv"\n')
    (work / "file.toml").write_text(text)
    code, _, err = _run("solve", "file.toml", cwd=work)
    assert code == EXIT_BAD_INPUT and "overlap" in err and "(0, 1)" in err


def test_unreadable_files(work):
    (work / "bodies.csv").write_bytes(b"\xff\xfe\x00garbage")
    text = CFG.replace("[arrangement]\n", '[arrangement]\nkind = "file"\npath = "bodies.csv"\n')
    (work / "file.toml").write_text(text)
    code, _, err = _run("check", "file.toml", cwd=work)
    assert code == EXIT_BAD_INPUT and "cannot read" in err
    code, _, err = _run("check", "missing.toml", cwd=work)
    assert code == EXIT_BAD_INPUT and "no such file" in err
    (work / "junk.h5").write_bytes(b"not hdf5 at all")
    for verb in ("inspect", "report", "figures"):
        code, _, err = _run(verb, "junk.h5", cwd=work)
        assert code == EXIT_SCHEMA and "not an HDF5 file" in err
