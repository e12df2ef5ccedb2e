"""Ewald operator: against a plain spherical image sum, symmetry, invariances and accuracy control."""

import math

import numpy as np
import pytest

import dipolearray as da
from dipolearray.arrange import random_sequential_addition
from dipolearray.operators import EwaldOperator, ewald_parameters

POP = da.Population(da.Sphere(1.0), da.Material(8.0))


def _scene(n=30, phi=0.15, seed=1):
    arr = random_sequential_addition(n, phi, region="periodic", rng=seed)
    return da.Scene.from_arrangement(arr, POP)


def _spherical_image_sum(pos, p, box, n_shells):
    """Field at each body from all images within a sphere of n_shells boxes, in vacuum."""
    m = np.arange(-n_shells, n_shells + 1)
    shifts = np.stack(np.meshgrid(m, m, m, indexing="ij"), -1).reshape(-1, 3) * box
    shifts = shifts[np.linalg.norm(shifts, axis=1) <= n_shells * box.min()]
    out = np.zeros_like(p)
    for i in range(len(pos)):
        r = pos[i] - (pos[None, :, :] + shifts[:, None, :])  # (S, N, 3)
        r = r.reshape(-1, 3)
        pj = np.tile(p, (len(shifts), 1))
        d = np.linalg.norm(r, axis=1)
        ok = d > 1e-9
        r, pj, d = r[ok], pj[ok], d[ok]
        u = r / d[:, None]
        out[i] = np.sum((3 * u * np.sum(u * pj, axis=1, keepdims=True) - pj) / d[:, None] ** 3, axis=0)
    return out


def test_matches_spherical_image_sum_plus_surface_term():
    """A sphere of periodic images in vacuum adds the depolarizing field -4 pi M / (3 V) to the
    tin-foil (conducting boundary) result (de Leeuw, Perram & Smith 1980)."""
    rng = np.random.default_rng(0)
    box = np.array([9.0, 10.0, 11.0])
    pos = np.array([[1.0, 2.0, 3.0], [5.0, 7.0, 2.0], [8.0, 1.0, 9.0]])
    p = rng.normal(size=(3, 3))
    s = da.Scene(pos, da.Population(da.Sphere(1.0), da.Material(5.0)), boundary="periodic", box=box)
    E = EwaldOperator(s).apply(p)
    V = float(np.prod(box))
    vacuum = _spherical_image_sum(pos, p, box, 30)
    surface = 4 * math.pi / (3 * V) * p.sum(axis=0)
    # The sharp spherical cutoff leaves shell-surface fluctuations of order 1e-3 here.
    tol = 2e-3 * np.abs(E).max()
    np.testing.assert_allclose(E, vacuum + surface, atol=tol)
    assert np.abs(E - vacuum).max() > 10 * tol  # the surface term matters and is the right one


def test_dense_is_symmetric_and_translation_invariant():
    s = _scene(20)
    T = EwaldOperator(s).dense()
    np.testing.assert_allclose(T, T.T, atol=1e-11 * np.abs(T).max())
    shifted = s.replace(positions=s.positions + np.array([3.3, -1.7, 5.1]))
    T2 = EwaldOperator(shifted).dense()
    np.testing.assert_allclose(T2, T, atol=1e-10 * np.abs(T).max())


def test_accuracy_controls_the_error():
    s = _scene(40)
    rng = np.random.default_rng(2)
    p = rng.normal(size=(s.n_bodies, 3, 2))
    ref = EwaldOperator(s, accuracy=1e-14).apply(p)
    scale = np.abs(ref).max()
    for acc in (1e-5, 1e-8, 1e-11):
        op = EwaldOperator(s, accuracy=acc)
        err = np.abs(op.apply(p) - ref).max() / scale
        assert err < acc
    a1, rc1, kc1 = ewald_parameters(s.box, s.n_bodies, 1e-6)
    a2, rc2, kc2 = ewald_parameters(s.box, s.n_bodies, 1e-12)
    assert rc2 > rc1 * 0.99 and kc2 > kc1 and rc1 <= s.box.min() / 2


def test_complex_and_batched_applies_agree():
    s = _scene(25)
    op = EwaldOperator(s)
    rng = np.random.default_rng(3)
    x = rng.normal(size=(s.n_bodies, 3, 3)) + 1j * rng.normal(size=(s.n_bodies, 3, 3))
    y = op.apply(x)
    for k in range(3):
        np.testing.assert_allclose(
            op.apply(x[:, :, k].real) + 1j * op.apply(x[:, :, k].imag), y[:, :, k], atol=1e-12
        )


def test_backend_choice_and_errors():
    s = _scene(10)
    op = da.make_operator(s)
    assert op.backend == "ewald" and "alpha" in op.reason
    with pytest.raises(da.InputError, match="backend"):
        da.make_operator(s, "direct")
    with pytest.raises(da.InputError, match="backend"):
        EwaldOperator(da.Scene([[0, 0, 0]], POP))
    with pytest.raises(da.InputError, match="accuracy"):
        EwaldOperator(s, accuracy=0.5)


@pytest.mark.parametrize("eps", [20.0, 20.0 - 1.0j], ids=["real", "complex"])
def test_field_at_points_equals_the_field_at_zero_moment_ghost_bodies(eps):
    # Independent path: the Ewald operator's own apply, with tiny ghost bodies carrying no
    # moment at the probe points, gives the field of all bodies and images there.
    from dipolearray.arrange import random_sequential_addition
    from dipolearray.operators import make_operator

    arr = random_sequential_addition(50, 0.15, region="periodic", rng=2)
    box = arr.box
    pop = da.Population(da.Sphere(1.0), da.Material(eps))
    sc = da.Scene.from_arrangement(arr, pop, host=da.Material(2.0))
    sol = da.solve(sc)
    rng = np.random.default_rng(0)
    pts = []
    while len(pts) < 6:
        x = rng.uniform(-0.5, 1.5, 3) * box  # also outside the primary cell: wrapped
        d = x - sc.positions
        d -= box * np.round(d / box)
        if np.min(np.linalg.norm(d, axis=1)) > 1.2:
            pts.append(x)
    pts = np.array(pts)
    field = make_operator(sc).field_at(pts, np.asarray(sol.moments))
    ghost = da.Population(da.Sphere(0.01), da.Material(1.0))
    sc2 = da.Scene(
        np.vstack([sc.positions, np.mod(pts, box)]),
        (pop, ghost),
        population_index=np.r_[np.zeros(50, int), np.ones(6, int)],
        host=da.Material(2.0),
        boundary="periodic",
        box=box,
    )
    moments = np.concatenate(
        [np.asarray(sol.moments), np.zeros((6, 3, 3), dtype=np.asarray(sol.moments).dtype)]
    )
    ref = make_operator(sc2).apply(moments)[50:]
    assert np.max(np.abs(field - ref)) < 1e-8 * np.max(np.abs(ref))


def test_periodic_field_slice_and_outlines():
    from dipolearray.arrange import lattice
    from dipolearray.observables import field_slice, slice_outlines

    arr = lattice("sc", radius=1.0, volume_fraction=0.2, sample="periodic", cells=2)
    sc = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(10.0)), host=da.Material(1.0)
    )
    sol = da.solve(sc)
    d = field_slice(sol, normal="x", offset=float(sc.positions[0, 0]), resolution=41)
    a = float(sc.box[0]) / 2
    # Cubic symmetry: the map repeats with the lattice constant along both in-plane axes.
    np.testing.assert_allclose(d["magnitude"][:21, :21], d["magnitude"][20:, 20:], rtol=1e-6)
    assert d["u"][-1] == pytest.approx(2 * a)
    cuts = slice_outlines(sc, "x", float(sc.positions[0, 0]))
    # Four bodies of the plane plus the images reaching into the box across its edges.
    assert len(cuts) >= 4
    np.testing.assert_allclose(cuts[:, 2], 2.0)  # full width of a central cut
