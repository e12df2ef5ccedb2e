"""Random packings: sequential addition, dense packings by overlap relaxation, hard-body Monte Carlo."""

from __future__ import annotations

import math

import numpy as np

from .._validate import as_float_array, as_int, as_positive, check_choice
from ..errors import InputError
from . import _kernels as K
from ._generators import Arrangement

PACK_REGIONS = ("sphere", "cube", "periodic")

# Relaxed bodies end this far (relative) from contact, so exact checks downstream pass.
_MARGIN = 1e-6


def lognormal_radii(n_bodies, median=1.0, sigma=0.2, rng=None):
    """Radii drawn from a lognormal distribution.

    Parameters
    ----------
    n_bodies : int
    median : float
        Median radius ``exp(mu)`` (reduced length).
    sigma : float
        Standard deviation of ``ln r`` (0 gives equal radii; 0.1 to 0.4 is typical of
        milled ceramic powders, common practice, no source).
    rng : numpy.random.Generator or int, optional

    Returns
    -------
    (n_bodies,) ndarray of float

    Examples
    --------
    >>> r = lognormal_radii(20000, median=0.5, sigma=0.25, rng=1)
    >>> round(float(np.median(r)), 2), round(float(np.std(np.log(r))), 2)
    (0.5, 0.25)
    """
    n = as_int(n_bodies, "n_bodies", minimum=1)
    m = as_positive(median, "median")
    s = as_positive(sigma, "sigma", allow_zero=True)
    if s > 1.5:
        raise InputError(f"sigma: {s} is too broad for a packing (allowed 0 to 1.5)", "sigma")
    rng = np.random.default_rng(rng)
    return m * np.exp(s * rng.standard_normal(n))


def body_shapes(n, radius=1.0, radii=None, semi_axes=None, rotations=None):
    """Checked per-body ``(semi_axes (N, 3), rotations (N, 3, 3) or None, bounding radii)``.

    Exactly one size description is used: ``semi_axes`` (one triple for all bodies or
    one per body), else ``radii``, else ``radius``.
    """
    if semi_axes is not None:
        semi = as_float_array(semi_axes, "semi_axes")
        if semi.shape == (3,):
            semi = np.tile(semi, (n, 1))
        if semi.shape != (n, 3):
            raise InputError(f"semi_axes: expected shape (3,) or ({n}, 3), got {semi.shape}", "semi_axes")
        if np.any(semi <= 0):
            raise InputError("semi_axes: every semi-axis must be > 0", "semi_axes")
    else:
        if radii is None:
            r = np.full(n, as_positive(radius, "radius"))
        else:
            r = as_float_array(radii, "radii", (n,))
            if np.any(r <= 0):
                raise InputError("radii: every radius must be > 0", "radii")
        semi = np.repeat(r[:, None], 3, axis=1)
    rot = None
    if rotations is not None:
        rot = as_float_array(rotations, "rotations")
        if rot.shape == (3, 3):
            rot = np.tile(rot, (n, 1, 1))
        if rot.shape != (n, 3, 3):
            raise InputError(f"rotations: expected shape (3, 3) or ({n}, 3, 3), got {rot.shape}", "rotations")
        err = np.abs(np.einsum("nji,njk->nik", rot, rot) - np.eye(3)).max()
        if err > 1e-8:
            raise InputError(f"rotations: matrices must be orthonormal (error {err:.1e})", "rotations")
    return semi, rot, semi.max(axis=1)


def _region_size(region, volume):
    if region == "sphere":
        R = (3.0 * volume / (4.0 * math.pi)) ** (1.0 / 3.0)
        return np.full(3, 2.0 * R), R
    edge = volume ** (1.0 / 3.0)
    return np.full(3, edge), None


def _make_arrangement(pos, semi, rot, region, edges, R, description, labels=None):
    is_sphere = rot is None and np.all(np.ptp(semi, axis=1) <= 1e-12 * semi.max(axis=1))
    kw = dict(region=region, labels=labels)
    if region == "periodic":
        kw["box"] = edges.copy()
        pos = np.mod(pos, edges)
    elif region == "cube":
        kw["edges"] = edges.copy()
    if not is_sphere:
        kw["semi_axes"] = semi
        kw["rotations"] = rot if rot is not None else np.broadcast_to(np.eye(3), (len(semi), 3, 3)).copy()
    return Arrangement(np.ascontiguousarray(pos), semi.max(axis=1), R, description, **kw)


def _check_periodic(region, edges, bound):
    if region == "periodic" and edges[0] < 4.0 * bound.max():
        raise InputError(
            f"n_bodies: a periodic box of edge {edges[0]:.3g} is too small for bodies of bounding "
            f"radius {bound.max():.3g} (the edge must be at least 4 bounding radii); add bodies",
            "n_bodies",
        )


def _setup(n_bodies, n_min, volume_fraction, limit, beyond, region, sizes):
    """Checked common inputs of the packing generators and the region they fill."""
    n = as_int(n_bodies, "n_bodies", minimum=n_min)
    phi = as_positive(volume_fraction, "volume_fraction")
    if phi >= limit:
        raise InputError(f"volume_fraction: {phi} is beyond {beyond}; allowed < {limit}", "volume_fraction")
    check_choice(region, "region", PACK_REGIONS)
    semi, rot, bound = body_shapes(n, *sizes)
    volume = float(np.sum(4.0 / 3.0 * math.pi * np.prod(semi, axis=1))) / phi
    edges, R = _region_size(region, volume)
    _check_periodic(region, edges, bound)
    return n, phi, semi, rot, bound, edges, R


def random_sequential_addition(
    n_bodies,
    volume_fraction,
    radius=1.0,
    *,
    radii=None,
    semi_axes=None,
    rotations=None,
    region="sphere",
    rng=None,
    max_attempts=100_000,
):
    """Random non-overlapping bodies by random sequential addition.

    Bodies are placed one at a time at uniformly random positions in the region, a
    trial being rejected when it overlaps an earlier body. Overlap is exact: centre
    distance for spheres, the Perram-Wertheim contact function for spheroids and
    ellipsoids (each body keeps the orientation given in ``rotations``). A cell list
    makes each trial O(1). Larger bodies go first.

    Parameters
    ----------
    n_bodies : int
    volume_fraction : float
        Target body volume over region volume. Equal spheres jam near 0.384; use
        :func:`dense_packing` beyond about 0.3.
    radius : float
        Radius of every body (when neither ``radii`` nor ``semi_axes`` is given).
    radii : (n_bodies,) array_like, optional
        Per-body radii (polydisperse spheres).
    semi_axes : (3,) or (n_bodies, 3) array_like, optional
        Body-frame semi-axes (spheroids: ``(b, b, a)`` with ``a`` along the third axis).
    rotations : (3, 3) or (n_bodies, 3, 3) array_like, optional
        Body-to-lab rotations (see :func:`orientations`).
    region : {"sphere", "cube", "periodic"}
        Spherical or cubic sample (bodies stay inside), or a periodic cubic box.
    rng : numpy.random.Generator or int, optional
    max_attempts : int
        Consecutive failed trials after which the region counts as jammed (an error).

    Returns
    -------
    Arrangement
        Bodies in their original order.

    Examples
    --------
    >>> arr = random_sequential_addition(300, 0.2, region="periodic", rng=4)
    >>> arr.region, round(arr.volume_fraction, 6)
    ('periodic', 0.2)
    """
    n, phi, semi, rot, bound, edges, R = _setup(
        n_bodies, 1, volume_fraction, 0.5, "random sequential addition (use dense_packing)", region,
        (radius, radii, semi_axes, rotations),
    )  # fmt: skip
    tries = as_int(max_attempts, "max_attempts", minimum=1)
    rng = np.random.default_rng(rng)
    if region != "periodic" and np.any(2 * bound > edges[0]):
        raise InputError("radii: a body is larger than the sample region", "radii")
    bodies = K.Bodies(semi, rot)
    order = np.argsort(-bound, kind="stable")
    grid = K.make_grid(region, edges, 2.0 * bound.max(), n)
    pos, placed, _ = K.addition(bodies, order, grid, 1.0, rng, tries)
    if placed < n:
        raise InputError(
            f"volume_fraction: placed {placed} of {n} bodies, then {tries} trials in a row failed "
            f"at fraction {phi}; lower the fraction or use dense_packing",
            "volume_fraction",
        )
    desc = f"random sequential addition, {n} bodies, fraction {phi:g}, {region}"
    return _make_arrangement(pos, semi, rot, region, edges, R, desc)


def addition_kinetics(box_edge, radius, n_attempts, rng=None):
    """Coverage against time for addition of equal spheres to a periodic cube, run to saturation.

    Parameters
    ----------
    box_edge, radius : float
        Periodic cube edge and sphere radius (``box_edge >= 4 radius``).
    n_attempts : int
        Trials in all.
    rng : numpy.random.Generator or int, optional

    Returns
    -------
    times : (M,) ndarray
        Dimensionless time ``trials * v / V`` (``v`` a sphere's volume) at each success.
    fractions : (M,) ndarray
        Volume fraction after each success.
    """
    L = as_positive(box_edge, "box_edge")
    a = as_positive(radius, "radius")
    total = as_int(n_attempts, "n_attempts", minimum=1)
    if L < 4 * a:
        raise InputError(f"box_edge: {L} must be at least 4 radii ({4 * a})", "box_edge")
    v = 4.0 / 3.0 * math.pi * a**3
    cap = int(0.75 * L**3 / v) + 8
    bodies = K.Bodies(np.full((cap, 3), a))
    grid = K.make_grid("periodic", np.full(3, L), 2.0 * a, cap)
    rng = np.random.default_rng(rng)
    pos, placed, at = K.addition(bodies, np.arange(cap), grid, 1.0, rng, total, max_total=total)
    at = at[:placed]
    return (at + 1) * v / L**3, np.arange(1, placed + 1) * v / L**3


def dense_packing(
    n_bodies,
    volume_fraction,
    radius=1.0,
    *,
    radii=None,
    semi_axes=None,
    rotations=None,
    region="periodic",
    equilibration_sweeps=0,
    rng=None,
    max_steps=200_000,
    progress=None,
):
    """Dense random packing by overlap relaxation (collective rearrangement), optionally equilibrated.

    Bodies are first placed by random sequential addition at a reduced size (fraction
    0.25), then grown to full size at once and the overlaps removed by minimising the
    overlap energy ``sum (1 - mu_ij)^2`` (``mu_ij`` the exact contact scale of a pair,
    the Perram-Wertheim function for non-spheres) with the FIRE minimiser. Below the
    jamming fraction the energy reaches zero and the bodies are disjoint; equal
    spheres reach 0.62 in seconds and jam near 0.64. Orientations are kept. With
    ``equilibration_sweeps`` the result is then equilibrated by hard-body Metropolis
    Monte Carlo (single-body moves, step tuned to about 35 % acceptance), which samples
    the equilibrium hard-body fluid (phi < 0.494 for spheres).

    Parameters
    ----------
    n_bodies : int
    volume_fraction : float
        Target fraction (``< 0.64`` for equal spheres; less for broad size spreads is
        not required, but very elongated bodies jam earlier).
    radius, radii, semi_axes, rotations :
        As in :func:`random_sequential_addition`.
    region : {"periodic", "cube", "sphere"}
        Periodic cube (the default, no walls) or an open sample with hard walls.
    equilibration_sweeps : int
        Monte Carlo sweeps (N trial moves each) after relaxation.
    rng : numpy.random.Generator or int, optional
    max_steps : int
        Minimiser steps before the target counts as jammed (an error).
    progress : callable, optional
        Called as ``progress(stage, done, total)`` while the packing is built.

    Returns
    -------
    Arrangement

    References
    ----------
    Jodrey, W. S. and Tory, E. M. (1985). Computer simulation of close random packing
    of equal spheres. Phys. Rev. A 32, 2347 (collective rearrangement).
    O'Hern, C. S., Silbert, L. E., Liu, A. J. and Nagel, S. R. (2003). Jamming at zero
    temperature and zero applied stress. Phys. Rev. E 68, 011306 (overlap energy
    minimisation).
    Bitzek, E. et al. (2006). Structural relaxation made simple. Phys. Rev. Lett. 97,
    170201 (FIRE).

    Examples
    --------
    >>> arr = dense_packing(400, 0.55, rng=2)
    >>> round(arr.volume_fraction, 6)
    0.55
    """
    n, phi, semi, rot, bound, edges, R = _setup(
        n_bodies, 2, volume_fraction, 0.74, "any packing of equal spheres (0.7405)", region,
        (radius, radii, semi_axes, rotations),
    )  # fmt: skip
    n_eq = as_int(equilibration_sweeps, "equilibration_sweeps", minimum=0)
    steps = as_int(max_steps, "max_steps", minimum=1)
    rng = np.random.default_rng(rng)
    bodies = K.Bodies(semi, rot)
    step_max = 0.5 * float(semi.min())
    grid = K.make_grid(region, edges, 2.0 * bound.max() * (1 + 2 * _MARGIN) + 2.0 * step_max, n)
    order = np.argsort(-bound, kind="stable")
    s0 = min(1.0, (min(phi, 0.25) / phi) ** (1.0 / 3.0))
    pos, placed, _ = K.addition(bodies, order, grid, s0, rng, 100_000)
    if placed < n:  # pragma: no cover - a quarter fraction always fits
        raise InputError(f"volume_fraction: could not seed {n} bodies", "volume_fraction")
    if progress is not None:
        progress("seed", n, n)
    dmin = 2.0 * float(semi.min())
    done = 0
    pairs = walls = 1
    chunk = 2000
    while done < steps and (pairs or walls):
        m = min(chunk, steps - done)
        used, pairs, walls, _ = K.relax(pos, bodies, grid, 1.0 + _MARGIN, m, 0.02 * dmin, 0.25 * dmin)
        done += used
        if progress is not None:
            progress("relax", done, steps)
    if pairs or walls:
        raise InputError(
            f"volume_fraction: {phi} could not be reached ({pairs} overlapping pairs left after "
            f"{done} steps); random packings of equal spheres jam near 0.64, lower the fraction "
            "or raise max_steps",
            "volume_fraction",
        )
    desc = f"dense random packing, {n} bodies, fraction {phi:g}, {region}"
    arr = _make_arrangement(pos, semi, rot, region, edges, R, desc)
    if n_eq:
        arr = equilibrate(arr, n_eq, rng=rng, progress=progress)
    return arr


def equilibrate(arrangement, n_sweeps, *, rng=None, acceptance=0.35, progress=None):
    """Hard-body Metropolis Monte Carlo of an arrangement at fixed size and fraction.

    Each sweep is N trial moves of randomly chosen bodies by a uniform step; a move is
    accepted iff the moved body overlaps nothing (exact test) and stays inside the
    sample (open regions have hard walls: a sphere's by the bounding radius, a cube's by
    the exact support function). The step is tuned during the first half of the sweeps
    toward the target ``acceptance`` and then held. Orientations are kept.

    Parameters
    ----------
    arrangement : Arrangement
        A non-overlapping arrangement with ``region`` "periodic", "cube" or "sphere".
    n_sweeps : int
    rng : numpy.random.Generator or int, optional
    acceptance : float
        Target acceptance ratio while the step is tuned.
    progress : callable, optional
        ``progress("equilibrate", done, total)``.

    Returns
    -------
    Arrangement
        Same bodies, new positions; the description records the sweeps.
    """
    arr = arrangement
    if arr.region not in PACK_REGIONS:
        raise InputError(f"region: equilibrate needs one of {PACK_REGIONS}, got {arr.region!r}", "region")
    total = as_int(n_sweeps, "n_sweeps", minimum=1)
    target = as_positive(acceptance, "acceptance")
    rng = np.random.default_rng(rng)
    semi = np.asarray(arr.body_semi_axes, dtype=float)
    rot = None if arr.rotations is None else np.asarray(arr.rotations)
    if arr.region == "periodic":
        edges = np.asarray(arr.box, dtype=float)
    elif arr.region == "cube":
        edges = np.asarray(arr.edges, dtype=float)
    else:
        edges = np.full(3, 2.0 * float(arr.sample_radius))
    bodies = K.Bodies(semi, rot)
    step_max = 0.5 * float(semi.min())
    grid = K.make_grid(arr.region, edges, 2.0 * float(semi.max()) + 2.0 * step_max, arr.n_bodies)
    pos = np.array(arr.positions, dtype=float)
    if K.contact_scale(pos, bodies, grid) < 1.0 - 1e-9:
        raise InputError(
            "positions: the arrangement has overlaps; equilibrate needs disjoint bodies", "positions"
        )
    delta = 0.25 * step_max
    done = 0
    tune = total // 2
    while done < total:
        m = min(max(1, total // 20), total - done)
        acc = K.sweeps(pos, bodies, grid, 1.0, delta, rng, m)
        if done < tune:
            delta = float(np.clip(delta * np.clip(acc / target, 0.5, 2.0), 1e-6 * step_max, step_max))
        done += m
        if progress is not None:
            progress("equilibrate", done, total)
    desc = f"{arr.description}; {total} Monte Carlo sweeps"
    return arr.replace(positions=pos, description=desc)
