"""Plots: figures for design reviews (matplotlib, PNG and SVG, greyscale- and colour-blind-safe).

Every plot function takes its data plus ``ax=None`` and returns the Axes; saving is
:func:`save_figure` (PNG and SVG), called by the CLI and the report. Series colours
follow the Okabe-Ito palette and every series also differs by marker or line style;
magnitudes use the cividis map, whose lightness rises monotonically; so the figures
read in greyscale and for colour-blind readers. Axis labels state their units.

Public names
------------
plot_bodies
    Bodies in 3D coloured by moment magnitude, with moment arrows.
plot_field_slice
    ``|E|/|E0|`` on a slice plane through the sample, with the bodies' outlines.
plot_residual_history
    Relative residual per iteration and field direction, with the tolerance.
plot_enhancement_histogram
    Histogram of field enhancement over the bodies, upper tail marked.
plot_sweep
    Effective permittivity against volume fraction (or any swept parameter) with error
    bars, mixing rules and Hashin-Shtrikman bounds.
plot_dielectric_spectrum, plot_cole_cole, plot_pole_density
    eps' and eps'' against frequency with mixing rules and the loss peak; the Cole-Cole
    plot; the pole density of a spectral representation.
save_figure
    Write a figure as PNG and SVG.
OKABE_ITO, SEQUENTIAL, DPI
    The palette, the colour map and the PNG resolution.
"""

from ._common import DPI, OKABE_ITO, SEQUENTIAL, save_figure
from ._figures import plot_bodies, plot_enhancement_histogram, plot_field_slice, plot_residual_history
from ._spectra import plot_cole_cole, plot_dielectric_spectrum, plot_pole_density
from ._sweep import plot_sweep

__all__ = [
    "plot_bodies",
    "plot_field_slice",
    "plot_residual_history",
    "plot_enhancement_histogram",
    "plot_sweep",
    "plot_dielectric_spectrum",
    "plot_cole_cole",
    "plot_pole_density",
    "save_figure",
    "OKABE_ITO",
    "SEQUENTIAL",
    "DPI",
]
