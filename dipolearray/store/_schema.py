"""The single declaration of the HDF5 result layout."""

from __future__ import annotations

from dataclasses import dataclass

FORMAT_NAME = "dipolearray.result"
SCHEMA_VERSION = 2


@dataclass(frozen=True)
class Entry:
    """One group, dataset or attribute of the layout."""

    path: str
    kind: str  # "group", "dataset" or "attr" (path "group@name")
    dtype: str
    shape: str
    unit: str
    description: str
    required: bool = True


SCHEMA = (
    Entry("/", "group", "", "", "", "file root"),
    Entry("/@format", "attr", "str", "", "", f"always {FORMAT_NAME!r}"),
    Entry("/@schema_version", "attr", "int", "", "", "layout version; readers reject newer ones"),
    Entry("/@package_version", "attr", "str", "", "", "dipolearray version that wrote the file"),
    Entry("/@created_utc", "attr", "str", "", "", "ISO 8601 time of writing"),
    Entry(
        "/@convention",
        "attr",
        "str",
        "",
        "",
        "permittivity sign convention and unit system (text)",
    ),
    Entry("/scene", "group", "", "", "", "the solved scene"),
    Entry("/scene@boundary", "attr", "str", "", "", "'open' or 'periodic'"),
    Entry(
        "/scene@box",
        "attr",
        "float64",
        "(3,)",
        "length",
        "periodic box edges (NaN for open; since version 2)",
    ),
    Entry("/scene@host_name", "attr", "str", "", "", "host material label"),
    Entry("/scene@eps_host", "attr", "complex128", "", "1", "host relative permittivity"),
    Entry("/scene@sample_radius", "attr", "float64", "", "length", "sample radius (NaN if unset)"),
    Entry(
        "/scene@length_unit_m", "attr", "float64", "", "m", "SI value of the reduced length (NaN if unset)"
    ),
    Entry("/scene@field_V_per_m", "attr", "float64", "", "V/m", "applied field strength (NaN if unset)"),
    Entry("/scene/positions", "dataset", "float64", "(N, 3)", "length", "body centres"),
    Entry("/scene/population_index", "dataset", "int64", "(N,)", "1", "population of each body"),
    Entry("/scene/scale", "dataset", "float64", "(N,)", "1", "size multiplier of each body"),
    Entry("/scene/rotations", "dataset", "float64", "(N, 3, 3)", "1", "body axes (columns) in lab frame"),
    Entry("/scene/field", "dataset", "float64", "(K, 3)", "field", "applied field vectors"),
    Entry("/scene/populations", "group", "", "", "", "one subgroup '0', '1', ... per population"),
    Entry("/scene/populations/<i>@name", "attr", "str", "", "", "population label"),
    Entry("/scene/populations/<i>@shape", "attr", "str", "", "", "'sphere', 'spheroid' or 'ellipsoid'"),
    Entry("/scene/populations/<i>@semi_axes", "attr", "float64", "(3,)", "length", "reference semi-axes"),
    Entry("/scene/populations/<i>@material_name", "attr", "str", "", "", "material label"),
    Entry("/scene/populations/<i>@eps", "attr", "complex128", "", "1", "inclusion relative permittivity"),
    Entry("/solution", "group", "", "", "", "the solver record"),
    Entry("/solution@converged", "attr", "bool", "", "", "every right-hand side met the tolerance"),
    Entry("/solution@reason", "attr", "str", "", "", "why the solver stopped"),
    Entry("/solution@method", "attr", "str", "", "", "method used"),
    Entry("/solution@method_reason", "attr", "str", "", "", "why it was used"),
    Entry("/solution@backend", "attr", "str", "", "", "interaction operator backend"),
    Entry("/solution@iterations", "attr", "int", "", "", "iterations performed"),
    Entry("/solution@n_applies", "attr", "int", "", "", "single right-hand-side operator applies"),
    Entry(
        "/solution@spectral_radius",
        "attr",
        "float64",
        "",
        "1",
        "fixed-point spectral radius estimate (NaN if none)",
    ),
    Entry("/solution@wall_s", "attr", "float64", "", "s", "wall time of the solve"),
    Entry("/solution@rtol", "attr", "float64", "", "1", "relative tolerance asked for"),
    Entry("/solution@atol", "attr", "float64", "", "1", "absolute tolerance asked for"),
    Entry(
        "/solution@model",
        "attr",
        "str",
        "",
        "",
        "'dipole' (point dipoles) or 'multipole' (spheres to order L)",
    ),
    Entry(
        "/solution@model_error",
        "attr",
        "float64",
        "",
        "1",
        "estimated relative model error of the dipole moments: dipole model, the closest pair's two-sphere "
        "estimate; multipole model, the larger of the refined-solve change and the far-field bound (NaN if "
        "none)",
    ),
    Entry(
        "/solution@closest_gap",
        "attr",
        "float64",
        "",
        "1",
        "smallest surface gap between spheres over the smaller radius (NaN if fewer than two spheres)",
    ),
    Entry(
        "/solution/orders",
        "dataset",
        "int64",
        "(N,)",
        "1",
        "multipole order carried by each body (multipole model only)",
        required=False,
    ),
    Entry(
        "/solution/multipoles",
        "dataset",
        "float64 or complex128",
        "(N, M, K)",
        "1",
        "induced-potential coefficients, real Racah solid harmonics, reduced units: degree l in "
        "4 pi eps0 eps_h a^(l+2) |E0| (a the reference length); the first three are the dipole (multipole "
        "model only)",
        required=False,
    ),
    Entry(
        "/solution/moments",
        "dataset",
        "float64 or complex128",
        "(N, 3, K)",
        "moment",
        "self-consistent dipole moments",
    ),
    Entry(
        "/solution/residual_history", "dataset", "float64", "(n, K)", "1", "relative residual per iteration"
    ),
    Entry("/solution/residual", "dataset", "float64", "(K,)", "1", "true final relative residual"),
    Entry("/observables", "group", "", "", "", "observables asked for, one dataset each (see OBSERVABLES)"),
    Entry("/config", "dataset", "str", "()", "", "text of the config that produced the run", required=False),
)

#: Attributes every dataset carrying a physical quantity has.
DATASET_UNIT_ATTRS = ("unit", "si_unit", "si_factor")

REDUCED_UNITS = {
    "1": "1",
    "dimensionless": "1",
    "length": "reference length l",
    "field": "|E0|",
    "moment": "4 pi eps0 eps_h l^3 |E0|",
    "force": "4 pi eps0 eps_h' l^2 |E0|^2",
    "energy": "4 pi eps0 eps_h' l^3 |E0|^2",
    "torque": "4 pi eps0 eps_h' l^3 |E0|^2",
}

CONVENTION = (
    "relative permittivity eps = eps' - 1j*eps'' with eps'' >= 0 for loss (exp(+j omega t)); "
    "values in reduced units: lengths in l (scene@length_unit_m), fields in |E0| "
    "(scene@field_V_per_m), moments in 4 pi eps0 eps_h l^3 |E0|; each dataset's si_factor "
    "converts to SI; complex moments are phasors of peak amplitude, forces/torques/energies "
    "then cycle averages"
)


SWEEP_FORMAT_NAME = "dipolearray-sweep"
SWEEP_SCHEMA_VERSION = 1

#: Layout of a sweep file (one group per state point and realization).
SWEEP_SCHEMA = (
    Entry("/", "group", "", "", "", "file root"),
    Entry("/@format", "attr", "str", "", "", f"always {SWEEP_FORMAT_NAME!r}"),
    Entry("/@schema_version", "attr", "int", "", "", "sweep layout version"),
    Entry("/@package_version", "attr", "str", "", "", "dipolearray version that created the file"),
    Entry("/@convention", "attr", "str", "", "", "permittivity sign convention and units (text)"),
    Entry("/@points_json", "attr", "str", "", "", "the list of state points, JSON with sorted keys"),
    Entry("/@description", "attr", "str", "", "", "free text; config sweeps: JSON with the overrides"),
    Entry("/config", "dataset", "str", "()", "", "config text of a config sweep", required=False),
    Entry("/points", "group", "", "", "", "one group per state point"),
    Entry("/points/p<i>", "group", "", "", "", "state point i (four digits, from 0000)"),
    Entry("/points/p<i>@point_json", "attr", "str", "", "", "that state point, JSON"),
    Entry("/points/p<i>/r<r>", "group", "", "", "", "realization r of point i (four digits)"),
    Entry(
        "/points/p<i>/r<r>/eps_tensor",
        "dataset",
        "complex128",
        "(3, 3)",
        "1",
        "effective permittivity tensor (relative; bulk for periodic scenes, spherical sample for open)",
    ),
    Entry(
        "/points/p<i>/r<r>@seed",
        "attr",
        "int",
        "",
        "",
        "arrangement seed (from sweep seed, point, realization)",
    ),
    Entry("/points/p<i>/r<r>@n_bodies", "attr", "int", "", "", "bodies in the realization"),
    Entry("/points/p<i>/r<r>@volume_fraction", "attr", "float64", "", "1", "realized filler fraction"),
    Entry("/points/p<i>/r<r>@iterations", "attr", "int", "", "", "solver iterations"),
    Entry("/points/p<i>/r<r>@converged", "attr", "bool", "", "", "the solve met its tolerance"),
    Entry("/points/p<i>/r<r>@method", "attr", "str", "", "", "solver method used"),
    Entry("/points/p<i>/r<r>@wall_s", "attr", "float64", "", "s", "wall time of build and solve"),
    Entry(
        "/points/p<i>/r<r>@enhancement_surface_p99",
        "attr",
        "float64",
        "",
        "1",
        "99th percentile of the host surface field |E|/|E0|",
        required=False,
    ),
    Entry(
        "/points/p<i>/r<r>@enhancement_surface_max",
        "attr",
        "float64",
        "",
        "1",
        "largest host surface field |E|/|E0|",
        required=False,
    ),
    Entry(
        "/points/p<i>/r<r>@enhancement_local_max",
        "attr",
        "float64",
        "",
        "1",
        "largest local (exciting) field |E|/|E0|",
        required=False,
    ),
)


SPECTRUM_FORMAT_NAME = "dipolearray-spectrum"
SPECTRUM_SCHEMA_VERSION = 1

#: Layout of a spectrum file (spectral representation plus the response over frequency).
SPECTRUM_SCHEMA = (
    Entry("/", "group", "", "", "", "file root"),
    Entry("/@format", "attr", "str", "", "", f"always {SPECTRUM_FORMAT_NAME!r}"),
    Entry("/@schema_version", "attr", "int", "", "", "spectrum layout version"),
    Entry("/@package_version", "attr", "str", "", "", "dipolearray version that wrote the file"),
    Entry("/@created_utc", "attr", "str", "", "", "ISO 8601 time of writing"),
    Entry("/@convention", "attr", "str", "", "", "permittivity sign convention and units (text)"),
    Entry("/scene", "group", "", "", "", "the arrangement (geometry only)"),
    Entry("/scene@boundary", "attr", "str", "", "", "'open' or 'periodic'"),
    Entry(
        "/scene@length_unit_m", "attr", "float64", "", "m", "SI value of the reduced length (NaN if unset)"
    ),
    Entry("/scene/positions", "dataset", "float64", "(N, 3)", "length", "body centres"),
    Entry("/scene/semi_axes", "dataset", "float64", "(N, 3)", "length", "semi-axes of every body"),
    Entry("/scene/rotations", "dataset", "float64", "(N, 3, 3)", "1", "body axes (columns) in lab frame"),
    Entry(
        "/spectrum",
        "group",
        "",
        "",
        "",
        "poles and weights: P(s) = sum_n W_n / (h_n - s); absent when several filler materials "
        "were solved frequency by frequency",
        required=False,
    ),
    Entry("/spectrum@method", "attr", "str", "", "", "'eigen' or 'lanczos'", required=False),
    Entry(
        "/spectrum@volume", "attr", "float64", "", "length^3", "box or sample-sphere volume", required=False
    ),
    Entry(
        "/spectrum@sample_radius",
        "attr",
        "float64",
        "",
        "length",
        "sample radius (NaN for periodic)",
        required=False,
    ),
    Entry("/spectrum@volume_fraction", "attr", "float64", "", "1", "filler volume fraction", required=False),
    Entry("/spectrum@n_applies", "attr", "int", "", "", "operator applies spent", required=False),
    Entry(
        "/spectrum@converged",
        "attr",
        "bool",
        "",
        "",
        "Lanczos met its tolerance (always true for eigen)",
        required=False,
    ),
    Entry(
        "/spectrum@estimate",
        "attr",
        "float64",
        "",
        "1",
        "last relative change at the probe s values",
        required=False,
    ),
    Entry("/spectrum/poles", "dataset", "float64", "(M,)", "1", "pole positions s_n", required=False),
    Entry(
        "/spectrum/weights", "dataset", "float64", "(M, 3, 3)", "length^3", "pole weights W_n", required=False
    ),
    Entry(
        "/spectrum/residues",
        "dataset",
        "float64",
        "(M, 3, 3)",
        "1",
        "Bergman residues 4 pi W_n / V",
        required=False,
    ),
    Entry("/response", "group", "", "", "", "the composite over frequency"),
    Entry(
        "/response@volume_fraction", "attr", "float64", "", "1", "filler volume fraction of the sample or box"
    ),
    Entry("/response/frequency_Hz", "dataset", "float64", "(F,)", "Hz", "frequency grid"),
    Entry(
        "/response/eps_tensor", "dataset", "complex128", "(F, 3, 3)", "1", "effective tensor eps' - j eps''"
    ),
    Entry("/response/eps_real", "dataset", "float64", "(F,)", "1", "isotropic eps'"),
    Entry("/response/eps_loss", "dataset", "float64", "(F,)", "1", "isotropic eps''"),
    Entry("/response/loss_tangent", "dataset", "float64", "(F,)", "1", "eps'' / eps'"),
    Entry("/response/conductivity_S_per_m", "dataset", "float64", "(F,)", "S/m", "sigma' = omega eps0 eps''"),
    Entry("/response/eps_host", "dataset", "complex128", "(F,)", "1", "host permittivity used"),
    Entry(
        "/response/eps_inclusion",
        "dataset",
        "complex128",
        "(F,)",
        "1",
        "filler permittivity used (first population)",
    ),
    Entry(
        "/response/maxwell_garnett",
        "dataset",
        "complex128",
        "(F,)",
        "1",
        "Maxwell Garnett for the same phases",
        required=False,
    ),  # fmt: skip
    Entry("/config", "dataset", "str", "()", "", "config text", required=False),
)


def spectrum_schema_markdown() -> str:
    """Render :data:`SPECTRUM_SCHEMA` as ``docs/spectrum_files.md``."""
    lines = [
        f"# HDF5 layout of a spectrum (format `{SPECTRUM_FORMAT_NAME}`, "
        f"schema version {SPECTRUM_SCHEMA_VERSION})",
        "",
        "Generated from `dipolearray/store/_schema.py` (`tests/store/test_store.py` checks the page).",
        "Written by `dipolearray spectrum` (`dipolearray.store.save_spectrum`): the spectral",
        "representation of an arrangement, which depends on its geometry alone, and the",
        "composite's permittivity over a frequency grid for the phases of the config.",
        "Evaluate the stored spectrum for other phases with plain numpy:",
        "",
        "```python",
        "import h5py, numpy as np",
        "with h5py.File('runs/film-spectrum.h5') as f:",
        "    h, W = f['spectrum/poles'][...], f['spectrum/weights'][...]",
        "    V = f['spectrum'].attrs['volume']",
        "s = 2.5 / (2.5 - 30.0)                      # s = eps_h / (eps_h - eps_i)",
        "P = np.einsum('m,mab->ab', 1 / (h - s), W)  # total moment per unit field",
        "eps_bulk = 2.5 * (np.eye(3) + 4 * np.pi * P / V)   # periodic box",
        "```",
        "",
    ]
    return "\n".join(lines + _table(SPECTRUM_SCHEMA) + [""])


def _table(entries):
    lines = ["| path | kind | dtype | shape | unit | description |", "|---|---|---|---|---|---|"]
    for e in entries:
        req = "" if e.required else " (optional)"
        lines.append(f"| `{e.path}` | {e.kind} | {e.dtype} | {e.shape} | {e.unit} | {e.description}{req} |")
    return lines


def sweep_schema_markdown() -> str:
    """Render :data:`SWEEP_SCHEMA` as ``docs/sweep_files.md``."""
    lines = [
        f"# HDF5 layout of a sweep (format `{SWEEP_FORMAT_NAME}`, schema version {SWEEP_SCHEMA_VERSION})",
        "",
        "Generated from `dipolearray/store/_schema.py`; `tests/store/test_store.py` checks that",
        "this page matches it, and `tests/test_examples.py` walks it against a sweep file.",
        "One file per sweep, written by `dipolearray sweep` (or `dipolearray.sweep.run_sweep`) and",
        "read with `dipolearray.sweep.load_sweep` or plain h5py. Each realization is written, and",
        "the file flushed, the moment it finishes; rerunning with the same state points resumes",
        "the sweep and never rewrites a finished realization. `<i>` and `<r>` are four-digit",
        "indices from 0000.",
        "",
        "```python",
        "import h5py, numpy as np",
        "with h5py.File('runs/fraction-sweep-sweep.h5') as f:",
        "    for name, point in f['points'].items():",
        "        eps = np.array([r['eps_tensor'][...] for r in point.values()])  # (n, 3, 3)",
        "        print(point.attrs['point_json'], np.trace(eps, axis1=1, axis2=2).real.mean() / 3)",
        "```",
        "",
    ]
    return "\n".join(lines + _table(SWEEP_SCHEMA) + [""])


def schema_markdown() -> str:
    """Render :data:`SCHEMA` as the Markdown table in ``docs/schema.md``."""
    lines = [
        f"# HDF5 result layout (format `{FORMAT_NAME}`, schema version {SCHEMA_VERSION})",
        "",
        "Generated from `dipolearray/store/_schema.py`; `tests/store/test_schema.py` checks",
        "that this page matches it. Read a file with plain h5py:",
        "",
        "```python",
        "import h5py",
        "with h5py.File('runs/film-demo.h5') as f:",
        "    p = f['solution/moments'][...]            # (N, 3, K), reduced units",
        "    p_si = p * f['solution/moments'].attrs['si_factor']  # C m",
        "```",
        "",
        "Reduced units: " + "; ".join(f"`{k}` = {v}" for k, v in REDUCED_UNITS.items() if k != "1"),
        "",
        f"Convention: {CONVENTION}.",
        "",
        "Every dataset with a unit has attributes `unit` (reduced unit), `si_unit` and,",
        "when the scene knows its SI length and field, `si_factor`. Arrays larger than",
        "4096 elements are chunked along the body axis and gzip-compressed.",
        "",
        "| path | kind | dtype | shape | unit | description |",
        "|---|---|---|---|---|---|",
    ]
    lines += _table(SCHEMA)[2:]
    from ..observables import OBSERVABLES

    lines += [
        "",
        "## Observables",
        "",
        "`/observables/<name>` holds each observable the run asked for (`output.observables`), in",
        "reduced units with the usual `unit`, `si_unit`, `si_factor` and a `description`:",
        "",
        "| dataset | shape | unit | description |",
        "|---|---|---|---|",
    ]
    for o in OBSERVABLES.values():
        lines.append(f"| `/observables/{o.name}` | {o.shape} | {o.unit} | {o.description} |")
    lines.append("")
    return "\n".join(lines)
