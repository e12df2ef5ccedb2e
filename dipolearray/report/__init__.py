"""Report: summaries, figures and self-contained reports of result and sweep files.

Public names
------------
run_summary
    The numbers of one solve as a JSON-ready dict: solver record, volume fraction,
    effective tensor, mixing rules at the same fraction, field-enhancement statistics,
    breakdown warnings.
mixing_comparison, volume_fraction
    The two-phase mixing rules and bounds for a scene; its filler fraction.
write_report
    An HTML (figures embedded) or Markdown (figures linked) report of a result or a
    sweep file, with inputs, effective tensor and uncertainty, mixing rules, field
    enhancement, figures, the solver record and the cautions.
write_figures, run_figures, sweep_figures
    The figures alone, as PNG and SVG.
file_kind
    ``"result"`` or ``"sweep"`` for a dipolearray HDF5 file.
breakdown_notes, TYPICAL_BREAKDOWN_KV_PER_MM, CAUTION
    Warnings when applied or local fields pass typical breakdown strengths of common
    insulating hosts, the table behind them, and the standing caution.
"""

from ._document import FORMATS, file_kind, write_figures, write_report
from ._figures import run_figures, sweep_figures
from ._safety import CAUTION, TYPICAL_BREAKDOWN_KV_PER_MM, breakdown_notes
from ._summary import mixing_comparison, run_summary, volume_fraction

__all__ = [
    "run_summary",
    "mixing_comparison",
    "volume_fraction",
    "write_report",
    "write_figures",
    "run_figures",
    "sweep_figures",
    "file_kind",
    "FORMATS",
    "breakdown_notes",
    "TYPICAL_BREAKDOWN_KV_PER_MM",
    "CAUTION",
]
