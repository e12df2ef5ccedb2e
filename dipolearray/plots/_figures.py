from __future__ import annotations

import numpy as np

from ._common import OKABE_ITO, SEQUENTIAL, new_axes, pyplot


def _length_label(scene):
    if scene.length_unit_m:
        um = scene.length_unit_m * 1e6
        return f"(reduced length, 1 = {um:.4g} um)"
    return "(reduced length)"


def plot_bodies(sol, ax=None, *, direction=0, max_arrows=400):
    """Bodies in 3D coloured by moment magnitude, with moment arrows.

    Parameters
    ----------
    sol : Solution
    ax : 3D Axes, optional
    direction : int
        Applied field whose moments are shown.
    max_arrows : int
        Arrows are drawn for at most this many bodies (evenly picked), so large scenes
        stay readable.

    Returns
    -------
    Axes
        The 3D axes; its colour bar gives ``|p|`` in units of ``4 pi eps0 eps_h l^3 |E0|``.
    """
    scene = sol.scene
    ax = new_axes(ax, projection="3d", figsize=(6.4, 5.6))
    p = np.asarray(sol.moments)[:, :, int(direction)]
    mag = np.sqrt(np.sum(np.abs(p) ** 2, axis=1))
    pos = scene.positions
    span = float(np.ptp(pos, axis=0).max()) + 2 * float(scene.bounding_radii.max())
    # Marker area ~ body cross-section in points^2 at the figure's scale.
    width_pt = 72 * ax.figure.get_figwidth() * 0.6
    size = (2 * scene.bounding_radii / span * width_pt) ** 2
    sc = ax.scatter(*pos.T, c=mag, s=size, cmap=SEQUENTIAL, depthshade=False, edgecolors="none")
    pick = np.linspace(0, scene.n_bodies - 1, min(scene.n_bodies, int(max_arrows))).astype(int)
    vec = np.real(p[pick])
    norm = np.abs(vec).max() or 1.0
    arrow = vec / norm * 1.6 * float(np.median(scene.bounding_radii))
    ax.quiver(*pos[pick].T, *arrow.T, color=OKABE_ITO[5], linewidth=0.7, arrow_length_ratio=0.3)
    cb = ax.figure.colorbar(sc, ax=ax, shrink=0.7, pad=0.08)
    cb.set_label("moment magnitude |p| (4 pi eps0 eps_h l^3 |E0|)")
    unit = _length_label(scene)
    ax.set_xlabel(f"x {unit}", fontsize=7)
    ax.set_ylabel(f"y {unit}", fontsize=7)
    ax.set_zlabel(f"z {unit}", fontsize=7)
    e = scene.field[int(direction)]
    ax.set_title(f"{scene.n_bodies} bodies, field along ({e[0]:g}, {e[1]:g}, {e[2]:g}); arrows: Re p")
    try:
        ax.set_box_aspect(np.ptp(pos, axis=0) + 2 * float(scene.bounding_radii.max()))
    except (AttributeError, ValueError):  # pragma: no cover - old matplotlib
        pass
    return ax


def plot_field_slice(sol, ax=None, *, normal="y", offset=0.0, direction=0, resolution=161, data=None):
    """Field magnitude ``|E|/|E0|`` on a slice plane with the bodies' outlines.

    Parameters
    ----------
    sol : Solution
    ax : Axes, optional
    normal : {"x", "y", "z"}
    offset : float, reduced length
    direction : int
    resolution : int
    data : dict, optional
        A precomputed :func:`~dipolearray.observables.field_slice` result (its plane
        and offset then replace ``normal`` and ``offset``).

    Returns
    -------
    Axes
    """
    from matplotlib.patches import Ellipse

    from ..observables import field_slice, slice_outlines

    if data is None:
        data = field_slice(sol, normal=normal, offset=offset, direction=direction, resolution=resolution)
    normal = data["normal"]
    ax = new_axes(ax)
    u, v, mag = data["u"], data["v"], data["magnitude"]
    vmax = float(np.percentile(mag, 99.5))
    im = ax.pcolormesh(
        u, v, mag, cmap=SEQUENTIAL, shading="auto", vmin=0.0, vmax=max(vmax, 1e-12), rasterized=True
    )
    for cu, cv, w, h, ang in slice_outlines(sol.scene, normal, data["offset"]):
        ax.add_patch(Ellipse((cu, cv), w, h, angle=ang, fill=False, lw=0.6, color="white"))
        ax.add_patch(Ellipse((cu, cv), w, h, angle=ang, fill=False, lw=0.25, color="black"))
    cb = ax.figure.colorbar(im, ax=ax)
    cb.set_label("field magnitude |E| / |E0| (1); inside bodies: interior field")
    unit = _length_label(sol.scene)
    a, b = data["axes"]
    ax.set_xlabel(f"{a} {unit}")
    ax.set_ylabel(f"{b} {unit}")
    ax.set_aspect("equal")
    e = sol.scene.field[int(direction)]
    ax.set_title(
        f"slice {normal} = {data['offset']:g}, field along ({e[0]:g}, {e[1]:g}, {e[2]:g}); "
        f"colour scale clipped at the 99.5th percentile",
        fontsize=8,
    )
    return ax


def plot_residual_history(sol, ax=None):
    """Relative residual against iteration for each field direction, with the tolerance.

    Returns
    -------
    Axes
    """
    ax = new_axes(ax)
    hist = np.asarray(sol.residual_history)
    styles = ("-", "--", ":", "-.")
    markers = ("o", "s", "^", "D")
    if hist.size:
        it = np.arange(hist.shape[0])
        for k in range(hist.shape[1]):
            ax.semilogy(
                it,
                np.maximum(hist[:, k], 1e-300),
                styles[k % 4],
                marker=markers[k % 4],
                markersize=3,
                color=OKABE_ITO[(k + 4) % len(OKABE_ITO)],
                label=f"field {k}",
            )
    else:
        ax.set_yscale("log")
        ax.text(0.5, 0.5, f"{sol.method}: no iterations (direct solve)", transform=ax.transAxes, ha="center")
    for k, r in enumerate(np.atleast_1d(sol.residual)):
        ax.axhline(max(float(r), 1e-300), color="0.5", lw=0.5, ls=styles[k % 4])
    if sol.rtol:
        ax.axhline(sol.rtol, color="black", lw=1.0, ls="-.", label=f"rtol = {sol.rtol:g}")
    ax.set_xlabel("iteration")
    ax.set_ylabel("relative residual ||E0 - (alpha^-1 - T) p|| / ||E0|| (1)")
    ax.set_title(
        f"{sol.method} ({sol.backend}), {sol.iterations} iterations; grey: true final residual", fontsize=9
    )
    ax.legend(frameon=False, fontsize=8)
    ax.grid(alpha=0.3, which="both")
    return ax


def plot_enhancement_histogram(enhancement, ax=None, *, kind="surface", tail=99.0, bins=60):
    """Histogram of field enhancement over bodies with the upper tail marked.

    Parameters
    ----------
    enhancement : FieldEnhancement
    ax : Axes, optional
    kind : {"surface", "local", "interior"}
    tail : float
        Percentile from which the upper tail is shaded.
    bins : int

    Returns
    -------
    Axes
    """
    from ..errors import InputError

    if kind not in ("surface", "local", "interior"):
        raise InputError(f"kind: expected 'surface', 'local' or 'interior', got {kind!r}", "kind")
    ax = new_axes(ax)
    v = np.asarray(getattr(enhancement, kind)).ravel()
    edges = np.linspace(float(v.min()), float(v.max()) + 1e-12, int(bins) + 1)
    q = float(np.percentile(v, tail))
    ax.hist(v[v < q], bins=edges, color=OKABE_ITO[2], edgecolor=OKABE_ITO[4], lw=0.4, label="bodies")
    ax.hist(
        v[v >= q],
        bins=edges,
        color=OKABE_ITO[5],
        edgecolor="black",
        lw=0.4,
        hatch="//",
        label=f"upper tail (>= {tail:g}th percentile)",
    )
    ax.axvline(q, color="black", ls="--", lw=1.0, label=f"{tail:g}th percentile {q:.3g}")
    ax.axvline(float(v.max()), color="black", ls=":", lw=1.0, label=f"max {float(v.max()):.3g}")
    what = {
        "surface": "largest host field on the body surface",
        "local": "local (exciting) field at body centres",
        "interior": "field inside the bodies",
    }[kind]
    ax.set_xlabel(f"{what}, |E| / |E0| (1)")
    ax.set_ylabel("count (bodies x field directions)")
    ax.set_yscale("log")
    ax.legend(frameon=False, fontsize=8)
    ax.grid(alpha=0.3)
    return ax


def close(ax):
    """Close the figure holding ``ax``."""
    pyplot().close(ax.figure)
