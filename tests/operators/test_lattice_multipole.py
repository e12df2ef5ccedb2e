"""Periodic multipoles: lattice sums, the translation tensor, the lattice-sum operator."""

import warnings

import numpy as np
import pytest

from dipolearray import Material, Population, Scene, Sphere, solve
from dipolearray.errors import InputError
from dipolearray.operators import make_operator
from dipolearray.operators._harmonics import degree_slices, n_unknowns, quarter_turn_blocks, solid_harmonics
from dipolearray.operators._kernels import multipole_near_field
from dipolearray.operators._lattice import LatticeMultipoleOperator, lattice_sums, translation_tensor
from dipolearray.operators._multipole import _kernel_axial

BOX = np.array([1.0, 1.2, 0.9])


def _quiet_solve(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return solve(*args, **kwargs)


def _brute_force(r, box, degree, n_cells):
    """Plain sum over the images in a ball of radius 0.85 n_cells min(box) (the definition)."""
    g = np.meshgrid(*[np.arange(-n_cells, n_cells + 1)] * 3, indexing="ij")
    v = r + np.stack([x.ravel() for x in g], axis=1) * box
    d = np.linalg.norm(v, axis=1)
    v = v[(d > 1e-9) & (d < 0.85 * n_cells * box.min())]
    return solid_harmonics(v, degree, "irregular").sum(axis=0)


def test_lattice_sums_match_the_plain_image_sum():
    # Absolutely convergent for degree >= 3; the plain ball sum is the definition (its own
    # truncation error falls like R^(2-n), so it is compared degree by degree).
    r = np.array([[0.0, 0.0, 0.0], [0.31, -0.22, 0.4], [0.05, 0.5, -0.3]])
    S = lattice_sums(r, BOX, 10, accuracy=1e-13)
    for p in range(r.shape[0]):
        ref = _brute_force(r[p], BOX, 10, 30)
        for n, a, b in degree_slices(10):
            if n < 5:
                continue
            scale = np.max(np.abs(ref[a:b])) + 1.0
            assert np.max(np.abs(S[p, a:b] - ref[a:b])) < 10.0 ** (3 - n) * scale, (p, n)
        assert not np.any(S[p, :8])  # degrees 1 and 2 are left to the Ewald dipole backend


def test_lattice_sums_do_not_depend_on_the_splitting():
    r = np.array([[0.0, 0.0, 0.0], [0.31, -0.22, 0.4], [0.45, 0.55, 0.4]])
    S1 = lattice_sums(r, BOX, 16, accuracy=1e-14)
    for scale in (0.6, 1.7):
        S2 = lattice_sums(r, BOX, 16, accuracy=1e-14, alpha_scale=scale)
        for n, a, b in degree_slices(16):
            if n >= 3:
                tol = 1e-11 * max(1.0, np.max(np.abs(S1[:, a:b])))
                np.testing.assert_allclose(S2[:, a:b], S1[:, a:b], atol=tol)


def test_cubic_symmetry_of_the_simple_cubic_sums():
    # On a cubic lattice the own-image sums of odd degree and of degree 2 mod 4 that are
    # not cubic invariants vanish; degree 4 keeps only the cubic combination.
    S = lattice_sums(np.zeros((1, 3)), np.ones(3), 8)[0]
    for n, a, b in degree_slices(8):
        if n % 2 == 1 and n >= 3:
            assert np.max(np.abs(S[a:b])) < 1e-12
    a4 = degree_slices(4)[-1][1]
    s4 = S[a4 : a4 + 9]
    assert abs(s4[4]) > 1.0  # m = 0 (the cubic harmonic x^4 + y^4 + z^4 - 3/5 r^4 has m = 0 and 4)
    nonzero = {k - 4 for k in np.nonzero(np.abs(s4) > 1e-10)[0]}
    assert nonzero == {0, 4}


@pytest.mark.parametrize("L", [2, 6])
def test_translation_tensor_reproduces_the_rotation_kernel(L):
    C = translation_tensor(L)
    M = n_unknowns(L)
    r = np.array([0.7, -1.3, 2.1])
    T = (C @ solid_harmonics(r[None], 2 * L, "irregular")[0]).reshape(M, M)
    x = np.zeros((2, M, M))
    x[1] = np.eye(M)
    out = np.zeros_like(x)
    multipole_near_field(
        np.stack([r, np.zeros(3)]), np.array([L, L]), np.array([0, 1, 1]), np.array([1]), np.array([L]),
        quarter_turn_blocks(L), quarter_turn_blocks(L, True), _kernel_axial(L + 1), x, out,
    )  # fmt: skip
    np.testing.assert_allclose(T, -out[0], atol=1e-14 * np.max(np.abs(out)))


def _cell(n=4, box=7.0, seed=3, eps=8.0):
    rng = np.random.default_rng(seed)
    pos = []
    while len(pos) < n:
        c = rng.uniform(0, box, 3)
        ok = True
        for q in pos:
            dv = c - q
            dv -= box * np.round(dv / box)
            ok &= np.linalg.norm(dv) > 2.1
        if ok:
            pos.append(c)
    return Scene(np.array(pos), Population(Sphere(1.0), Material(eps)), boundary="periodic", box=[box] * 3)


def test_order_one_is_the_ewald_dipole_solve():
    s = _cell()
    op = make_operator(s, "multipole", order=1)
    assert isinstance(op, LatticeMultipoleOperator) and op.n_per_body == 3
    a = _quiet_solve(s, operator=op, rtol=1e-13)
    b = _quiet_solve(s, backend="ewald", rtol=1e-13)
    np.testing.assert_allclose(a.moments, b.moments, rtol=1e-10, atol=1e-12 * np.abs(b.moments).max())


def test_operator_is_symmetric_and_solvers_agree_on_lossy_spheres():
    s = _cell(n=3, eps=12.0 - 3.0j)
    op = make_operator(s, "multipole", order=4)
    n, m = op.n_bodies, op.n_per_body
    eye = np.eye(n * m).reshape(n * m, n, m).transpose(1, 2, 0)
    G = op.apply(eye).reshape(n * m, n * m)
    np.testing.assert_allclose(G, G.T, atol=1e-12 * np.abs(G).max())
    d = _quiet_solve(s, operator=op, method="direct")
    c = _quiet_solve(s, operator=op, method="cocg", rtol=1e-12)
    np.testing.assert_allclose(c.multipoles, d.multipoles, atol=1e-9 * np.abs(d.multipoles).max())
    # Higher multipoles matter at gaps of 0.1 radius and are absent at order 1.
    assert np.abs(d.multipoles[:, 3:]).max() > 1e-3 * np.abs(d.multipoles[:, :3]).max()


def test_bad_input_names_the_key():
    s = _cell(n=2)
    with pytest.raises(InputError, match="order"):
        make_operator(s, "multipole", order=31)
    with pytest.raises(InputError, match="dipole_backend"):
        make_operator(s, "multipole", dipole_backend="direct")
    with pytest.raises(InputError, match="forces"):
        make_operator(s, "multipole", order=3).near_potential(np.zeros((2, 15, 1)))


def test_oversized_coupling_is_refused_before_it_is_built(monkeypatch):
    import dipolearray.operators._lattice as lat

    monkeypatch.setattr(lat, "MAX_COUPLING_ENTRIES", 100)
    with pytest.raises(InputError, match="coupling numbers"):
        make_operator(_cell(n=3), "multipole", order=4)


def test_field_maps_are_periodic_and_reduce_to_ewald_at_order_one():
    s = _cell(n=3)
    rng = np.random.default_rng(2)
    pts = rng.uniform(0, 7.0, (40, 3))
    op = make_operator(s, "multipole", order=6)
    sol = _quiet_solve(s, operator=op, rtol=1e-12)
    x = np.asarray(sol.multipoles)
    far = np.min([np.linalg.norm(op._min_image(pts - c), axis=1) for c in op._positions], axis=0) > 1.2
    e1 = op.field_at(pts[far], x)
    e2 = op.field_at(pts[far] + [7.0, -14.0, 7.0], x)
    np.testing.assert_allclose(e1, e2, atol=1e-12 * np.abs(e1).max())
    ew = make_operator(s, "ewald")
    dip = np.asarray(ew.field_at(pts[far], x[:, :3]))
    high = e1 - dip  # the higher multipoles add a visible part near the close pairs
    assert np.abs(high).max() > 1e-4 * np.abs(dip).max()
    op1 = make_operator(s, "multipole", order=1)
    np.testing.assert_allclose(op1.field_at(pts[far], x[:, :3]), dip, atol=1e-12 * np.abs(dip).max())
