"""Walk the HDF5 layout documented in docs/*.md against a file, with plain h5py.

The pages are read as a user would read them (the Markdown tables), not from the
package's declaration, so a page that drifts from what the writer does fails here.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np

DOCS = Path(__file__).resolve().parents[1] / "docs"
_ROW = re.compile(
    r"^\| `(?P<path>[^`]+)` \| (?P<kind>\w+) \| (?P<dtype>[^|]*) \| (?P<shape>[^|]*) \|(?P<rest>.*)$"
)


def documented(page):
    """Rows ``(path, kind, dtype, shape, required)`` of a documented layout table."""
    rows = []
    for line in (DOCS / page).read_text().splitlines():
        m = _ROW.match(line)
        if m and m["kind"] in ("group", "dataset", "attr"):
            rows.append(
                (m["path"], m["kind"], m["dtype"].strip(), m["shape"].strip(), "(optional)" not in line)
            )
    return rows


def documented_observables():
    """``{name: shape text}`` from the observables table of docs/schema.md."""
    out = {}
    for line in (DOCS / "schema.md").read_text().splitlines():
        m = re.match(r"^\| `/observables/(\w+)` \| ([^|]+) \|", line)
        if m:
            out[m[1]] = m[2].strip()
    return out


def _dtype_ok(value, dtype):
    options = [d.strip() for d in dtype.split(" or ")] if dtype else []
    if not options:
        return True
    arr = np.asarray(value)
    for d in options:
        if d == "str" and (isinstance(value, (str, bytes)) or arr.dtype.kind in "OSU"):
            return True
        if d == "bool" and arr.dtype.kind == "b":
            return True
        if d == "int" and arr.dtype.kind in "iu":
            return True
        if d in ("float64", "int64", "complex128") and arr.dtype == np.dtype(d):
            return True
    return False


def _shape_ok(shape, spec, sizes):
    if not spec:
        return True
    for alt in spec.split(" or "):
        tokens = [t.strip() for t in alt.strip().strip("()").split(",") if t.strip()]
        if len(tokens) != len(shape):
            continue
        ok = True
        for t, s in zip(tokens, shape, strict=True):
            if t.isdigit():
                ok &= int(t) == s
            elif t in sizes:
                ok &= sizes[t] == s
        if ok:
            return True
    return False


def walk(f, page, expand, sizes):
    """Problems found walking ``page``'s table against the open h5py file ``f``.

    ``expand`` maps a placeholder (``<i>``) to the values it takes in this file;
    ``sizes`` maps shape letters (``N``, ``K``) to their sizes here.
    """
    problems = []
    for path, kind, dtype, shape, required in documented(page):
        paths = [path]
        for key, values in expand.items():
            paths = (
                [p.replace(key, v) for p in paths for v in values] if any(key in p for p in paths) else paths
            )
        for p in paths:
            if kind == "attr":
                obj, name = p.split("@")
                node = f[obj or "/"] if (obj or "/") in f else None
                if node is None or name not in node.attrs:
                    if required:
                        problems.append(f"missing {p}")
                    continue
                value = node.attrs[name]
                if not _dtype_ok(value, dtype):
                    problems.append(f"{p}: dtype {np.asarray(value).dtype} is not {dtype}")
                if not _shape_ok(np.shape(value), shape, sizes):
                    problems.append(f"{p}: shape {np.shape(value)} is not {shape}")
            elif p not in f:
                if required:
                    problems.append(f"missing {p}")
            elif kind == "dataset":
                ds = f[p]
                if not _dtype_ok(ds[()] if ds.shape == () else ds[...], dtype):
                    problems.append(f"{p}: dtype {ds.dtype} is not {dtype}")
                if not _shape_ok(ds.shape, shape, sizes):
                    problems.append(f"{p}: shape {ds.shape} is not {shape}")
    return problems


def walk_result(f):
    """Walk docs/schema.md (and its observables table) against a result file."""
    n_pop = len(f["scene/populations"])
    sizes = {"N": f["scene/positions"].shape[0], "K": f["scene/field"].shape[0]}
    problems = walk(f, "schema.md", {"<i>": [str(i) for i in range(n_pop)]}, sizes)
    obs = documented_observables()
    for name, ds in f["observables"].items():
        if name not in obs:
            problems.append(f"undocumented observable {name}")
        elif not _shape_ok(ds.shape, obs[name], sizes):
            problems.append(f"/observables/{name}: shape {ds.shape} is not {obs[name]}")
        for a in ("unit", "si_unit", "description"):
            if a not in ds.attrs:
                problems.append(f"/observables/{name}@{a} missing")
    return problems


def walk_sweep(f):
    """Walk docs/sweep_files.md against a sweep file."""
    problems = []
    points = sorted(f["points"])
    for p in points:
        reals = sorted(f["points"][p])
        expand = {"<i>": [p[1:]], "<r>": [r[1:] for r in reals]}
        rows = walk(f, "sweep_files.md", expand, {})
        problems += [r for r in rows if r not in problems]
    return problems


def walk_spectrum(f):
    """Walk docs/spectrum_files.md against a spectrum file."""
    sizes = {"N": f["scene/positions"].shape[0]}
    if "spectrum" in f:
        sizes["M"] = f["spectrum/poles"].shape[0]
    if "response" in f:
        sizes["F"] = f["response/frequency_Hz"].shape[0]
    return walk(f, "spectrum_files.md", {}, sizes)
