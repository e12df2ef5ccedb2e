"""Plots: figures for design reviews (matplotlib, PNG and SVG, greyscale- and colour-blind-safe).

Colours follow the Okabe-Ito palette and every series also differs by marker or line
style, so the figures read in greyscale.

Public names
------------
plot_sweep
    Effective permittivity against a swept parameter with error bars, mixing rules and
    Hashin-Shtrikman bounds.
"""

from ._sweep import plot_sweep

__all__ = ["plot_sweep"]
