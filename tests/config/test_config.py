from pathlib import Path

import numpy as np
import pytest

import dipolearray as da
from dipolearray.config import build_scene, config_markdown, load_config, parse_config
from dipolearray.errors import ConfigError

ROOT = Path(__file__).resolve().parents[2]

BASE = """
[run]
name = "t"
[host]
eps = 3.0
[[population]]
radius = "0.5 um"
eps = 30.0
[arrangement]
kind = "random"
n_bodies = 50
volume_fraction = 0.05
seed = 3
"""


def test_bundled_example_is_valid():
    cfg = load_config(ROOT / "configs" / "capacitor_film.toml")
    assert cfg.arrangement["n_bodies"] >= 1000
    assert cfg.field["strength"] == pytest.approx(2e7)  # 20 V/um


def test_build_matches_python_api():
    cfg = parse_config(BASE)
    s = build_scene(cfg)
    assert s.n_bodies == 50 and s.length_unit_m == pytest.approx(5e-7)
    assert s.populations[0].shape == da.Sphere(1.0)
    phi = s.volumes.sum() / (4 / 3 * np.pi * s.sample_radius**3)
    assert phi == pytest.approx(0.05, rel=1e-12)
    again = build_scene(parse_config(BASE))
    np.testing.assert_array_equal(s.positions, again.positions)  # seeded


def test_spheroids_lattice_and_chain():
    spheroid = BASE.replace(
        'radius = "0.5 um"',
        'shape = "spheroid"\npolar = "1 um"\nequatorial = "250 nm"\norientation = "random"',
    )
    s = build_scene(parse_config(spheroid))
    assert not np.allclose(s.rotations[0], s.rotations[1])
    cubic = BASE.replace('kind = "random"', 'kind = "cubic"\nspacing = "1.25 um"\ncut_radius = "5 um"')
    c = build_scene(parse_config(cubic))
    assert c.n_bodies == 257
    ch = BASE.replace('kind = "random"', 'kind = "chain"\ngap = "10 nm"')
    k = build_scene(parse_config(ch))
    assert np.linalg.norm(k.positions[1] - k.positions[0]) == pytest.approx(2.02)


@pytest.mark.parametrize(
    "edit, key, hint",
    [
        (("[host]\neps = 3.0", "[host]\neps = 3.0\nepss = 2"), "host.epss", "host.eps"),
        (("[run]", "[runn]"), "runn", "run"),
        (('radius = "0.5 um"', "radius = 0.5"), "population[0].radius", "unit"),
        (('radius = "0.5 um"', 'radius = "0.5 kg"'), "population[0].radius", "not a length"),
        (('radius = "0.5 um"', 'radius = "-0.5 um"'), "population[0].radius", "positive"),
        (('radius = "0.5 um"', 'radius = "half"'), "population[0].radius", "cannot read"),
        (('kind = "random"', 'kind = "randm"'), "arrangement.kind", "random"),
        (("volume_fraction = 0.05", "volume_fraction = 0.6"), "arrangement.volume_fraction", "maximum"),
        (("n_bodies = 50", "n_bodies = 50.5"), "arrangement.n_bodies", "integer"),
        (("eps = 30.0", "eps = 30.0\neps_loss = -1.0"), "population[0].eps_loss", "minimum"),
        (("[host]\neps = 3.0", "[host]\nname = 'h'"), "host.eps", "required"),
        (('radius = "0.5 um"', 'shape = "spheroid"'), "population[0].polar", "required"),
        (("seed = 3", "seed = 3\n[output]\nobservables = ['forcez']"), "output.observables[0]", "forces"),
        (("seed = 3", "seed = 3\n[field]\nstrength = '1 m'"), "field.strength", "not a field"),
        (("seed = 3", "seed = 3\n[field]\ndirections = 'some'"), "field.directions", "all"),
        (("seed = 3", "seed = 3\n[solver]\nmethod = 'gmress'"), "solver.method", "gmres"),
        (("[run]", "[run"), "toml", "TOML"),
    ],
)
def test_each_bad_config_gets_its_error(edit, key, hint):
    old, new = edit
    assert old in BASE
    with pytest.raises(ConfigError, match=hint) as info:
        parse_config(BASE.replace(old, new, 1))
    assert info.value.key == key


def test_missing_file():
    with pytest.raises(ConfigError, match="no such file"):
        load_config("nowhere.toml")


def test_docs_page_matches_declaration():
    assert (ROOT / "docs" / "config.md").read_text() == config_markdown()
