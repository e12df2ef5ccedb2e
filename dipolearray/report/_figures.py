from __future__ import annotations

from pathlib import Path

import numpy as np


def _slice_normal(scene, direction):
    """The axis least aligned with the field, so the field lies (nearly) in the slice plane."""
    e = np.abs(np.asarray(scene.field[direction], dtype=float))
    return "xyz"[int(np.argmin(e))]


def run_figures(sol, folder, *, enhancement=None, resolution=161, prefix="", progress=None):
    """Write the figures of one solve (PNG and SVG) into ``folder``.

    ``progress(stage, done, total)`` is told of each figure written.

    Figures: the bodies in 3D coloured by moment magnitude with moment arrows; the
    field magnitude on a slice through the sample (open scenes); the residual history;
    the histogram of host-surface field enhancement with its upper tail.

    Returns
    -------
    list of dict
        ``name``, ``title``, ``caption``, ``png``, ``svg`` per figure written;
        :func:`figure_notes` says which figures a scene cannot have and why.
    """
    from ..observables import field_enhancement, field_slice
    from ..plots import (
        plot_bodies,
        plot_enhancement_histogram,
        plot_field_slice,
        plot_residual_history,
        save_figure,
    )

    folder = Path(folder)
    scene = sol.scene
    k = scene.n_fields - 1  # the last applied field: z when all three were solved
    e = scene.field[k]
    along = f"({e[0]:g}, {e[1]:g}, {e[2]:g})"
    enh = enhancement if enhancement is not None else field_enhancement(sol)
    out = []

    def add(name, title, caption, ax):
        png, svg = save_figure(ax, folder / f"{prefix}{name}")
        out.append({"name": name, "title": title, "caption": caption, "png": png, "svg": svg})
        if progress is not None:
            progress("figures", len(out), 4)

    add(
        "bodies",
        "Bodies and their moments",
        f"Every body at its centre, coloured by the magnitude of its dipole moment for the field along "
        f"{along}; arrows show the real part of the moment for up to 400 bodies.",
        plot_bodies(sol, direction=k),
    )
    if scene.n_bodies:
        normal = _slice_normal(scene, k)
        ax_i = "xyz".index(normal)
        if scene.boundary == "periodic":
            offset = 0.5 * float(scene.box[ax_i])
        else:
            offset = float(np.mean(scene.positions[:, ax_i]))
        data = field_slice(sol, normal=normal, offset=offset, direction=k, resolution=resolution)
        add(
            "field_slice",
            "Field magnitude on a slice",
            f"|E|/|E0| on the plane {normal} = {offset:.3g} (reduced length) for the field along {along}; "
            "outlines where the bodies cut the plane. "
            + (
                "Multipole solution: higher multipoles outside, each sphere's interior expansion inside."
                if sol.multipoles is not None
                else "Inside a body the uniform interior field; the point-dipole model underestimates the "
                "field in narrow gaps."
            )
            + (
                " Periodic box: one cell, every image summed by Ewald."
                if scene.boundary == "periodic"
                else ""
            ),
            plot_field_slice(sol, data=data, direction=k),
        )
    add(
        "residual_history",
        "Residual history",
        "Relative residual of the moment equations per iteration and field direction, with the "
        "requested tolerance and the true final residual.",
        plot_residual_history(sol),
    )
    add(
        "enhancement_histogram",
        "Host field enhancement at the body surfaces",
        "Largest host field on each body's surface over |E0|, every body and field direction; the "
        "upper tail from the 99th percentile is hatched, the maximum dotted.",
        plot_enhancement_histogram(enh, kind="surface"),
    )
    return out


def figure_notes(sol):
    """Figures a solve cannot have, with the reason (``[(name, why)]``); every scene has all today."""
    return []


def sweep_figures(result, folder, inputs, *, prefix=""):
    """Write the sweep figure: effective permittivity over the swept parameter with rules and bounds.

    Parameters
    ----------
    result : SweepResult
    folder : Path
    inputs : dict
        From :func:`~dipolearray.config.sweep_rule_inputs`.
    """
    from ..plots import plot_sweep, save_figure

    ax = plot_sweep(
        result,
        x=inputs["x"],
        x_label=inputs["x_label"],
        fractions=inputs["fraction"],
        eps_inclusion=np.real(inputs["eps_inclusion"]),
        eps_host=np.real(inputs["eps_host"]),
    )
    png, svg = save_figure(ax, Path(folder) / f"{prefix}sweep")
    return [
        {
            "name": "sweep",
            "title": "Effective permittivity over the sweep",
            "caption": "Mean isotropic eps' over the realizations with its 95 % interval (Student t), "
            "against Maxwell Garnett and Bruggeman for the same phases at the realized volume fraction "
            "and the Hashin-Shtrikman bounds (grey band).",
            "png": png,
            "svg": svg,
        }
    ]


def spectrum_figures(spectrum, response, folder, *, prefix=""):
    """Write the figures of a spectrum file: eps' and eps'' over frequency, Cole-Cole, pole density."""
    from ..plots import plot_cole_cole, plot_dielectric_spectrum, plot_pole_density, save_figure
    from ..spectra import loss_peak

    folder = Path(folder)
    out = []
    rules = {}
    if response is not None and "maxwell_garnett" in response:
        rules["Maxwell Garnett (same phases)"] = response["maxwell_garnett"]
    if response is not None:
        f = response["frequency_Hz"]
        eps = response["eps_tensor"]
        peak = loss_peak(f, response["eps_loss"])
        axes = plot_dielectric_spectrum(f, eps, rules=rules, peak=peak)
        png, svg = save_figure(axes[0], folder / f"{prefix}dielectric_spectrum")
        out.append({
            "name": "dielectric_spectrum",
            "title": "Dielectric spectrum",
            "caption": "Isotropic eps' (top) and eps'' (bottom) of the composite against frequency, with "
            "Maxwell Garnett for the same phases at the same volume fraction; the loss peak is marked.",
            "png": png,
            "svg": svg,
        })  # fmt: skip
        png, svg = save_figure(plot_cole_cole(eps, rules=rules), folder / f"{prefix}cole_cole")
        out.append({
            "name": "cole_cole",
            "title": "Cole-Cole plot",
            "caption": "eps'' against eps' over the frequency grid: a Debye relaxation is a semicircle, "
            "a distribution of relaxation times flattens it.",
            "png": png,
            "svg": svg,
        })  # fmt: skip
    if spectrum is None:
        return out
    png, svg = save_figure(plot_pole_density(spectrum), folder / f"{prefix}pole_density")
    out.append({
        "name": "pole_density",
        "title": "Pole density",
        "caption": "Residues of the spectral representation over the pole positions s_n; isolated "
        "spheres all sit at s = 1/3, neighbours spread the poles, chains and clusters further.",
        "png": png,
        "svg": svg,
    })  # fmt: skip
    return out
