import h5py
import numpy as np
import pytest
from catalogue import CATALOGUE

import dipolearray as da
from dipolearray.errors import SchemaError
from dipolearray.store import (
    SCHEMA,
    SCHEMA_VERSION,
    _hdf5,
    describe,
    read_config_text,
    read_observables,
    save_result,
)


def _solution(name="complex_permittivity"):
    s = CATALOGUE[name]().replace(length_unit_m=2e-7, field_V_per_m=1e6, sample_radius=12.0)
    return da.solve(s, "direct")


def test_round_trip_returns_the_same_result(tmp_path):
    sol = _solution()
    path = save_result(tmp_path / "r.h5", sol, observables=["forces", "local_field"], config_text="x = 1\n")
    back = da.load_result(path)
    np.testing.assert_array_equal(back.moments, sol.moments)
    assert back.moments.dtype == np.complex128
    for key in ("positions", "population_index", "scale", "rotations", "field"):
        np.testing.assert_array_equal(getattr(back.scene, key), getattr(sol.scene, key))
    assert back.scene.eps_host == sol.scene.eps_host
    assert back.scene.populations == sol.scene.populations
    for key in (
        "converged",
        "reason",
        "method",
        "method_reason",
        "backend",
        "iterations",
        "n_applies",
        "rtol",
    ):
        assert getattr(back, key) == getattr(sol, key)
    np.testing.assert_array_equal(back.residual_history, sol.residual_history)
    obs = read_observables(path)
    np.testing.assert_allclose(obs["forces"], da.forces(sol), rtol=1e-15)
    assert read_config_text(path) == "x = 1\n"
    np.testing.assert_allclose(da.forces(back), obs["forces"], rtol=1e-12)
    text = describe(path)
    assert "bodies" in text and "forces" in text


def test_units_as_attributes(tmp_path):
    sol = _solution("dilute_random")
    path = save_result(tmp_path / "u.h5", sol, observables=["forces"])
    with h5py.File(path) as f:
        m = f["solution/moments"]
        assert m.attrs["si_unit"] == "C m"
        eps0 = 8.8541878128e-12
        expect = 4 * np.pi * eps0 * sol.scene.eps_host * (2e-7) ** 3 * 1e6
        assert float(m.attrs["si_factor"]) == pytest.approx(expect, rel=1e-12)
        assert f["observables/forces"].attrs["si_unit"] == "N"
        assert "eps''" in f.attrs["convention"]


def _walk_schema(f):
    n_pop = len(f["scene/populations"])
    missing = []
    for e in SCHEMA:
        if not e.required:
            continue
        paths = [e.path.replace("<i>", str(i)) for i in range(n_pop)] if "<i>" in e.path else [e.path]
        for p in paths:
            if e.kind == "attr":
                obj, name = p.split("@")
                if name not in f[obj or "/"].attrs:
                    missing.append(p)
            elif p not in f:
                missing.append(p)
    return missing


def test_written_file_has_every_schema_entry(tmp_path):
    path = save_result(tmp_path / "s.h5", _solution("tilted_spheroids"))
    with h5py.File(path) as f:
        assert _walk_schema(f) == []
        assert f.attrs["schema_version"] == SCHEMA_VERSION


def test_docs_page_matches_schema():
    from pathlib import Path

    from dipolearray.store import schema_markdown

    page = Path(__file__).resolve().parents[2] / "docs" / "schema.md"
    assert page.read_text() == schema_markdown()


def test_sweep_and_spectrum_pages_match_their_declarations():
    from pathlib import Path

    from dipolearray.store import spectrum_schema_markdown, sweep_schema_markdown

    docs = Path(__file__).resolve().parents[2] / "docs"
    assert (docs / "sweep_files.md").read_text() == sweep_schema_markdown()
    assert (docs / "spectrum_files.md").read_text() == spectrum_schema_markdown()


def test_large_arrays_are_chunked_and_compressed(tmp_path):
    from dipolearray.arrange import random_sequential_addition

    lay = random_sequential_addition(1500, 0.1, rng=0)
    s = da.Scene(lay.positions, da.Population(da.Sphere(1.0), da.Material(3.0)))
    path = save_result(tmp_path / "big.h5", da.solve(s, "cocg", rtol=1e-6))
    with h5py.File(path) as f:
        ds = f["solution/moments"]
        assert ds.chunks is not None and ds.compression == "gzip"


def test_refuses_to_overwrite(tmp_path):
    sol = _solution("isolated_sphere")
    path = save_result(tmp_path / "a.h5", sol)
    before = path.read_bytes()
    with pytest.raises(da.InputError, match="exists"):
        save_result(path, sol)
    assert path.read_bytes() == before
    save_result(path, sol, overwrite=True)


def test_failed_write_leaves_no_file_and_keeps_old(tmp_path, monkeypatch):
    sol = _solution("isolated_sphere")
    path = save_result(tmp_path / "keep.h5", sol)
    before = path.read_bytes()

    def broken(tmp, *a, **k):
        with h5py.File(tmp, "w") as f:
            f.attrs["format"] = "half"
        raise RuntimeError("disk full")

    monkeypatch.setattr(_hdf5, "_write", broken)
    with pytest.raises(RuntimeError, match="disk full"):
        save_result(tmp_path / "new.h5", sol)
    with pytest.raises(RuntimeError):
        save_result(path, sol, overwrite=True)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.h5"]
    assert path.read_bytes() == before


def test_reader_checks_format_and_version(tmp_path):
    path = save_result(tmp_path / "v.h5", _solution("isolated_sphere"))
    with h5py.File(path, "a") as f:
        f.attrs["schema_version"] = SCHEMA_VERSION + 1
    with pytest.raises(SchemaError, match="schema version"):
        da.load_result(path)
    other = tmp_path / "other.h5"
    with h5py.File(other, "w") as f:
        f["x"] = 1
    with pytest.raises(SchemaError, match="not a dipolearray result"):
        da.load_result(other)
    junk = tmp_path / "junk.h5"
    junk.write_text("hello")
    with pytest.raises(SchemaError, match="not an HDF5"):
        da.load_result(junk)
    with pytest.raises(da.InputError, match="no such file"):
        da.load_result(tmp_path / "missing.h5")


def test_unknown_observable(tmp_path):
    with pytest.raises(da.InputError, match="observables"):
        save_result(tmp_path / "o.h5", _solution("isolated_sphere"), observables=["forcez"])
    assert not any(tmp_path.iterdir())


def test_periodic_scene_round_trip(tmp_path):
    sol = da.solve(CATALOGUE["periodic_random"](), rtol=1e-10)
    path = da.save_result(tmp_path / "bulk.h5", sol, observables=["effective_permittivity", "local_field"])
    back = da.load_result(path)
    assert back.scene.boundary == "periodic"
    np.testing.assert_array_equal(back.scene.box, sol.scene.box)
    np.testing.assert_allclose(
        da.effective_permittivity(back).tensor, da.effective_permittivity(sol).tensor, rtol=1e-14
    )


def test_saving_a_large_result_holds_no_second_copy_of_its_arrays(tmp_path):
    # The store writes the solution's own read-only arrays chunk by chunk: the Python-side
    # allocations during a save stay far below the size of the moments (tracemalloc sees
    # numpy's buffers; HDF5's chunk cache is bounded by the chunk size, 64k numbers).
    import dataclasses
    import tracemalloc

    from dipolearray.arrange import cubic_lattice_sphere

    lay = cubic_lattice_sphere(2.5, 95.0)
    s = da.Scene(lay.positions, da.Population(da.Sphere(1.0), da.Material(4.0 - 0.5j)))
    small = da.solve(da.Scene(np.zeros((1, 3)), da.Population(da.Sphere(1.0), da.Material(4.0))), "direct")
    alpha = np.asarray(s.polarizability)
    moments = np.einsum("nij,kj->nik", alpha, s.field)  # the isolated response, (N, 3, 3) complex
    sol = dataclasses.replace(small, scene=s, moments=moments, residual=np.zeros(3))
    assert s.n_bodies > 200_000 and sol.moments.nbytes > 25e6
    tracemalloc.start()
    try:
        path = save_result(tmp_path / "large.h5", sol)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < 0.25 * sol.moments.nbytes
    with h5py.File(path) as f:
        np.testing.assert_array_equal(f["solution/moments"][:1000], sol.moments[:1000])
