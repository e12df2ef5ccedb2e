from __future__ import annotations

import numbers
import tomllib
from dataclasses import dataclass
from pathlib import Path
from types import MappingProxyType

from .._validate import nearest
from ..errors import ConfigError


@dataclass(frozen=True)
class Key:
    """Declaration of one config key."""

    kind: str  # str, bool, int, float, length, field, vector, list[str], length3, directions
    default: object
    doc: str
    choices: tuple = ()
    minimum: float | None = None
    maximum: float | None = None
    required: bool = False


_NO = None
ARRANGEMENT_KINDS = ("random", "dense", "lattice", "cubic", "chain", "clustered", "field_chains", "file")
SPHERES_ONLY = ("lattice", "cubic", "chain", "clustered", "field_chains")
OBSERVABLE_NAMES = (
    "local_field",
    "interior_field",
    "total_moment",
    "energy",
    "forces",
    "torques",
    "surface_field",
    "effective_permittivity",
)

SECTIONS = {
    "run": {
        "name": Key("str", "run", "label of the run, used in summaries"),
        "output": Key(
            "str", "", "HDF5 file to write (relative to the working folder); empty: runs/<name>.h5"
        ),
    },
    "host": {
        "name": Key("str", "host", "label of the host material"),
        "eps": Key("float", _NO, "relative permittivity eps' of the host", minimum=1e-12, required=True),
        "eps_loss": Key("float", 0.0, "loss part eps'' >= 0 (eps = eps' - j eps'')", minimum=0.0),
        "model": Key(
            "str",
            "constant",
            "permittivity against frequency (used by `dipolearray spectrum`); eps is eps_inf for the "
            "relaxation and Drude models",
            choices=("constant", "debye", "cole_cole", "havriliak_negami", "drude"),
        ),
        "delta_eps": Key(
            "float",
            0.0,
            "relaxation strength eps_static - eps_inf (debye, cole_cole, havriliak_negami)",
            minimum=0.0,
        ),
        "tau": Key("time", _NO, "relaxation time (debye, cole_cole, havriliak_negami)", minimum=0.0),
        "alpha": Key(
            "float",
            _NO,
            "shape: Cole-Cole alpha in [0, 1); Havriliak-Negami alpha in (0, 1]",
            minimum=0.0,
            maximum=1.0,
        ),
        "beta": Key("float", 1.0, "Havriliak-Negami beta in (0, 1]", minimum=1e-6, maximum=1.0),
        "plasma_frequency": Key("frequency", _NO, "Drude plasma frequency omega_p / 2 pi", minimum=0.0),
        "damping": Key("frequency", "0 Hz", "Drude collision frequency gamma / 2 pi"),
        "conductivity": Key("conductivity", "0 S/m", "DC conductivity (adds -j sigma / (eps0 omega))"),
    },
    "population": {
        "name": Key("str", "filler", "label of the inclusion population"),
        "shape": Key("str", "sphere", "body shape", choices=("sphere", "spheroid", "ellipsoid")),
        "radius": Key("length", _NO, "sphere radius (shape = sphere)", minimum=0.0),
        "polar": Key("length", _NO, "semi-axis along the symmetry axis (shape = spheroid)", minimum=0.0),
        "equatorial": Key("length", _NO, "equatorial semi-axis (shape = spheroid)", minimum=0.0),
        "semi_axes": Key("length3", _NO, "three semi-axes a, b, c (shape = ellipsoid)"),
        "eps": Key("float", _NO, "relative permittivity eps' of the inclusion", required=True),
        "eps_loss": Key("float", 0.0, "loss part eps'' >= 0", minimum=0.0),
        "model": Key(
            "str",
            "constant",
            "permittivity against frequency (used by `dipolearray spectrum`); eps is eps_inf for the "
            "relaxation and Drude models",
            choices=("constant", "debye", "cole_cole", "havriliak_negami", "drude"),
        ),
        "delta_eps": Key(
            "float",
            0.0,
            "relaxation strength eps_static - eps_inf (debye, cole_cole, havriliak_negami)",
            minimum=0.0,
        ),
        "tau": Key("time", _NO, "relaxation time (debye, cole_cole, havriliak_negami)", minimum=0.0),
        "alpha": Key(
            "float",
            _NO,
            "shape: Cole-Cole alpha in [0, 1); Havriliak-Negami alpha in (0, 1]",
            minimum=0.0,
            maximum=1.0,
        ),
        "beta": Key("float", 1.0, "Havriliak-Negami beta in (0, 1]", minimum=1e-6, maximum=1.0),
        "plasma_frequency": Key("frequency", _NO, "Drude plasma frequency omega_p / 2 pi", minimum=0.0),
        "damping": Key("frequency", "0 Hz", "Drude collision frequency gamma / 2 pi"),
        "conductivity": Key("conductivity", "0 S/m", "DC conductivity (adds -j sigma / (eps0 omega))"),
        "fraction": Key(
            "float", 1.0, "share of the bodies in this population (normalised over populations)", minimum=0.0
        ),
        "orientation": Key(
            "str",
            "aligned",
            "orientation of non-spherical bodies: all along axis, isotropic, or nematic about axis",
            choices=("aligned", "random", "nematic"),
        ),
        "order_parameter": Key(
            "float",
            _NO,
            "nematic order parameter <P2> about axis (orientation = nematic)",
            minimum=-0.5,
            maximum=1.0,
        ),
        "axis": Key("vector", (0.0, 0.0, 1.0), "body symmetry axis when aligned; director when nematic"),
        "size_spread": Key(
            "float",
            0.0,
            "lognormal spread of sizes, std of ln(size) (random, dense)",
            minimum=0.0,
            maximum=1.5,
        ),
    },
    "arrangement": {
        "kind": Key(
            "str",
            "random",
            "generator: random sequential addition, dense packing, lattice, simple cubic sphere, straight "
            "chain, clustered fillers, field-induced chains, or a microstructure file",
            choices=ARRANGEMENT_KINDS,
        ),
        "n_bodies": Key(
            "int",
            1000,
            "number of bodies (random, dense, chain, clustered, field_chains)",
            minimum=1,
            maximum=200000,
        ),
        "volume_fraction": Key(
            "float",
            0.1,
            "filler volume fraction (random < 0.38, dense < 0.64, clustered, field_chains, lattice)",
            minimum=1e-6,
            maximum=0.74,
        ),
        "region": Key(
            "str",
            "sphere",
            "sample shape; slab for lattices only; periodic: a bulk box solved by Ewald summation "
            "(conducting boundary, bulk effective permittivity)",
            choices=("sphere", "cube", "slab", "periodic"),
        ),
        "seed": Key("int", 0, "random seed (random generators and orientations)", minimum=0),
        "equilibration_sweeps": Key(
            "int", 0, "hard-body Monte Carlo sweeps after a dense packing (dense)", minimum=0, maximum=10**6
        ),
        "lattice": Key("str", "fcc", "lattice kind (lattice)", choices=("sc", "bcc", "fcc", "hcp", "bct")),
        "spacing": Key(
            "length", _NO, "lattice constant (cubic; lattice instead of volume_fraction)", minimum=0.0
        ),
        "size": Key(
            "length", _NO, "sample radius, cube edge or slab thickness (lattice, not periodic)", minimum=0.0
        ),
        "cells": Key("int", 4, "conventional cells per axis (lattice, periodic)", minimum=1, maximum=200),
        "cut_radius": Key(
            "length", _NO, "radius of the spherical sample cut from the lattice (cubic)", minimum=0.0
        ),
        "gap": Key(
            "length",
            "0 m",
            "surface gap between neighbours (chain, field_chains; sticking gap for clustered)",
        ),
        "axis": Key("vector", (0.0, 0.0, 1.0), "chain direction (chain, field_chains)"),
        "cluster_kind": Key(
            "str", "fractal", "cluster structure (clustered)", choices=("fractal", "compact")
        ),
        "cluster_size": Key("int", 20, "bodies per cluster (clustered)", minimum=2, maximum=100000),
        "fraction_clustered": Key(
            "float", 0.5, "share of bodies in clusters (clustered)", minimum=0.0, maximum=1.0
        ),
        "local_fraction": Key(
            "float", 0.55, "packing fraction inside a compact cluster (clustered)", minimum=0.01, maximum=0.62
        ),
        "mean_length": Key("float", 10.0, "mean bodies per chain (field_chains)", minimum=1.0),
        "length_distribution": Key(
            "str",
            "fixed",
            "chain length distribution (field_chains)",
            choices=("fixed", "geometric", "poisson"),
        ),
        "misalignment": Key(
            "float",
            0.0,
            "standard deviation of chain tilt, degrees (field_chains)",
            minimum=0.0,
            maximum=90.0,
        ),
        "layout": Key(
            "str",
            "chains",
            "single chains, sheets or columns (field_chains)",
            choices=("chains", "sheets", "columns"),
        ),
        "spanning": Key(
            "bool", False, "chains close on themselves across a periodic box (field_chains, periodic)"
        ),
        "chains_per_group": Key(
            "int", 1, "chains per sheet or column (field_chains)", minimum=1, maximum=10000
        ),
        "path": Key("str", "", "CSV or extended XYZ microstructure, relative to the config (file)"),
    },
    "field": {
        "strength": Key("field", "1 V/um", "applied field strength |E0|"),
        "directions": Key("directions", "all", "'all' for x, y and z (full tensor) or a list of vectors"),
    },
    "solver": {
        "method": Key("str", "auto", "solver", choices=("auto", "fixed_point", "cocg", "gmres", "direct")),
        "rtol": Key("float", 1e-8, "relative residual tolerance", minimum=0.0, maximum=1.0),
        "atol": Key("float", 0.0, "absolute residual tolerance", minimum=0.0),
        "maxiter": Key("int", 1000, "iteration limit", minimum=1, maximum=10**6),
        "relaxation": Key("float", 1.0, "fixed-point relaxation w", minimum=1e-6, maximum=2.0),
        "model": Key(
            "str",
            "dipole",
            "physical model: 'dipole' (point dipoles; warns near contact) or 'multipole' (spheres carry "
            "induced multipoles where gaps need them; periodic boxes by lattice sums up to order 30)",
            choices=("dipole", "multipole"),
        ),
        "multipole_order": Key(
            "int",
            0,
            "multipole order of every near pair; 0: chosen per pair for model_accuracy",
            minimum=0,
            maximum=200,
        ),
        "model_accuracy": Key(
            "float",
            1e-6,
            "relative accuracy wanted on the dipole moments (multipole model)",
            minimum=1e-14,
            maximum=0.5,
        ),
        "max_order": Key(
            "int", 40, "largest multipole order the automatic choice may use", minimum=1, maximum=200
        ),
    },
    "sweep": {
        "parameter": Key(
            "str",
            "",
            "dotted config key to vary, e.g. 'arrangement.volume_fraction' or 'population.0.eps'; "
            "empty: an ensemble of realizations of the config as written",
        ),
        "values": Key("values", (), "values of the parameter, one state point each (numbers or quantities)"),
        "realizations": Key("int", 4, "random realizations per state point", minimum=1, maximum=100000),
        "seed": Key("int", 0, "root seed; each realization's arrangement seed derives from it", minimum=0),
        "workers": Key(
            "int",
            0,
            "0: run in this process; N: a local Dask cluster of N worker processes (ignored with scheduler)",
            minimum=0,
            maximum=4096,
        ),
        "scheduler": Key("str", "", "address of a running Dask scheduler, e.g. 'tcp://10.0.0.5:8786'"),
        "output": Key("str", "", "sweep HDF5 file; empty: runs/<name>-sweep.h5"),
    },
    "frequency": {
        "min": Key("frequency", "1 Hz", "lowest frequency of the grid"),
        "max": Key("frequency", "1 GHz", "highest frequency of the grid"),
        "points": Key("int", 200, "frequencies in the grid", minimum=2, maximum=10**6),
        "spacing": Key("str", "log", "grid spacing", choices=("log", "linear")),
        "method": Key(
            "str",
            "auto",
            "spectral decomposition: dense eigen (N <= 500 under auto) or block Lanczos",
            choices=("auto", "eigen", "lanczos"),
        ),
        "tol": Key(
            "float",
            1e-10,
            "Lanczos convergence tolerance (relative change of the response)",
            minimum=1e-15,
            maximum=1e-2,
        ),
        "output": Key("str", "", "spectrum HDF5 file; empty: runs/<name>-spectrum.h5"),
    },
    "output": {
        "observables": Key(
            "list[str]",
            ("local_field", "interior_field", "total_moment", "energy", "forces", "effective_permittivity"),
            "observables to compute and store",
            choices=OBSERVABLE_NAMES,
        ),
    },
}

_LIST_SECTIONS = {"population"}
_REQUIRED_SECTIONS = ("host", "population")
_UNITS = {
    "length": ("m", "[length]"),
    "field": ("V/m", "[mass] * [length] / [current] / [time] ** 3"),
    "time": ("s", "[time]"),
    "frequency": ("Hz", "1 / [time]"),
    "conductivity": ("S/m", "conductance / length"),
}
_EXAMPLES = {
    "length": "'0.5 um'",
    "field": "'1 kV/mm'",
    "time": "'10 us'",
    "frequency": "'1 MHz'",
    "conductivity": "'1e-6 S/m'",
}
_UREG = None


def _ureg():
    global _UREG
    if _UREG is None:
        import pint

        _UREG = pint.UnitRegistry()
    return _UREG


def quantity(text, kind: str, where: str) -> float:
    """Parse ``"0.25 um"`` / ``"1 kV/mm"`` into SI (m or V/m), naming ``where`` on error."""
    unit, _dim = _UNITS[kind]
    example = _EXAMPLES[kind]
    if isinstance(text, bool) or isinstance(text, numbers.Number):
        raise ConfigError(f"{where}: give a unit with the number, e.g. {example} (got {text!r})", where)
    if not isinstance(text, str):
        raise ConfigError(f"{where}: expected a quantity string like {example}, got {text!r}", where)
    import pint

    try:
        q = _ureg().Quantity(text)
        value = float(q.to(unit).magnitude)
    except pint.errors.DimensionalityError:
        raise ConfigError(
            f"{where}: {text!r} is not a {kind} (expected units like {example})", where
        ) from None
    except Exception:
        raise ConfigError(f"{where}: cannot read {text!r} as a quantity like {example}", where) from None
    if value != value or value in (float("inf"), float("-inf")):
        raise ConfigError(f"{where}: {text!r} is not finite", where)
    return value


def _check_number(value, key: Key, where: str):
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise ConfigError(f"{where}: expected a number, got {value!r}", where)
    v = float(value)
    if v != v or abs(v) == float("inf"):
        raise ConfigError(f"{where}: expected a finite number, got {value!r}", where)
    if key.minimum is not None and v < key.minimum:
        raise ConfigError(f"{where}: {value!r} is below the allowed minimum {key.minimum}", where)
    if key.maximum is not None and v > key.maximum:
        raise ConfigError(f"{where}: {value!r} is above the allowed maximum {key.maximum}", where)
    return v


def _check_value(value, key: Key, where: str):
    k = key.kind
    if k == "str":
        if not isinstance(value, str):
            raise ConfigError(f"{where}: expected a string, got {value!r}", where)
        if key.choices and value not in key.choices:
            hint = nearest(value, key.choices)
            extra = f"; did you mean {hint!r}?" if hint else ""
            raise ConfigError(
                f"{where}: {value!r} is not allowed (choose from {', '.join(key.choices)}){extra}", where
            )
        return value
    if k == "bool":
        if not isinstance(value, bool):
            raise ConfigError(f"{where}: expected true or false, got {value!r}", where)
        return value
    if k == "int":
        if isinstance(value, bool) or not isinstance(value, int):
            raise ConfigError(f"{where}: expected an integer, got {value!r}", where)
        _check_number(value, key, where)
        return int(value)
    if k == "float":
        return _check_number(value, key, where)
    if k in ("length", "field", "time", "frequency", "conductivity"):
        v = quantity(value, k, where)
        if key.minimum is not None and v <= key.minimum and key.minimum == 0.0 and k != "field":
            raise ConfigError(f"{where}: must be positive, got {value!r}", where)
        if v < 0:
            raise ConfigError(f"{where}: must not be negative, got {value!r}", where)
        return v
    if k == "length3":
        if not isinstance(value, list) or len(value) != 3:
            raise ConfigError(
                f"{where}: expected three lengths like ['1 um', '1 um', '2 um'], got {value!r}", where
            )
        out = tuple(quantity(v, "length", f"{where}[{i}]") for i, v in enumerate(value))
        if min(out) <= 0:
            raise ConfigError(f"{where}: semi-axes must be positive, got {value!r}", where)
        return out
    if k == "vector":
        if not isinstance(value, list) or len(value) != 3:
            raise ConfigError(f"{where}: expected three numbers like [0, 0, 1], got {value!r}", where)
        vec = tuple(_check_number(v, Key("float", 0, ""), f"{where}[{i}]") for i, v in enumerate(value))
        if not any(vec):
            raise ConfigError(f"{where}: must be a non-zero vector", where)
        return vec
    if k == "directions":
        if value == "all":
            return "all"
        if isinstance(value, list) and value and all(isinstance(v, list) for v in value):
            return tuple(
                _check_value(v, Key("vector", None, ""), f"{where}[{i}]") for i, v in enumerate(value)
            )
        raise ConfigError(
            f"{where}: expected 'all' or a list of vectors like [[0, 0, 1]], got {value!r}", where
        )
    if k == "values":
        ok = isinstance(value, list) and all(
            isinstance(v, (str, numbers.Real)) and not isinstance(v, bool) for v in value
        )
        if not ok:
            raise ConfigError(
                f"{where}: expected a list of numbers or quantity strings, got {value!r}", where
            )
        return tuple(value)
    if k == "list[str]":
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise ConfigError(f"{where}: expected a list of names, got {value!r}", where)
        for i, v in enumerate(value):
            if v not in key.choices:
                hint = nearest(v, key.choices)
                extra = f"; did you mean {hint!r}?" if hint else ""
                raise ConfigError(
                    f"{where}[{i}]: {v!r} is not an observable (choose from {', '.join(key.choices)}){extra}",
                    f"{where}[{i}]",
                )
        return tuple(value)
    raise AssertionError(k)  # pragma: no cover - declaration error


def _section(raw, name: str, where: str) -> MappingProxyType:
    decl = SECTIONS[name]
    if not isinstance(raw, dict):
        raise ConfigError(f"{where}: expected a table, got {raw!r}", where)
    for key in raw:
        if key not in decl:
            hint = nearest(key, decl)
            extra = f"; did you mean '{where}.{hint}'?" if hint else f"; valid keys: {', '.join(decl)}"
            raise ConfigError(f"{where}.{key}: unknown key{extra}", f"{where}.{key}")
    out = {}
    for key, k in decl.items():
        if key in raw:
            out[key] = _check_value(raw[key], k, f"{where}.{key}")
        elif k.required:
            raise ConfigError(f"{where}.{key}: required key is missing ({k.doc})", f"{where}.{key}")
        elif k.default is None:
            out[key] = None
        elif k.kind in ("length", "field", "time", "frequency", "conductivity") and isinstance(
            k.default, str
        ):
            out[key] = quantity(k.default, k.kind, f"{where}.{key}")
        else:
            out[key] = k.default
    return MappingProxyType(out)


@dataclass(frozen=True)
class RunConfig:
    """A checked config: one read-only mapping per section (SI units for quantities)."""

    run: MappingProxyType
    host: MappingProxyType
    populations: tuple
    arrangement: MappingProxyType
    field: MappingProxyType
    solver: MappingProxyType
    output: MappingProxyType
    frequency: MappingProxyType
    text: str
    source: str
    sweep: MappingProxyType | None = None
    overrides: tuple = ()

    @property
    def recorded_text(self) -> str:
        """The config text with any dotted-key overrides appended as comments (what is stored)."""
        if not self.overrides:
            return self.text
        lines = [f"# override: {k} = {v!r}" for k, v in self.overrides]
        return self.text.rstrip("\n") + "\n\n# applied on top of the text above:\n" + "\n".join(lines) + "\n"

    @property
    def sweep_points(self) -> list:
        """State points of the ``[sweep]`` section: ``[{parameter: value}, ...]``, or ``[{}]``."""
        if self.sweep is None or not self.sweep["parameter"]:
            return [{}]
        return [{self.sweep["parameter"]: v} for v in self.sweep["values"]]


def apply_overrides(raw: dict, overrides: dict) -> dict:
    """A copy of a parsed TOML mapping with dotted keys replaced.

    ``{"arrangement.volume_fraction": 0.2, "population.0.eps": 30.0}`` sets those keys
    (``population.0`` is the first ``[[population]]``); anything else in the mapping is
    kept. Unknown sections or keys are caught later by the usual checks.
    """
    import copy

    out = copy.deepcopy(raw)
    for dotted, value in overrides.items():
        parts = str(dotted).split(".")
        node = out
        for part in parts[:-1]:
            if isinstance(node, list):
                try:
                    node = node[int(part)]
                except (ValueError, IndexError):
                    raise ConfigError(f"{dotted}: no entry {part!r} there", str(dotted)) from None
            else:
                nxt = node.setdefault(part, {})
                if part == "population" and isinstance(nxt, dict):
                    nxt = node[part] = [nxt]
                node = nxt
        if isinstance(node, list):
            raise ConfigError(f"{dotted}: name a population by index, e.g. population.0.eps", str(dotted))
        node[parts[-1]] = value
    return out


def parse_config(text: str, source: str = "<config>", overrides=None, *, check_sweep=True) -> RunConfig:
    """Check TOML ``text`` (with optional dotted-key ``overrides``) and return a :class:`RunConfig`.

    With ``check_sweep`` (default) every state point of a ``[sweep]`` section is
    checked too, so a bad sweep value fails here rather than mid-sweep.

    Raises
    ------
    ConfigError
        Naming the dotted key, what was given and what is allowed.
    """
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{source}: not valid TOML ({exc})", "toml") from None
    if overrides:
        raw = apply_overrides(raw, overrides)
    for top in raw:
        if top not in SECTIONS:
            hint = nearest(top, SECTIONS)
            extra = f"; did you mean '{hint}'?" if hint else f"; valid sections: {', '.join(SECTIONS)}"
            raise ConfigError(f"{top}: unknown section{extra}", top)
    for name in _REQUIRED_SECTIONS:
        if name not in raw:
            label = "[[population]]" if name == "population" else f"[{name}]"
            raise ConfigError(f"{name}: required section {label} is missing", name)
    pops_raw = raw["population"]
    if isinstance(pops_raw, dict):
        pops_raw = [pops_raw]
    if not isinstance(pops_raw, list) or not pops_raw:
        raise ConfigError("population: expected one or more [[population]] tables", "population")
    pops = tuple(_section(p, "population", f"population[{i}]") for i, p in enumerate(pops_raw))
    for i, p in enumerate(pops):
        need = {"sphere": ("radius",), "spheroid": ("polar", "equatorial"), "ellipsoid": ("semi_axes",)}[
            p["shape"]
        ]
        for key in need:
            if p[key] is None:
                raise ConfigError(
                    f"population[{i}].{key}: required for shape = {p['shape']!r}", f"population[{i}].{key}"
                )
    if sum(p["fraction"] for p in pops) <= 0:
        raise ConfigError("population[0].fraction: fractions must not all be zero", "population[0].fraction")
    sections = {
        n: _section(raw.get(n, {}), n, n)
        for n in ("run", "host", "arrangement", "field", "solver", "output", "frequency")
    }
    arr = sections["arrangement"]
    kind = arr["kind"]

    def need(key, why):
        if arr[key] is None or arr[key] == "":
            raise ConfigError(
                f"arrangement.{key}: required for kind = {kind!r} ({why})", f"arrangement.{key}"
            )

    if kind == "cubic":
        need("spacing", "lattice constant")
        need("cut_radius", "sample radius")
    if kind == "lattice" and arr["region"] != "periodic":
        need("size", "sample size")
    if kind == "file":
        need("path", "the microstructure file")
    if kind in SPHERES_ONLY:
        if len(pops) > 1:
            raise ConfigError(
                f"population: kind = {kind!r} takes one population, got {len(pops)}", "population"
            )
        if pops[0]["shape"] != "sphere":
            raise ConfigError(
                f"population[0].shape: kind = {kind!r} places spheres, got {pops[0]['shape']!r}",
                "population[0].shape",
            )
    if arr["region"] == "slab" and kind != "lattice":
        raise ConfigError("arrangement.region: 'slab' is for kind = 'lattice' only", "arrangement.region")
    if arr["layout"] == "chains" and arr["chains_per_group"] != 1:
        raise ConfigError(
            "arrangement.chains_per_group: only layout 'sheets' or 'columns' groups chains",
            "arrangement.chains_per_group",
        )
    for i, p in enumerate(pops):
        if p["orientation"] == "nematic" and p["order_parameter"] is None:
            raise ConfigError(
                f"population[{i}].order_parameter: required for orientation = 'nematic'",
                f"population[{i}].order_parameter",
            )
        if p["size_spread"] and kind not in ("random", "dense"):
            raise ConfigError(
                f"population[{i}].size_spread: only kind 'random' or 'dense' spreads sizes",
                f"population[{i}].size_spread",
            )
    if arr["gap"] is not None and arr["gap"] < 0:
        raise ConfigError("arrangement.gap: must be >= 0", "arrangement.gap")
    for where, phase in [("host", sections["host"])] + [(f"population[{i}]", p) for i, p in enumerate(pops)]:
        _check_model(phase, where)
    fr = sections["frequency"]
    if fr["max"] <= fr["min"]:
        raise ConfigError(f"frequency.max: must exceed frequency.min ({fr['min']:g} Hz)", "frequency.max")
    if sections["solver"]["rtol"] == 0 and sections["solver"]["atol"] == 0:
        raise ConfigError("solver.rtol: rtol and atol cannot both be zero", "solver.rtol")
    if (
        sections["solver"]["model"] == "multipole"
        and arr["region"] == "periodic"
        and sections["solver"]["multipole_order"] > 30
    ):
        raise ConfigError(
            f"solver.multipole_order: periodic multipoles go up to order 30, got "
            f"{sections['solver']['multipole_order']}",
            "solver.multipole_order",
        )
    sweep = None
    if "sweep" in raw:
        sweep = _section(raw["sweep"], "sweep", "sweep")
        if check_sweep:
            _check_sweep(sweep, text, source, overrides, sections, len(pops))
    return RunConfig(
        populations=pops,
        text=text,
        source=source,
        sweep=sweep,
        overrides=tuple((str(k), v) for k, v in (overrides or {}).items()),
        **sections,
    )


def _check_model(phase, where):
    model = phase["model"]
    need = {
        "debye": ("tau",),
        "cole_cole": ("tau", "alpha"),
        "havriliak_negami": ("tau", "alpha"),
        "drude": ("plasma_frequency",),
    }.get(model, ())
    for key in need:
        if phase[key] is None:
            raise ConfigError(f"{where}.{key}: required for model = {model!r}", f"{where}.{key}")
    if model == "cole_cole" and phase["alpha"] >= 1.0:
        raise ConfigError(f"{where}.alpha: Cole-Cole alpha must be < 1", f"{where}.alpha")
    if model == "havriliak_negami" and phase["alpha"] <= 0.0:
        raise ConfigError(f"{where}.alpha: Havriliak-Negami alpha must be > 0", f"{where}.alpha")
    if model in ("constant", "drude") and phase["delta_eps"]:
        raise ConfigError(f"{where}.delta_eps: only relaxation models take delta_eps", f"{where}.delta_eps")


def _check_sweep(sweep, text, source, overrides, sections, n_pops):
    param = sweep["parameter"]
    if sections["field"]["directions"] != "all":
        raise ConfigError(
            "field.directions: a sweep needs 'all' (it reports the full effective tensor)", "field.directions"
        )
    if not param:
        if sweep["values"]:
            raise ConfigError("sweep.values: given without sweep.parameter", "sweep.values")
        return
    parts = param.split(".")
    if parts[0] == "population":
        if len(parts) != 3 or not parts[1].isdigit():
            raise ConfigError(
                f"sweep.parameter: {param!r}: name a population by index, e.g. 'population.0.eps'",
                "sweep.parameter",
            )
        if int(parts[1]) >= n_pops:
            raise ConfigError(
                f"sweep.parameter: {param!r}: there are {n_pops} population(s), indices from 0",
                "sweep.parameter",
            )
        section, key = "population", parts[2]
    elif len(parts) == 2:
        section, key = parts
    else:
        raise ConfigError(
            f"sweep.parameter: {param!r}: expected 'section.key' such as 'arrangement.volume_fraction'",
            "sweep.parameter",
        )
    if section in ("sweep", "run", "output") or section not in SECTIONS:
        allowed = [s for s in SECTIONS if s not in ("sweep", "run", "output")]
        raise ConfigError(
            f"sweep.parameter: {param!r}: cannot sweep section {section!r} (allowed: {', '.join(allowed)})",
            "sweep.parameter",
        )
    if key not in SECTIONS[section]:
        hint = nearest(key, SECTIONS[section])
        extra = f"; did you mean '{section}.{hint}'?" if hint else ""
        raise ConfigError(f"sweep.parameter: {param!r}: unknown key{extra}", "sweep.parameter")
    if (section, key) == ("arrangement", "seed"):
        raise ConfigError(
            "sweep.parameter: the sweep sets arrangement.seed itself (use sweep.realizations)",
            "sweep.parameter",
        )
    if not sweep["values"]:
        raise ConfigError(
            "sweep.values: required with sweep.parameter (one value per state point)", "sweep.values"
        )
    for i, value in enumerate(sweep["values"]):
        over = dict(overrides or {})
        over[param] = value
        try:
            parse_config(text, source, overrides=over, check_sweep=False)
        except ConfigError as exc:
            raise ConfigError(f"sweep.values[{i}] ({value!r} for {param}): {exc}", "sweep.values") from None


def load_config(path, overrides=None) -> RunConfig:
    """Read and check a TOML config file (with optional dotted-key ``overrides``)."""
    p = Path(path)
    if not p.is_file():
        raise ConfigError(f"config: no such file {p}", "config")
    try:
        text = p.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ConfigError(f"config: cannot read {p} ({exc})", "config") from None
    return parse_config(text, source=str(p), overrides=overrides)


def parse_assignment(text: str):
    """``"arrangement.n_bodies=200"`` -> ``("arrangement.n_bodies", 200)``; value read as TOML, else text."""
    if "=" not in text:
        raise ConfigError(f"--set: expected KEY=VALUE, got {text!r}", "--set")
    key, value = (t.strip() for t in text.split("=", 1))
    if not key:
        raise ConfigError(f"--set: missing key in {text!r}", "--set")
    try:
        return key, tomllib.loads(f"v = {value}")["v"]
    except tomllib.TOMLDecodeError:
        return key, value


def config_markdown() -> str:
    """Render :data:`SECTIONS` as the reference table of ``docs/config.md``."""
    lines = [
        "# Config reference",
        "",
        "Generated from `dipolearray/config/_schema.py` (`tests/config/test_config.py` checks",
        "that this page matches). Lengths and fields are strings with an explicit unit",
        "(`'0.5 um'`, `'20 nm'`, `'1 kV/mm'`, `'2 V/um'`, `'10 us'`, `'1 MHz'`, `'1e-6 S/m'`);",
        "permittivities are relative and",
        "follow `eps = eps' - j eps''` with `eps_loss = eps'' >= 0`.",
        "",
    ]
    for name, decl in SECTIONS.items():
        head = f"[[{name}]]" if name in _LIST_SECTIONS else f"[{name}]"
        lines += [f"## `{head}`", "", "| key | kind | default | allowed | meaning |", "|---|---|---|---|---|"]
        for key, k in decl.items():
            if k.required:
                default = "required"
            elif k.default is None:
                default = "-"
            else:
                default = f"`{k.default!r}`"
            allowed = []
            if k.choices:
                allowed.append(", ".join(f"`{c}`" for c in k.choices))
            if k.minimum is not None:
                allowed.append(f">= {k.minimum:g}")
            if k.maximum is not None:
                allowed.append(f"<= {k.maximum:g}")
            unit = {
                "length": "length",
                "field": "field",
                "length3": "3 lengths",
                "values": "list",
                "time": "time",
                "frequency": "frequency",
                "conductivity": "conductivity",
            }.get(k.kind, k.kind)
            lines.append(f"| `{key}` | {unit} | {default} | {'; '.join(allowed)} | {k.doc} |")
        lines.append("")
    return "\n".join(lines)
