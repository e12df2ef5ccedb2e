"""Every bundled example config runs end to end at reduced size; its files match the documented layout."""

from __future__ import annotations

import re
from pathlib import Path

import h5py
import pytest
from schema_walk import walk_result, walk_sweep

from dipolearray.cli import EXIT_OK, main
from dipolearray.config import load_config

ROOT = Path(__file__).resolve().parents[1]
CONFIGS = sorted((ROOT / "configs").glob("*.toml"))
SMALL = {"random": 150, "dense": 150, "clustered": 160, "field_chains": 160, "chain": 10}


def _reduced(cfg_path):
    cfg = load_config(cfg_path)
    kind = cfg.arrangement["kind"]
    return [f"arrangement.n_bodies={SMALL[kind]}"] if kind in SMALL else []


def test_examples_are_the_documented_ones():
    names = {p.stem for p in CONFIGS}
    assert {"capacitor_film", "film_clusters", "er_fluid_chains", "fraction_sweep"} <= names
    for p in CONFIGS:
        text = p.read_text()
        assert "invented" in text.lower()  # demo scenarios say so
    assert "SAFETY" in (ROOT / "configs" / "er_fluid_chains.toml").read_text()


@pytest.mark.parametrize("cfg_path", CONFIGS, ids=lambda p: p.stem)
def test_example_solves_and_reports(cfg_path, tmp_path, capsys):
    out = tmp_path / f"{cfg_path.stem}.h5"
    argv = ["solve", str(cfg_path), "--output", str(out), "--quiet"]
    for s in _reduced(cfg_path):
        argv += ["--set", s]
    assert main(argv) == EXIT_OK
    with h5py.File(out) as f:
        assert walk_result(f) == []
    assert main(["report", str(out), "--resolution", "48"]) == EXIT_OK
    html = out.with_suffix(".html").read_text()
    figs = sorted((tmp_path / f"{cfg_path.stem}_figures").glob("*.png"))
    assert len(figs) == 4  # bodies, field slice, residual history, enhancement histogram (open scenes)
    for png in figs:
        assert f'href="{cfg_path.stem}_figures/{png.name}"' in html
        assert f'href="{cfg_path.stem}_figures/{png.with_suffix(".svg").name}"' in html
        assert png.with_suffix(".svg").exists()
    assert html.count("data:image/png;base64,") == len(figs)
    assert "licensed practice" in html
    if load_config(cfg_path).arrangement["kind"] != "chain":  # a bare chain has no sample fraction
        assert "Maxwell Garnett" in html
    capsys.readouterr()


def test_sweep_example_runs_and_matches_the_sweep_layout(tmp_path, capsys):
    cfg = ROOT / "configs" / "fraction_sweep.toml"
    out = tmp_path / "sweep.h5"
    argv = ["sweep", str(cfg), "--output", str(out), "--quiet", "--realizations", "2"]
    argv += ["--set", "arrangement.n_bodies=120", "--set", "sweep.values=[0.05, 0.25]"]
    assert main(argv) == EXIT_OK
    with h5py.File(out) as f:
        assert walk_sweep(f) == []
        assert sorted(f["points"]) == ["p0000", "p0001"]
        assert all(len(f["points"][p]) == 2 for p in f["points"])
    md = tmp_path / "sweep.md"
    assert main(["report", str(out), "--format", "markdown", "--output", str(md)]) == EXIT_OK
    text = md.read_text()
    links = re.findall(r"\]\((sweep_figures/[^)]+)\)", text)
    assert "sweep_figures/sweep.png" in links and "sweep_figures/sweep.svg" in links
    assert all((tmp_path / link).exists() for link in links)
    # Two state points in the table, each within the Hashin-Shtrikman bounds.
    rows = [ln for ln in text.splitlines() if ln.startswith("| 0.")]
    assert len(rows) >= 2 and all("| yes |" in r for r in rows[:2])
    capsys.readouterr()


def test_readme_commands_name_real_verbs_and_files():
    from dipolearray.cli._main import COMMANDS

    readme = (ROOT / "README.md").read_text()
    blocks = re.findall(r"```bash\n(.*?)```", readme, flags=re.S)
    assert len(blocks) >= 2
    assert "pytest" in blocks[1]
    calls = re.findall(r"dipolearray (\w+) (\S+)", " ".join(blocks))
    assert calls
    for verb, arg in calls:
        assert verb in COMMANDS
        if arg.endswith(".toml"):
            assert (ROOT / arg).exists()
