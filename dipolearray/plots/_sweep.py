from __future__ import annotations

import numpy as np

from ._common import OKABE_ITO, new_axes


def plot_sweep(
    result,
    ax=None,
    *,
    x=None,
    x_label=None,
    fractions=None,
    eps_inclusion=None,
    eps_host=None,
    x_key="volume_fraction",
    eps_inclusion_key="eps_inclusion",
    eps_host_key="eps_host",
):
    """Computed eps' (mean, 95 % interval) over a sweep with Maxwell Garnett, Bruggeman and HS bounds.

    Parameters
    ----------
    result : SweepResult
    ax : Axes, optional
    x : (P,) array_like, optional
        Abscissa per state point (default: ``point[x_key]``).
    x_label : str, optional
    fractions : (P,) array_like, optional
        Filler volume fraction per point for the rules (default: ``x`` when ``x_key``
        is the volume fraction, else the realized fraction from the records).
    eps_inclusion, eps_host : float or (P,) array_like, optional
        Real permittivities for the rules (default: ``point[eps_inclusion_key]``,
        ``point[eps_host_key]`` or 1).

    Returns
    -------
    Axes
        When ``x`` is the volume fraction and the permittivities are the same at every
        point the rules are smooth curves over the fraction; otherwise they are
        evaluated at each point and joined.
    """
    from ..mixing import bruggeman, hashin_shtrikman_bounds, maxwell_garnett

    pts = result.points
    if x is None:
        x = [float(p[x_key]) for p in pts]
    x = np.asarray(x, dtype=float)
    if fractions is None:
        if x_key == "volume_fraction" and x_label is None:
            fractions = x
        else:
            fractions = [
                np.mean([r["volume_fraction"] for r in recs]) if recs else np.nan for recs in result.records
            ]
    phi = np.asarray(fractions, dtype=float)

    def per_point(value, key, default):
        if value is None:
            value = [float(np.real(p.get(key, default))) for p in pts]
        return np.broadcast_to(np.asarray(value, dtype=float), x.shape)

    ei = per_point(eps_inclusion, eps_inclusion_key, np.nan)
    eh = per_point(eps_host, eps_host_key, 1.0)
    order = np.argsort(x)
    x, phi, ei, eh = x[order], phi[order], ei[order], eh[order]
    mean = result.isotropic_mean.real[order]
    ci = result.confidence_interval()[order]
    ax = new_axes(ax)
    smooth = np.allclose(x, phi) and np.ptp(ei) == 0 and np.ptp(eh) == 0
    if smooth:
        grid = np.linspace(0.0, max(float(x.max()) * 1.1, 1e-3), 200)
        lo, hi = hashin_shtrikman_bounds(eh[0], ei[0], grid)
        ax.fill_between(grid, lo, hi, color="0.9", label="Hashin-Shtrikman bounds")
        ax.plot(grid, maxwell_garnett(eh[0], ei[0], grid), "-", color=OKABE_ITO[4], label="Maxwell Garnett")
        ax.plot(grid, bruggeman(eh[0], ei[0], grid), "--", color=OKABE_ITO[5], label="Bruggeman")
    else:
        lo, hi = np.array([hashin_shtrikman_bounds(h, i, f) for h, i, f in zip(eh, ei, phi, strict=True)]).T
        ax.fill_between(x, lo, hi, color="0.9", label="Hashin-Shtrikman bounds")
        mg = [float(maxwell_garnett(h, i, f)) for h, i, f in zip(eh, ei, phi, strict=True)]
        br = [float(bruggeman(h, i, f)) for h, i, f in zip(eh, ei, phi, strict=True)]
        ax.plot(x, mg, "-", marker="s", ms=3, color=OKABE_ITO[4], label="Maxwell Garnett")
        ax.plot(x, br, "--", marker="^", ms=3, color=OKABE_ITO[5], label="Bruggeman")
    yerr = np.nan_to_num(np.abs(np.stack([mean - ci[:, 0], ci[:, 1] - mean])))
    ax.errorbar(x, mean, yerr=yerr, fmt="o", color=OKABE_ITO[0], capsize=3, label="computed (95 % interval)")
    if x_label is None:
        x_label = "filler volume fraction (1)" if x_key == "volume_fraction" else x_key
    ax.set_xlabel(x_label)
    ax.set_ylabel("effective permittivity eps' (relative, 1)")
    if np.ptp(ei) == 0 and np.ptp(eh) == 0:
        ax.set_title(f"eps_filler = {ei[0]:g}, eps_host = {eh[0]:g}")
    ax.legend(frameon=False, fontsize=8)
    ax.grid(alpha=0.3)
    return ax
