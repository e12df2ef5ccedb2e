"""Microstructure files: exact round trips, the documented columns, and clear errors."""

from pathlib import Path

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import dipolearray as da
from dipolearray.arrange import (
    dense_packing,
    field_chains,
    lattice,
    lognormal_radii,
    microstructure_format_markdown,
    orientations,
    random_sequential_addition,
    read_arrangement,
    write_arrangement,
)

ROOT = Path(__file__).resolve().parents[2]
FIELDS = (
    "positions",
    "radii",
    "sample_radius",
    "box",
    "semi_axes",
    "rotations",
    "labels",
    "groups",
    "region",
    "edges",
)


def _same(a, b):
    for f in FIELDS:
        x, y = getattr(a, f), getattr(b, f)
        if x is None or y is None:
            assert x is None and y is None, f
        elif isinstance(x, np.ndarray):
            assert x.shape == np.shape(y) and np.array_equal(x, y), f
        else:
            assert x == y, f
    assert a.description == b.description


def _cases():
    yield random_sequential_addition(
        300, 0.2, radii=lognormal_radii(300, sigma=0.3, rng=1), region="periodic", rng=2
    )
    rot = orientations(200, "nematic", order_parameter=0.5, rng=3)
    yield random_sequential_addition(
        200, 0.15, semi_axes=(0.6, 0.6, 1.8), rotations=rot, region="cube", rng=4
    )
    yield lattice("bcc", volume_fraction=0.3, sample="sphere", size=5.0)
    yield field_chains(120, 0.05, mean_length=6, region="cube", rng=5)
    yield dense_packing(150, 0.5, rng=6)


@pytest.mark.parametrize("suffix", [".csv", ".xyz"])
def test_round_trip_is_identical(tmp_path, suffix):
    for k, arr in enumerate(_cases()):
        path = write_arrangement(tmp_path / f"m{k}{suffix}", arr, length_unit="um")
        _same(read_arrangement(path), arr)
    with pytest.raises(da.InputError, match="exists"):
        write_arrangement(path, arr)


def _write(tmp_path, text, name="m.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_units_orientation_columns_and_labels(tmp_path):
    p = _write(tmp_path, "# length_unit = um\nx,y,z,radius,population\n0,0,0,0.5,0\n2,0,0,0.5,1\n")
    arr = read_arrangement(p, length_unit_m=0.5e-6)
    np.testing.assert_allclose(arr.positions[1], [4.0, 0, 0])
    np.testing.assert_allclose(arr.radii, 1.0)
    np.testing.assert_array_equal(arr.labels, [0, 1])
    q = Rotation.from_euler("xyz", [0.3, -0.4, 1.1])
    w = q.as_quat()  # scalar last
    text = f"x,y,z,a,b,c,qw,qx,qy,qz\n0,0,0,1,1,3,{w[3]},{w[0]},{w[1]},{w[2]}\n"
    arr = read_arrangement(_write(tmp_path, text, "q.csv"))
    np.testing.assert_allclose(arr.rotations[0], q.as_matrix(), atol=1e-14)
    u = q.as_matrix()[:, 2]
    arr = read_arrangement(
        _write(tmp_path, f"x,y,z,a,b,c,ux,uy,uz\n0,0,0,1,1,3,{u[0]},{u[1]},{u[2]}\n", "u.csv")
    )
    np.testing.assert_allclose(arr.rotations[0][:, 2], u, atol=1e-14)
    xyz = _write(
        tmp_path,
        '2\nProperties=species:S:1:pos:R:3:radius:R:1 Lattice="10 0 0 0 10 0 0 0 12" length_unit=nm\n'
        "Ti 1 1 1 1\nTi 5 5 5 1\n",
        "m.extxyz",
    )
    arr = read_arrangement(xyz)
    assert arr.region == "periodic"
    np.testing.assert_array_equal(arr.box, [10, 10, 12])


@pytest.mark.parametrize(
    ("text", "key", "words"),
    [
        ("x,y,radius\n0,0,1\n", "z", "missing column"),
        ("x,y,z\n0,0,0\n", "radius", "either a radius"),
        ("x,y,z,radius,a,b,c\n0,0,0,1,1,1,1\n", "a", "not both"),
        ("x,y,z,radius\n0,0,0,1\n0,zero,0,1\n", "y", "line 3"),
        ("x,y,z,radius\n0,0,0,1\n0,0,nan,1\n", "z", "not finite"),
        ("x,y,z,radius\n0,0,0,-1\n", "radius", "<= 0"),
        ("x,y,z,radius\n0,0,0,1\n1,0,0,1\n5,0,0,1\n5.5,0,0,1\n", "positions", "(0, 1), (2, 3)"),
        ("x,y,z,radius,ux,uy\n0,0,0,1,1,0\n", "ux", "incomplete"),
        ("# length_unit = furlong\nx,y,z,radius\n0,0,0,1\n", "length_unit", "furlong"),
        ("# region = periodic\nx,y,z,radius\n0,0,0,1\n", "box", "needs box"),
        ("x,y,z,radius\n0,0,0,1,7\n", "x", "fields"),
        ("x,y,z,radius,r11,r12,r13,r21,r22,r23,r31,r32,r33\n0,0,0,1,1,0,0,0,1,0,0,0,2\n", "r11", "rotation"),
    ],
)
def test_errors_name_the_column(tmp_path, text, key, words):
    with pytest.raises(da.InputError, match=words.replace("(", r"\(").replace(")", r"\)")) as info:
        read_arrangement(_write(tmp_path, text))
    assert info.value.key == key


def test_convert_needs_a_declared_unit_and_format(tmp_path):
    p = _write(tmp_path, "x,y,z,radius\n0,0,0,1\n")
    with pytest.raises(da.InputError, match="declares no length_unit"):
        read_arrangement(p, length_unit_m=1e-6)
    with pytest.raises(da.InputError, match="format"):
        read_arrangement(tmp_path / "m.txt")
    with pytest.raises(da.InputError, match="no such file"):
        read_arrangement(tmp_path / "none.csv")


def test_docs_page_matches_module():
    assert (ROOT / "docs" / "microstructure_files.md").read_text() == microstructure_format_markdown()
