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
        (("volume_fraction = 0.05", "volume_fraction = 0.8"), "arrangement.volume_fraction", "maximum"),
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


def _cfg(arrangement, population='radius = "0.5 um"\neps = 30.0'):
    return parse_config(f"[host]\neps = 3.0\n[[population]]\n{population}\n[arrangement]\n{arrangement}\n")


def test_impossible_packing_is_a_config_error():
    cfg = _cfg("kind = 'random'\nn_bodies = 400\nvolume_fraction = 0.45\nregion = 'cube'")
    with pytest.raises(ConfigError, match="placed") as info:
        build_scene(cfg)
    assert info.value.key == "arrangement.volume_fraction"


def test_dense_nematic_spheroids_from_config():
    from dipolearray.arrange import order_parameter

    pop = 'shape = "spheroid"\npolar = "1 um"\nequatorial = "0.5 um"\neps = 12.0\norientation = "nematic"\n'
    pop += "order_parameter = 0.8\nsize_spread = 0.1"
    cfg = _cfg("kind = 'dense'\nn_bodies = 300\nvolume_fraction = 0.4\nregion = 'cube'\nseed = 2", pop)
    s = build_scene(cfg)
    assert s.n_bodies == 300 and s.scale.std() > 0.05
    assert order_parameter(s.rotations) == pytest.approx(0.8, abs=0.06)
    from dipolearray.config import build_arrangement

    arr = build_arrangement(cfg)
    assert arr.volume_fraction == pytest.approx(0.4, rel=1e-12)
    assert arr.volume_fraction == pytest.approx(s.volumes.sum() / np.prod(arr.edges), rel=1e-12)


@pytest.mark.parametrize(
    "arrangement",
    [
        "kind = 'lattice'\nlattice = 'bcc'\nvolume_fraction = 0.3\nsize = '3 um'",
        "kind = 'lattice'\nlattice = 'hcp'\nspacing = '1.5 um'\nregion = 'slab'\nsize = '2 um'",
        "kind = 'clustered'\nn_bodies = 300\nvolume_fraction = 0.05\ncluster_size = 15\n"
        "fraction_clustered = 0.4",
        "kind = 'field_chains'\nn_bodies = 300\nvolume_fraction = 0.05\nmean_length = 8\nmisalignment = 5.0",
        "kind = 'field_chains'\nn_bodies = 300\nvolume_fraction = 0.05\nlayout = 'columns'\n"
        "chains_per_group = 4",
    ],
)
def test_every_generator_builds_a_valid_scene(arrangement):
    s = build_scene(_cfg(arrangement))
    assert s.n_bodies > 10 and np.all(s.scale == 1.0)


def test_periodic_config_builds_a_periodic_scene():
    from dipolearray.config import build_arrangement

    cfg = _cfg("kind = 'lattice'\nlattice = 'fcc'\nvolume_fraction = 0.5\nregion = 'periodic'\ncells = 3")
    assert build_arrangement(cfg).n_bodies == 108
    s = build_scene(cfg)
    assert s.boundary == "periodic" and s.box is not None and s.sample_radius is None


def test_file_arrangement_relative_to_config(tmp_path):
    (tmp_path / "film.csv").write_text(
        "# length_unit = um\nx,y,z,radius\n0,0,0,0.5\n0,0,1.2,0.5\n0,0,-1.2,0.5\n"
    )
    conf = tmp_path / "run.toml"
    conf.write_text(
        '[host]\neps = 3.0\n[[population]]\nradius = "0.5 um"\neps = 30.0\n'
        "[arrangement]\nkind = 'file'\npath = 'film.csv'\n"
    )
    s = build_scene(load_config(conf))
    np.testing.assert_allclose(s.positions[:, 2], [0, 2.4, -2.4])
    # Another population size rescales the bodies (scale), the file's sizes stay.
    conf.write_text(conf.read_text().replace('radius = "0.5 um"', 'radius = "0.25 um"'))
    np.testing.assert_allclose(build_scene(load_config(conf)).scale, 2.0)
    (tmp_path / "film.csv").write_text("# length_unit = um\nx,y,z,radius\n0,0,0,0.5\n0,0,0.9,0.5\n")
    with pytest.raises(ConfigError, match="overlap") as info:
        build_scene(load_config(conf))
    assert info.value.key == "arrangement.positions"


@pytest.mark.parametrize(
    ("arrangement", "population", "key"),
    [
        ("kind = 'lattice'\nvolume_fraction = 0.3", None, "arrangement.size"),
        ("kind = 'file'", None, "arrangement.path"),
        (
            "kind = 'chain'\nn_bodies = 5",
            'radius = "1 um"\neps = 5.0\nsize_spread = 0.2',
            "population[0].size_spread",
        ),
        ("kind = 'random'\nregion = 'slab'", None, "arrangement.region"),
        ("kind = 'field_chains'\nchains_per_group = 3", None, "arrangement.chains_per_group"),
        (
            "kind = 'lattice'\nsize = '3 um'",
            'shape = "spheroid"\npolar = "1 um"\nequatorial = "0.5 um"\neps = 5.0',
            "population[0].shape",
        ),
        (
            "kind = 'random'",
            'shape = "spheroid"\npolar = "1 um"\nequatorial = "0.5 um"\neps = 5.0\norientation = "nematic"',
            "population[0].order_parameter",
        ),
    ],
)
def test_generator_specific_keys_are_checked(arrangement, population, key):
    with pytest.raises(ConfigError) as info:
        _cfg(arrangement, population) if population else _cfg(arrangement)
    assert info.value.key == key
