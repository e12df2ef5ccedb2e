from __future__ import annotations

from pathlib import Path

import numpy as np

#: Okabe, M. and Ito, K. (2002). Color Universal Design (palette, colour-blind safe).
OKABE_ITO = ("#000000", "#E69F00", "#56B4E9", "#009E73", "#0072B2", "#D55E00", "#CC79A7")


def plot_sweep(
    result, path, *, x_key="volume_fraction", eps_inclusion_key="eps_inclusion", eps_host_key="eps_host"
):
    """Computed eps' (mean, 95 % interval) against ``x_key`` with Maxwell Garnett, Bruggeman and bounds.

    Parameters
    ----------
    result : SweepResult
        Points must carry ``x_key`` (the volume fraction by default), the inclusion and
        host permittivities (real parts) used for the rules.
    path : str or Path
        Output stem; ``.png`` and ``.svg`` are written next to it.

    Returns
    -------
    (Path, Path)
        The PNG and SVG files.
    """
    import matplotlib

    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt

    from ..mixing import bruggeman, hashin_shtrikman_bounds, maxwell_garnett

    x = np.array([float(p[x_key]) for p in result.points])
    order = np.argsort(x)
    x = x[order]
    eps_i = float(result.points[order[0]][eps_inclusion_key])
    eps_h = float(result.points[order[0]].get(eps_host_key, 1.0))
    mean = result.isotropic_mean.real[order]
    ci = result.confidence_interval()[order]
    fig, ax = plt.subplots(figsize=(6.0, 4.2), dpi=150)
    grid = np.linspace(0.0, max(float(x.max()) * 1.1, 1e-3), 200)
    lo, hi = hashin_shtrikman_bounds(eps_h, eps_i, grid)
    ax.fill_between(grid, lo, hi, color="0.9", label="Hashin-Shtrikman bounds")
    ax.plot(grid, maxwell_garnett(eps_h, eps_i, grid), "-", color=OKABE_ITO[4], label="Maxwell Garnett")
    ax.plot(grid, bruggeman(eps_h, eps_i, grid), "--", color=OKABE_ITO[5], label="Bruggeman")
    yerr = np.abs(np.stack([mean - ci[:, 0], ci[:, 1] - mean]))
    yerr = np.nan_to_num(yerr)
    ax.errorbar(x, mean, yerr=yerr, fmt="o", color=OKABE_ITO[0], capsize=3, label="computed (95 % interval)")
    ax.set_xlabel("filler volume fraction" if x_key == "volume_fraction" else x_key)
    ax.set_ylabel("effective permittivity eps' (relative, 1)")
    ax.set_title(f"eps_filler = {eps_i:g}, eps_host = {eps_h:g}")
    ax.legend(frameon=False, fontsize=8)
    ax.grid(alpha=0.3)
    fig.tight_layout()
    stem = Path(path)
    stem = stem.with_suffix("") if stem.suffix in (".png", ".svg") else stem
    stem.parent.mkdir(parents=True, exist_ok=True)
    png, svg = stem.with_suffix(".png"), stem.with_suffix(".svg")
    fig.savefig(png)
    fig.savefig(svg)
    plt.close(fig)
    return png, svg
