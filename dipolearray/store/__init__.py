"""Store: results in HDF5, one file per solve, readable with plain h5py.

The layout is declared once in :data:`SCHEMA` (groups, datasets, attributes, dtypes,
shapes, units); the writer, the reader, ``docs/schema.md`` and the schema test all
read that declaration. Writes are atomic: the file is written under a temporary name
in the target folder and renamed into place only when complete, so a failed write
never leaves a half-written result and never replaces an existing file unless asked.

Values are stored in the engine's reduced units; every dataset carries ``unit`` (the
reduced unit), ``si_unit`` and, when the scene knows its SI length and field
strength, ``si_factor`` (multiply to get SI).

Public names
------------
save_result
    Write a :class:`~dipolearray.solvers.Solution` (plus observables, config text).
load_result
    Read it back as the same :class:`~dipolearray.solvers.Solution`.
model_record
    ``(model, model_error, closest_gap)`` of a solution, as stored.
read_observables, read_config_text, describe
    Read the stored observables, the config text, or a text summary of a file.
SCHEMA, SCHEMA_VERSION, schema_markdown
    The layout declaration and its rendering for the docs.
SWEEP_SCHEMA, SWEEP_FORMAT_NAME, sweep_schema_markdown
    The same for sweep files.
save_spectrum, load_spectrum, SPECTRUM_SCHEMA, SPECTRUM_FORMAT_NAME, spectrum_schema_markdown
    Spectrum files: poles and weights of an arrangement and the response over frequency.
open_sweep, read_sweep, SweepStore
    Sweep files: one group per state point and realization, written as results arrive
    (``/points/p0000/r0000/eps_tensor`` with the solve record as attributes).
"""

from ._hdf5 import describe, load_result, model_record, read_config_text, read_observables, save_result
from ._schema import (
    FORMAT_NAME,
    SCHEMA,
    SCHEMA_VERSION,
    SPECTRUM_FORMAT_NAME,
    SPECTRUM_SCHEMA,
    SWEEP_FORMAT_NAME,
    SWEEP_SCHEMA,
    schema_markdown,
    spectrum_schema_markdown,
    sweep_schema_markdown,
)
from ._spectrum import load_spectrum, save_spectrum
from ._sweep import SweepStore, open_sweep, read_sweep

__all__ = [
    "save_result",
    "load_result",
    "model_record",
    "read_observables",
    "read_config_text",
    "describe",
    "SCHEMA",
    "SCHEMA_VERSION",
    "FORMAT_NAME",
    "schema_markdown",
    "SWEEP_SCHEMA",
    "SWEEP_FORMAT_NAME",
    "sweep_schema_markdown",
    "save_spectrum",
    "load_spectrum",
    "SPECTRUM_SCHEMA",
    "SPECTRUM_FORMAT_NAME",
    "spectrum_schema_markdown",
    "open_sweep",
    "read_sweep",
    "SweepStore",
]
