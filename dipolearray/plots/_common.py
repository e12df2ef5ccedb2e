from __future__ import annotations

from pathlib import Path

#: Okabe, M. and Ito, K. (2002). Color Universal Design (palette, colour-blind safe).
OKABE_ITO = ("#000000", "#E69F00", "#56B4E9", "#009E73", "#0072B2", "#D55E00", "#CC79A7")

#: Sequential colour map for magnitudes: cividis rises monotonically in lightness, so it
#: reads in greyscale and for the common colour-vision deficiencies (Nunez, Anderton &
#: Renslow 2018, PLoS ONE 13, e0199239).
SEQUENTIAL = "cividis"

#: Default figure size, inches, and resolution of the PNG files.
FIGSIZE = (6.0, 4.5)
DPI = 150


def pyplot():
    """matplotlib.pyplot on a non-interactive backend (figures are written to files)."""
    import matplotlib

    if matplotlib.get_backend().lower() not in ("agg", "svg", "pdf"):
        matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    return plt


def new_axes(ax=None, projection=None, figsize=FIGSIZE):
    """``ax`` itself, or a fresh figure's axes."""
    if ax is not None:
        return ax
    plt = pyplot()
    fig = plt.figure(figsize=figsize, dpi=DPI, layout="constrained")
    return fig.add_subplot(1, 1, 1, projection=projection)


def save_figure(fig_or_ax, path, *, close=True):
    """Write a figure as PNG and SVG next to ``path`` (its suffix is replaced).

    Parameters
    ----------
    fig_or_ax : matplotlib Figure or Axes
    path : str or Path
        Output stem; ``.png`` and ``.svg`` are written, folders created.
    close : bool
        Close the figure afterwards (frees memory in batch work).

    Returns
    -------
    (Path, Path)
        The PNG and SVG files.
    """
    fig = getattr(fig_or_ax, "figure", fig_or_ax)
    if hasattr(fig, "get_figure") and fig.get_figure() is not None:
        fig = fig.get_figure()
    stem = Path(path)
    stem = stem.with_suffix("") if stem.suffix in (".png", ".svg") else stem
    stem.parent.mkdir(parents=True, exist_ok=True)
    png, svg = stem.with_suffix(".png"), stem.with_suffix(".svg")
    # Fixed canvas (figure size x DPI), laid out by the constrained layout engine.
    fig.savefig(png, dpi=DPI)
    fig.savefig(svg)
    if close:
        pyplot().close(fig)
    return png, svg
