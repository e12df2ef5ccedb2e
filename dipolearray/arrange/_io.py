"""Microstructures in and out: CSV and extended XYZ with dipolearray's column convention.

Column convention
-----------------
Every body is one row. Names are case-sensitive.

==========================  ==========================================================
columns                     meaning
==========================  ==========================================================
``x, y, z``                 centre (required), in the file's length unit
``radius``                  sphere radius, **or**
``a, b, c``                 semi-axes in the body frame (``c`` along the body's third
                            axis: a spheroid's symmetry axis)
``ux, uy, uz``              optional: direction of the body's third axis (spheroids)
``qw, qx, qy, qz``          optional: orientation as a unit quaternion, **or**
``r11 ... r33``             optional: the 3 x 3 body-to-lab rotation, row by row
                            (its columns are the body axes in the lab frame)
``population``              optional: non-negative integer population label
``group``                   optional: integer cluster or chain number (-1: none)
==========================  ==========================================================

Metadata (CSV: ``# key = value`` lines before the header; extended XYZ: ``key=value``
on the comment line): ``length_unit`` (m, mm, um, nm), ``region`` (sphere, cube, slab,
periodic), ``sample_radius`` (sphere), ``edges`` (cube or slab, three numbers) and
``box`` (periodic, three numbers; extended XYZ also reads a diagonal ``Lattice``).
Extended XYZ follows the open convention of a count line, a comment line with
``Properties=name:type:count:...`` and one row per body; our column groups there are
``pos:R:3``, ``radius:R:1`` or ``semi_axes:R:3``, ``axis:R:3``, ``quaternion:R:4``,
``rotation:R:9``, ``population:I:1`` and ``group:I:1`` (a leading ``species:S:1`` is read and ignored).
"""

from __future__ import annotations

import csv
import io
import math
import re
from pathlib import Path

import numpy as np

from ..errors import InputError
from ._describe import overlapping_pairs
from ._generators import REGIONS, Arrangement
from ._orient import frames_from_axes

LENGTH_UNITS = {"m": 1.0, "mm": 1e-3, "um": 1e-6, "µm": 1e-6, "nm": 1e-9}
FORMATS = ("csv", "extxyz")
_ROT = [f"r{i}{j}" for i in (1, 2, 3) for j in (1, 2, 3)]


def _format_of(path, fmt):
    if fmt is not None:
        if fmt not in FORMATS:
            raise InputError(f"format: {fmt!r} is not one of {FORMATS}", "format")
        return fmt
    suffix = Path(path).suffix.lower()
    if suffix == ".csv":
        return "csv"
    if suffix in (".xyz", ".extxyz"):
        return "extxyz"
    raise InputError(f"format: cannot tell the format of {str(path)!r}; use .csv, .xyz or .extxyz", "format")


def _unit_factor(name, where):
    if name not in LENGTH_UNITS:
        raise InputError(
            f"length_unit: {name!r} in {where} is not one of {sorted(LENGTH_UNITS)}", "length_unit"
        )
    return LENGTH_UNITS[name]


def _floats(text, key, where, count=None):
    parts = text.replace(",", " ").split()
    try:
        vals = [float(p) for p in parts]
    except ValueError:
        raise InputError(f"{key}: {text!r} in {where} is not a list of numbers", key) from None
    if count is not None and len(vals) != count:
        raise InputError(f"{key}: expected {count} numbers in {where}, got {len(vals)}", key)
    return np.array(vals)


def _rotations_from(cols, get, n, where):
    if all(k in cols for k in _ROT):
        R = np.stack([get(k) for k in _ROT], axis=1).reshape(n, 3, 3)
    elif all(k in cols for k in ("qw", "qx", "qy", "qz")):
        q = np.stack([get("qw"), get("qx"), get("qy"), get("qz")], axis=1)
        norm = np.linalg.norm(q, axis=1)
        bad = np.flatnonzero(np.abs(norm - 1.0) > 1e-6)
        if bad.size:
            raise InputError(f"qw: the quaternion of body {bad[0]} in {where} is not unit length", "qw")
        w, x, y, z = (q / norm[:, None]).T
        R = np.stack(
            [
                1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w),
                2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w),
                2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y),
            ],
            axis=1,
        ).reshape(n, 3, 3)  # fmt: skip
    elif all(k in cols for k in ("ux", "uy", "uz")):
        u = np.stack([get("ux"), get("uy"), get("uz")], axis=1)
        zero = np.flatnonzero(np.linalg.norm(u, axis=1) == 0)
        if zero.size:
            raise InputError(f"ux: the axis of body {zero[0]} in {where} is zero", "ux")
        R = frames_from_axes(u)
    else:
        partial = [k for k in ("ux", "uy", "uz", "qw", "qx", "qy", "qz", *_ROT) if k in cols]
        if partial:
            raise InputError(
                f"{partial[0]}: incomplete orientation columns in {where}; give ux,uy,uz or "
                "qw,qx,qy,qz or r11..r33",
                partial[0],
            )
        return None
    err = np.abs(np.einsum("nji,njk->nik", R, R) - np.eye(3)).max(axis=(1, 2))
    bad = np.flatnonzero((err > 1e-8) | (np.linalg.det(R) < 0))
    if bad.size:
        raise InputError(f"r11: the rotation of body {bad[0]} in {where} is not a proper rotation", "r11")
    return R


def _assemble(cols, get, n, meta, where, length_unit_m, check_overlap):
    for need in ("x", "y", "z"):
        if need not in cols:
            raise InputError(f"{need}: missing column in {where} (have {sorted(cols)})", need)
    has_radius = "radius" in cols
    has_axes = all(k in cols for k in ("a", "b", "c"))
    if has_radius == has_axes:
        key = "radius" if not has_radius else "a"
        raise InputError(
            f"{key}: {where} must give either a radius column or semi-axis columns a, b, c (not both)", key
        )
    scale = 1.0
    unit = meta.get("length_unit")
    if length_unit_m is not None:
        if unit is None:
            raise InputError(f"length_unit: {where} declares no length_unit to convert from", "length_unit")
        scale = _unit_factor(unit, where) / float(length_unit_m)
    elif unit is not None:
        _unit_factor(unit, where)
    pos = np.stack([get("x"), get("y"), get("z")], axis=1) * scale
    if has_radius:
        semi = np.repeat(get("radius")[:, None], 3, axis=1) * scale
    else:
        semi = np.stack([get("a"), get("b"), get("c")], axis=1) * scale
    bad = np.flatnonzero(np.any(semi <= 0, axis=1))
    if bad.size:
        raise InputError(f"radius: body {bad[0]} in {where} has a size <= 0", "radius")
    rot = _rotations_from(cols, get, n, where)
    labels = None
    if "population" in cols:
        lab = get("population")
        if np.any(lab < 0) or np.any(lab != np.round(lab)):
            raise InputError(f"population: labels in {where} must be non-negative integers", "population")
        labels = lab.astype(np.int64)
    region = meta.get("region")
    if region is not None and region not in REGIONS:
        raise InputError(f"region: {region!r} in {where} is not one of {REGIONS}", "region")
    groups = None
    if "group" in cols:
        grp = get("group")
        if np.any(grp < -1) or np.any(grp != np.round(grp)):
            raise InputError(f"group: numbers in {where} must be integers >= -1", "group")
        groups = grp.astype(np.int64)
    kw = dict(region=region, labels=labels, groups=groups)
    R = None
    if "box" in meta:
        kw["box"] = _floats(meta["box"], "box", where, 3) * scale
        kw["region"] = region or "periodic"
    if "edges" in meta:
        kw["edges"] = _floats(meta["edges"], "edges", where, 3) * scale
    if "sample_radius" in meta:
        R = float(_floats(meta["sample_radius"], "sample_radius", where, 1)[0]) * scale
    if kw["region"] == "sphere" and R is None:
        raise InputError(f"sample_radius: region 'sphere' in {where} needs sample_radius", "sample_radius")
    if kw["region"] in ("cube", "slab") and "edges" not in kw:
        raise InputError(f"edges: region {kw['region']!r} in {where} needs edges", "edges")
    if kw["region"] == "periodic" and "box" not in kw:
        raise InputError(f"box: region 'periodic' in {where} needs box", "box")
    spheres = rot is None and bool(np.all(np.ptp(semi, axis=1) == 0))
    if not spheres:
        kw["semi_axes"] = semi
        kw["rotations"] = rot if rot is not None else np.broadcast_to(np.eye(3), (n, 3, 3)).copy()
    desc = meta.get("description", f"imported from {where}")
    arr = Arrangement(np.ascontiguousarray(pos), semi.max(axis=1), R, desc, **kw)
    if check_overlap:
        pairs = overlapping_pairs(arr, max_pairs=5)
        if pairs:
            shown = ", ".join(f"({i}, {j})" for i, j in pairs)
            raise InputError(
                f"positions: bodies overlap in {where}; first pairs (row numbers from 0): {shown}",
                "positions",
            )
    return arr


def _column_getter(rows, cols, where, first_line):
    index = {c: k for k, c in enumerate(cols)}
    n = len(rows)

    def get(name):
        k = index[name]
        out = np.empty(n)
        for r, row in enumerate(rows):
            try:
                out[r] = float(row[k])
            except (ValueError, IndexError):
                value = row[k] if k < len(row) else "(missing)"
                raise InputError(
                    f"{name}: line {first_line + r} of {where}: {value!r} is not a number", name
                ) from None
            if not math.isfinite(out[r]):
                raise InputError(f"{name}: line {first_line + r} of {where}: {row[k]!r} is not finite", name)
        return out

    return get


def _read_csv(text, where, length_unit_m, check_overlap):
    meta = {}
    lines = text.splitlines()
    k = 0
    while k < len(lines) and (not lines[k].strip() or lines[k].lstrip().startswith("#")):
        body = lines[k].lstrip().lstrip("#").strip()
        if "=" in body:
            key, value = body.split("=", 1)
            meta[key.strip()] = value.strip()
        k += 1
    if k == len(lines):
        raise InputError(f"x: {where} has no header row", "x")
    reader = csv.reader(io.StringIO("\n".join(lines[k:])))
    header = [h.strip() for h in next(reader)]
    dup = {h for h in header if header.count(h) > 1}
    if dup:
        name = sorted(dup)[0]
        raise InputError(f"{name}: column appears twice in {where}", name)
    rows = [r for r in reader if r and any(c.strip() for c in r)]
    for r, row in enumerate(rows):
        if len(row) != len(header):
            raise InputError(
                f"x: line {k + 2 + r} of {where} has {len(row)} fields, the header has {len(header)}", "x"
            )
    get = _column_getter(rows, header, where, k + 2)
    return _assemble(set(header), get, len(rows), meta, where, length_unit_m, check_overlap)


_PAIR = re.compile(r'(\w+)=("[^"]*"|\S+)')
_GROUPS = {
    "pos": ["x", "y", "z"],
    "radius": ["radius"],
    "semi_axes": ["a", "b", "c"],
    "axis": ["ux", "uy", "uz"],
    "quaternion": ["qw", "qx", "qy", "qz"],
    "rotation": _ROT,
    "population": ["population"],
    "group": ["group"],
}


def _read_extxyz(text, where, length_unit_m, check_overlap):
    lines = text.splitlines()
    try:
        n = int(lines[0].strip())
    except (ValueError, IndexError):
        raise InputError(f"x: line 1 of {where} must be the number of bodies", "x") from None
    if len(lines) < n + 2:
        raise InputError(f"x: {where} announces {n} bodies but has {max(len(lines) - 2, 0)} rows", "x")
    meta = {k: v.strip('"') for k, v in _PAIR.findall(lines[1])}
    if "Lattice" in meta and "box" not in meta:
        lat = _floats(meta["Lattice"], "Lattice", where, 9).reshape(3, 3)
        if np.abs(lat - np.diag(np.diag(lat))).max() > 0:
            raise InputError(
                f"Lattice: only orthorhombic (diagonal) boxes are supported, in {where}", "Lattice"
            )
        meta["box"] = " ".join(repr(float(v)) for v in np.diag(lat))
    props = meta.get("Properties")
    if props is None:
        raise InputError(f"Properties: missing on the comment line of {where}", "Properties")
    spec = props.split(":")
    if len(spec) % 3:
        raise InputError(f"Properties: {props!r} in {where} is not name:type:count triples", "Properties")
    cols = []
    for name, _kind, count in zip(spec[0::3], spec[1::3], spec[2::3], strict=True):
        try:
            c = int(count)
        except ValueError:
            raise InputError(f"Properties: count {count!r} of {name!r} in {where}", "Properties") from None
        if name in _GROUPS:
            if len(_GROUPS[name]) != c:
                raise InputError(
                    f"Properties: {name!r} in {where} has {c} columns, expected {len(_GROUPS[name])}",
                    "Properties",
                )
            cols.extend(_GROUPS[name])
        else:
            cols.extend(f"_{name}_{k}" for k in range(c))
    rows = [line.split() for line in lines[2 : 2 + n]]
    for r, row in enumerate(rows):
        if len(row) != len(cols):
            raise InputError(f"x: line {r + 3} of {where} has {len(row)} fields, expected {len(cols)}", "x")
    get = _column_getter(rows, cols, where, 3)
    return _assemble(set(cols), get, n, meta, where, length_unit_m, check_overlap)


def read_arrangement(path, *, format=None, length_unit_m=None, check_overlap=True):
    """Read a microstructure from CSV or extended XYZ (see the module's column convention).

    Parameters
    ----------
    path : str or Path
    format : {"csv", "extxyz"}, optional
        Default: from the suffix (``.csv``; ``.xyz`` or ``.extxyz``).
    length_unit_m : float, optional
        Return lengths in units of this many metres (the file must declare its
        ``length_unit``). Default: the file's numbers as they are.
    check_overlap : bool
        Refuse overlapping bodies (exact test), naming the first pairs.

    Returns
    -------
    Arrangement
    """
    fmt = _format_of(path, format)
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(f"path: no such file {str(p)!r}", "path") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"path: cannot read {str(p)!r} as a text microstructure file ({exc})", "path") from (
            None
        )
    where = p.name
    if fmt == "csv":
        return _read_csv(text, where, length_unit_m, check_overlap)
    return _read_extxyz(text, where, length_unit_m, check_overlap)


def _columns(arr):
    cols = {"x": arr.positions[:, 0], "y": arr.positions[:, 1], "z": arr.positions[:, 2]}
    if arr.semi_axes is None:
        cols["radius"] = np.asarray(arr.radii)
    else:
        semi = np.asarray(arr.semi_axes)
        cols.update(a=semi[:, 0], b=semi[:, 1], c=semi[:, 2])
    if arr.rotations is not None:
        R = np.asarray(arr.rotations).reshape(-1, 9)
        cols.update({k: R[:, m] for m, k in enumerate(_ROT)})
    if arr.labels is not None:
        cols["population"] = np.asarray(arr.labels)
    if arr.groups is not None:
        cols["group"] = np.asarray(arr.groups)
    return cols


def _meta(arr, length_unit):
    meta = {}
    if length_unit is not None:
        _unit_factor(length_unit, "length_unit")
        meta["length_unit"] = length_unit
    if arr.region is not None:
        meta["region"] = arr.region
    if arr.sample_radius is not None:
        meta["sample_radius"] = repr(float(arr.sample_radius))
    if arr.edges is not None:
        meta["edges"] = " ".join(repr(float(v)) for v in arr.edges)
    if arr.box is not None:
        meta["box"] = " ".join(repr(float(v)) for v in arr.box)
    meta["description"] = arr.description.replace("\n", " ").replace('"', "'")
    return meta


def _text(v):
    return str(int(v)) if isinstance(v, (np.integer, int)) else repr(float(v))


def write_arrangement(path, arrangement, *, format=None, length_unit=None, overwrite=False):
    """Write an arrangement as CSV or extended XYZ; reading it back gives identical arrays.

    Numbers are written with full precision (``repr``); orientations as the rotation
    matrix ``r11 .. r33`` so nothing is lost.

    Parameters
    ----------
    path : str or Path
    arrangement : Arrangement
    format : {"csv", "extxyz"}, optional
        Default: from the suffix.
    length_unit : {"m", "mm", "um", "nm"}, optional
        Unit the numbers are in, recorded in the file (nothing is converted).
    overwrite : bool
        Replace an existing file (otherwise an error).
    """
    fmt = _format_of(path, format)
    p = Path(path)
    if p.exists() and not overwrite:
        raise InputError(f"path: {str(p)!r} exists; pass overwrite=True to replace it", "path")
    cols = _columns(arrangement)
    meta = _meta(arrangement, length_unit)
    names = list(cols)
    data = [cols[k] for k in names]
    n = arrangement.n_bodies
    out = io.StringIO()
    if fmt == "csv":
        for k, v in meta.items():
            out.write(f"# {k} = {v}\n")
        out.write(",".join(names) + "\n")
        for r in range(n):
            out.write(",".join(_text(col[r]) for col in data) + "\n")
    else:
        groups = [("pos", "R", 3)]
        groups.append(("radius", "R", 1) if "radius" in cols else ("semi_axes", "R", 3))
        if "r11" in cols:
            groups.append(("rotation", "R", 9))
        if "population" in cols:
            groups.append(("population", "I", 1))
        if "group" in cols:
            groups.append(("group", "I", 1))
        props = ":".join(f"{g}:{t}:{c}" for g, t, c in groups)
        order = [c for g, _, _ in groups for c in _GROUPS[g]]
        pairs = [f'{k}="{v}"' for k, v in meta.items()]
        if arrangement.box is not None:
            b = [repr(float(v)) for v in arrangement.box]
            pairs.append(f'Lattice="{b[0]} 0 0 0 {b[1]} 0 0 0 {b[2]}"')
        out.write(f"{n}\n")
        out.write(" ".join([f"Properties={props}", *pairs]) + "\n")
        data = [cols[k] for k in order]
        for r in range(n):
            out.write(" ".join(_text(col[r]) for col in data) + "\n")
    tmp = p.with_name(p.name + ".part")
    tmp.write_text(out.getvalue(), encoding="utf-8")
    tmp.replace(p)
    return p


def microstructure_format_markdown() -> str:
    """The column convention as a Markdown page (``docs/microstructure_files.md``)."""
    lines = __doc__.splitlines()
    rules = [k for k, line in enumerate(lines) if line.startswith("=====")]
    width = lines[rules[0]].index(" ")
    rows = []
    for line in lines[rules[1] + 1 : rules[2]]:
        left, right = line[:width].strip(), line[width:].strip()
        if left:
            rows.append([left, right])
        else:
            rows[-1][1] += " " + right
    table = ["| columns | meaning |", "|---|---|"] + [f"| {a} | {b} |" for a, b in rows]
    before = [line for line in lines[1 : rules[0]] if not set(line) <= {"-"} or not line]
    after = lines[rules[2] + 1 :]
    text = "\n".join(before).replace("Column convention", "## Column convention").strip()
    tail = "\n".join(after).strip()
    md = f"# Microstructure files (CSV and extended XYZ)\n\n{lines[0]}\n\n{text}\n\n" + "\n".join(table)
    return (md + f"\n\n{tail}\n").replace("``", "`")
