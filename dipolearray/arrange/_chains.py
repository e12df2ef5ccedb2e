"""Field-induced structures: chains along the field with a length distribution, sheets and columns."""

from __future__ import annotations

import math

import numpy as np

from .._validate import as_float_array, as_int, as_positive, check_choice
from ..errors import InputError
from ..shapes import rotation_to_axis
from ._clusters import place_groups
from ._packing import PACK_REGIONS, _region_size

LENGTH_DISTRIBUTIONS = ("fixed", "geometric", "poisson")
CHAIN_LAYOUTS = ("chains", "sheets", "columns")


def chain_lengths(n_bodies, mean_length, distribution="fixed", rng=None, max_length=None):
    """Bodies per chain, drawn until ``n_bodies`` are used (the last chain takes the remainder).

    ``fixed``: every chain ``mean_length`` long; ``geometric``: ``P(k) = p (1 - p)^(k-1)``
    with ``p = 1/mean_length`` (the exponential length spread of irreversibly grown
    chains, common practice, no source); ``poisson``: ``1 + Poisson(mean_length - 1)``.
    Draws longer than ``max_length`` are cut to it.
    """
    n = as_int(n_bodies, "n_bodies", minimum=1)
    mean = as_positive(mean_length, "mean_length")
    if mean < 1:
        raise InputError(f"mean_length: {mean} must be at least 1", "mean_length")
    check_choice(distribution, "distribution", LENGTH_DISTRIBUTIONS)
    rng = np.random.default_rng(rng)
    out = []
    left = n
    while left > 0:
        if distribution == "fixed":
            k = int(round(mean))
        elif distribution == "geometric":
            k = int(rng.geometric(1.0 / mean))
        else:
            k = 1 + int(rng.poisson(mean - 1.0))
        if max_length is not None:
            k = min(k, int(max_length))
        k = max(1, min(k, left))
        out.append(k)
        left -= k
    return np.array(out, dtype=np.int64)


def _tilt(sigma_rad, rng):
    """Rotation tilting z by a 2D-Gaussian angle of standard deviation ``sigma`` per component."""
    if sigma_rad == 0:
        return np.eye(3)
    tx, ty = rng.normal(0.0, sigma_rad, 2)
    angle = math.hypot(tx, ty)
    if angle == 0:
        return np.eye(3)
    k = np.array([-ty, tx, 0.0]) / angle
    K = np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]])
    return np.eye(3) + math.sin(angle) * K + (1 - math.cos(angle)) * K @ K


def _cross_section(n_chains, layout, lateral):
    """Lateral chain positions (and axial stagger) of a sheet or a column."""
    if layout == "chains" or n_chains == 1:
        return np.zeros((1, 2)), np.zeros(1)
    if layout == "sheets":
        x = (np.arange(n_chains) - (n_chains - 1) / 2) * lateral
        return np.stack([x, np.zeros(n_chains)], 1), np.zeros(n_chains)
    # Columns: the body-centred tetragonal cross-section, neighbouring chains staggered by
    # half a spacing so they nest (lateral distance sqrt(3) r at contact).
    m = int(math.ceil(math.sqrt(n_chains))) + 2
    ij = np.stack(np.meshgrid(np.arange(-m, m + 1), np.arange(-m, m + 1), indexing="ij"), -1).reshape(-1, 2)
    d = np.linalg.norm(ij, axis=1) + 1e-9 * (ij[:, 0] + 0.5 * ij[:, 1])
    ij = ij[np.argsort(d, kind="stable")[:n_chains]]
    return ij * lateral, (ij.sum(axis=1) % 2).astype(float)


def _check_spanning(region, u, distribution, tilt_deg):
    if region != "periodic":
        raise InputError("spanning: box-spanning chains need region = 'periodic'", "spanning")
    if abs(abs(u[2]) - np.linalg.norm(u)) > 1e-12:
        raise InputError("axis: box-spanning chains run along z, give axis = (0, 0, 1)", "axis")
    if distribution != "fixed":
        raise InputError(
            "distribution: box-spanning chains all have mean_length bodies ('fixed')", "distribution"
        )
    if tilt_deg:
        raise InputError("misalignment: box-spanning chains are straight (0)", "misalignment")


def _spanning_chains(n, a, g, volume_fraction, mean_length, layout, per, rng):
    k = int(round(float(mean_length)))
    if n % k:
        raise InputError(f"n_bodies: {n} is not a whole number of chains of {k}", "n_bodies")
    spacing = 2 * a + g
    phi = as_positive(volume_fraction, "volume_fraction")
    Lz = k * spacing
    Lx = math.sqrt(n * 4.0 / 3.0 * math.pi * a**3 / phi / Lz)
    lateral = spacing if layout == "sheets" else math.sqrt(3.0) * (a + g / 2)
    n_chains = n // k
    groups, ids = [], []
    for first in range(0, n_chains, per):
        m = min(per, n_chains - first)
        xy, stagger = _cross_section(m, layout, lateral)
        members = []
        for c in range(m):
            z = (np.arange(k) + 0.5 * stagger[c]) * spacing
            members.append(np.column_stack([np.full(k, xy[c, 0]), np.full(k, xy[c, 1]), z]))
            ids.append(np.full(k, first + c))
        groups.append(np.concatenate(members))
    arr = place_groups(
        groups, a, phi, region="periodic", rotate=(0.0, 0.0, 1.0), rng=rng, box_aspect=(Lx, Lx, Lz), wrap=True
    )
    desc = (
        f"{n_chains} box-spanning chains of {k}, layout {layout}, {n} bodies, fraction {phi:g}, "
        f"periodic {Lx:.4g} x {Lx:.4g} x {Lz:.4g}"
    )
    return arr.replace(groups=np.concatenate(ids), description=desc)


def field_chains(
    n_bodies,
    volume_fraction,
    *,
    mean_length,
    distribution="fixed",
    radius=1.0,
    gap=0.0,
    misalignment=0.0,
    axis=(0.0, 0.0, 1.0),
    layout="chains",
    chains_per_group=1,
    region="sphere",
    rng=None,
    spanning=False,
):
    """Chains of spheres along the field, as an electrorheological fluid forms them under a field.

    Chains (or sheets or columns of chains) are rigid groups placed at random lateral
    and axial positions without overlap (random sequential addition of whole groups).

    Parameters
    ----------
    n_bodies : int
    volume_fraction : float
        Overall sphere fraction.
    mean_length : float
        Mean bodies per chain.
    distribution : {"fixed", "geometric", "poisson"}
        Chain length distribution (see :func:`chain_lengths`); chains are cut to what
        the sample holds (half a periodic box, 60 % of a sphere's or 80 % of a cube's
        extent), so a long tail becomes more, shorter chains.
    radius : float
    gap : float
        Surface gap between neighbours along a chain (and between chains in a group).
    misalignment : float
        Standard deviation (degrees) of each chain's (or group's) tilt away from the
        field, per transverse component.
    axis : (3,) array_like
        Field direction.
    layout : {"chains", "sheets", "columns"}
        Single chains; sheets of ``chains_per_group`` chains side by side in a plane
        containing the field; or columns of ``chains_per_group`` chains with the
        body-centred tetragonal cross-section of electrorheological solids.
    chains_per_group : int
        Chains per sheet or column (1 for single chains).
    region : {"sphere", "cube", "periodic"}
    rng : numpy.random.Generator or int, optional
    spanning : bool
        Chains that close on themselves across a periodic box (infinite chains, the
        electrode-to-electrode chains of a saturated fluid): the box is stretched along z
        to exactly ``mean_length`` spacings, and needs ``region="periodic"``,
        ``axis`` along z, ``distribution="fixed"`` and no misalignment.

    Returns
    -------
    Arrangement
        ``groups`` give each body's chain.

    Examples
    --------
    >>> arr = field_chains(1000, 0.05, mean_length=10, rng=3)
    >>> int(arr.groups.max()) + 1, arr.n_bodies
    (100, 1000)
    """
    n = as_int(n_bodies, "n_bodies", minimum=1)
    a = as_positive(radius, "radius")
    g = as_positive(gap, "gap", allow_zero=True)
    tilt_deg = as_positive(misalignment, "misalignment", allow_zero=True)
    if tilt_deg > 90:
        raise InputError(f"misalignment: {tilt_deg} degrees is above 90", "misalignment")
    u = as_float_array(axis, "axis", (3,))
    if not np.linalg.norm(u):
        raise InputError("axis: must be a non-zero vector", "axis")
    check_choice(layout, "layout", CHAIN_LAYOUTS)
    per = as_int(chains_per_group, "chains_per_group", minimum=1)
    if layout == "chains" and per != 1:
        raise InputError(
            "chains_per_group: only layout 'sheets' or 'columns' groups chains", "chains_per_group"
        )
    rng = np.random.default_rng(rng)
    spacing = 2 * a + g
    check_choice(region, "region", PACK_REGIONS)
    if spanning:
        _check_spanning(region, u, distribution, tilt_deg)
        return _spanning_chains(n, a, g, volume_fraction, mean_length, layout, per, rng)
    edges, _ = _region_size(
        region, n * 4.0 / 3.0 * math.pi * a**3 / as_positive(volume_fraction, "volume_fraction")
    )
    # Longest chain that fits: half a periodic box, most of an open sample's extent.
    reach = 0.5 * edges[0] - a if region == "periodic" else (0.6 if region == "sphere" else 0.8) * edges[0]
    longest = max(1, int(reach // spacing))
    lengths = chain_lengths(n, mean_length, distribution, rng, max_length=longest)
    frame = rotation_to_axis(u)
    lateral = spacing if layout == "sheets" else math.sqrt(3.0) * (a + g / 2)
    groups, chain_of_body = [], []
    k = 0
    chain_id = 0
    while k < len(lengths):
        take = lengths[k : k + per]
        k += per
        xy, stagger = _cross_section(len(take), layout, lateral)
        members = []
        tilt = _tilt(math.radians(tilt_deg), rng)
        for c, m in enumerate(take):
            z = (np.arange(m) - (m - 1) / 2 + 0.5 * stagger[c]) * spacing
            local = np.column_stack([np.full(m, xy[c, 0]), np.full(m, xy[c, 1]), z])
            members.append(local @ tilt.T)
            chain_of_body.append(np.full(m, chain_id))
            chain_id += 1
        groups.append(np.concatenate(members) @ frame.T)
    arr = place_groups(groups, a, volume_fraction, region=region, rotate=u / np.linalg.norm(u), rng=rng)
    chain_ids = np.concatenate(chain_of_body)
    # place_groups keeps each group's bodies in input order, groups in input order.
    desc = (
        f"{chain_id} field chains ({distribution}, mean {float(mean_length):g}), layout {layout}, "
        f"misalignment {tilt_deg:g} deg, {n} bodies, fraction {float(volume_fraction):g}, {region}"
    )
    return arr.replace(groups=chain_ids, description=desc)
