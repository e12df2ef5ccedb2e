from __future__ import annotations

import numpy as np

from ._common import OKABE_ITO, pyplot


def _iso(eps):
    e = np.asarray(eps)
    return np.trace(e, axis1=-2, axis2=-1) / 3.0 if e.ndim == 3 else e


def plot_dielectric_spectrum(frequency_hz, eps, axes=None, *, rules=None, peak=None):
    """Eps' (top) and eps'' (bottom) of the composite against frequency, log axis, with rules.

    Parameters
    ----------
    frequency_hz : (F,) array_like
    eps : (F,) or (F, 3, 3) array_like of complex
        The composite (the isotropic part is drawn for a tensor).
    axes : pair of Axes, optional
    rules : dict of str -> (F,) complex, optional
        Mixing-rule predictions for the same phases.
    peak : dict, optional
        A :func:`~dipolearray.spectra.loss_peak` result, marked on the loss panel.

    Returns
    -------
    (Axes, Axes)
    """
    if axes is None:
        fig, axes = pyplot().subplots(2, 1, figsize=(6.0, 5.6), dpi=150, sharex=True, layout="constrained")
    top, bottom = axes
    f = np.asarray(frequency_hz, dtype=float)
    e = _iso(eps)
    top.semilogx(f, e.real, "-", color=OKABE_ITO[0], lw=1.6, label="computed")
    bottom.loglog(f, np.maximum(-e.imag, 1e-300), "-", color=OKABE_ITO[0], lw=1.6, label="computed")
    styles = ("--", ":", "-.")
    for i, (name, val) in enumerate((rules or {}).items()):
        v = np.asarray(val)
        c = OKABE_ITO[(i + 4) % len(OKABE_ITO)]
        top.semilogx(f, v.real, styles[i % 3], color=c, label=name)
        bottom.loglog(f, np.maximum(-v.imag, 1e-300), styles[i % 3], color=c, label=name)
    if peak is not None and np.isfinite(peak["frequency_hz"]):
        bottom.axvline(peak["frequency_hz"], color="0.4", lw=0.8, ls="--")
        label = f"loss peak {peak['frequency_hz']:.3g} Hz, {peak['width_decades']:.2f} decades"
        bottom.plot([peak["frequency_hz"]], [peak["eps_loss"]], "v", color=OKABE_ITO[5], label=label)
    top.set_ylabel("eps' (relative, 1)")
    bottom.set_ylabel("eps'' (relative, 1)")
    bottom.set_xlabel("frequency (Hz)")
    for a in axes:
        a.grid(alpha=0.3, which="both")
        a.legend(frameon=False, fontsize=7)
    return top, bottom


def plot_cole_cole(eps, ax=None, *, rules=None):
    """Cole-Cole plot: eps'' against eps' of the composite (and of the rules).

    Returns
    -------
    Axes
    """
    from ._common import new_axes

    ax = new_axes(ax)
    e = _iso(eps)
    ax.plot(e.real, -e.imag, "-", marker="o", ms=2, color=OKABE_ITO[0], label="computed")
    styles = ("--", ":", "-.")
    for i, (name, val) in enumerate((rules or {}).items()):
        v = np.asarray(val)
        ax.plot(v.real, -v.imag, styles[i % 3], color=OKABE_ITO[(i + 4) % len(OKABE_ITO)], label=name)
    ax.set_xlabel("eps' (relative, 1)")
    ax.set_ylabel("eps'' (relative, 1)")
    ax.set_aspect("equal", adjustable="datalim")
    ax.grid(alpha=0.3)
    ax.legend(frameon=False, fontsize=8)
    return ax


def plot_pole_density(spectrum, ax=None, *, bins=60):
    """Pole density of a spectral representation: where the arrangement's resonances sit.

    The isotropic residues histogrammed over the pole positions ``s_n``; a dilute or
    lattice arrangement concentrates them near ``s = 1/3`` (the isolated sphere),
    clustering and chaining spread them.

    Returns
    -------
    Axes
    """
    from ._common import new_axes

    ax = new_axes(ax)
    centres, dens = spectrum.pole_density(bins=bins)
    width = float(centres[1] - centres[0]) if len(centres) > 1 else 1.0
    ax.bar(
        centres,
        dens,
        width=width,
        color=OKABE_ITO[2],
        edgecolor=OKABE_ITO[4],
        lw=0.4,
        label="residue density",
    )
    ax.axvline(1 / 3, color="black", ls="--", lw=0.8, label="isolated sphere, s = 1/3")
    ax.set_xlabel("pole position s_n = eps_h / (eps_h - eps_i) at resonance (1)")
    ax.set_ylabel("residue density (volume fraction per unit s)")
    ax.set_title(
        f"{spectrum.method}: {len(spectrum.poles)} poles, fraction {spectrum.volume_fraction:.3g}", fontsize=9
    )
    ax.grid(alpha=0.3)
    ax.legend(frameon=False, fontsize=8)
    return ax
