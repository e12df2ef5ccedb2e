"""Multipole backend: harmonics, rotations, translations, operator contract, forces."""

import warnings

import numpy as np
import pytest

from dipolearray import Material, Population, Scene, Sphere, Spheroid, solve
from dipolearray.errors import InputError
from dipolearray.observables import energy, forces
from dipolearray.operators import MultipoleOperator, make_operator, pair_dipoles, sphere_response
from dipolearray.operators._harmonics import (
    axial_coefficients,
    degree_slices,
    flat_index,
    n_unknowns,
    quarter_turn,
    rotate_into,
    solid_harmonics,
    z_derivative_weights,
)


def _quiet_solve(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return solve(*args, **kwargs)


def test_addition_theorem_of_the_basis():
    # 1/|r - r'| = 1/r + sum_{l>=1} R_lm(r') I_lm(r) for |r'| < |r| (Legendre addition theorem).
    r = np.array([[0.3, -1.2, 2.0]])
    rp = np.array([[0.2, 0.1, -0.3]])
    s = float(solid_harmonics(rp, 40)[0] @ solid_harmonics(r, 40, "irregular")[0])
    assert s + 1 / np.linalg.norm(r) == pytest.approx(1 / np.linalg.norm(r - rp), rel=1e-13)


def test_dipole_degree_is_cartesian():
    pts = np.random.default_rng(0).standard_normal((4, 3))
    np.testing.assert_allclose(solid_harmonics(pts, 1), pts, atol=1e-15)
    r3 = np.linalg.norm(pts, axis=1) ** 3
    np.testing.assert_allclose(solid_harmonics(pts, 1, "irregular"), pts / r3[:, None], rtol=1e-14)


@pytest.mark.parametrize("l", [1, 2, 5, 12, 25])
def test_quarter_turn_represents_the_rotation(l):  # noqa: E741
    rng = np.random.default_rng(l)
    u = rng.standard_normal((6, 3))
    u /= np.linalg.norm(u, axis=1)[:, None]
    at_u = np.stack([u[:, 0], u[:, 2], -u[:, 1]], axis=1)  # A^T u, A = Rx(+pi/2)
    a, b = degree_slices(l)[-1][1:]
    X = quarter_turn(l)
    lhs = solid_harmonics(at_u, l)[:, a:b]
    np.testing.assert_allclose(lhs, solid_harmonics(u, l)[:, a:b] @ X.T, atol=1e-13)
    np.testing.assert_allclose(X @ X.T, np.eye(2 * l + 1), atol=1e-13)


def test_axial_translation_against_direct_evaluation():
    rng = np.random.default_rng(1)
    L, J, t = 10, 60, 2.5
    A = axial_coefficients(J, L)
    rho = rng.standard_normal((3, 3)) * 0.3
    irr = solid_harmonics(rho + [0, 0, t], L, "irregular")
    reg = solid_harmonics(rho, J)
    for l in range(1, L + 1):
        for m in range(-l, l + 1):
            val = A[0, l, 0] / t ** (l + 1) * (m == 0)
            for j in range(max(1, abs(m)), J + 1):
                val = val + A[j, l, abs(m)] * reg[:, flat_index(j, m)] / t ** (l + j + 1)
            np.testing.assert_allclose(val, irr[:, flat_index(l, m)], rtol=1e-12, atol=1e-14)


def test_rotation_into_a_direction():
    rng = np.random.default_rng(2)
    L = 6
    n = rng.standard_normal(3)
    n /= np.linalg.norm(n)
    u = rng.standard_normal((1, n_unknowns(L)))
    ur = rotate_into(u, L, n)
    # The rotated coefficients describe the same function in a frame whose z axis is n.
    pts = rng.standard_normal((5, 3))
    theta, phi = np.arccos(n[2]), np.arctan2(n[1], n[0])
    cz, sz = np.cos(phi), np.sin(phi)
    ct, st = np.cos(theta), np.sin(theta)
    Rz = np.array([[cz, sz, 0], [-sz, cz, 0], [0, 0, 1]])  # rotation by -phi about z
    Ry = np.array([[ct, 0, -st], [0, 1, 0], [st, 0, ct]])  # rotation by -theta about y
    A = Ry @ Rz  # maps n to e_z
    np.testing.assert_allclose(A @ n, [0, 0, 1], atol=1e-14)
    lab = solid_harmonics(pts, L, "irregular") @ u[0]
    frame = solid_harmonics(pts @ A.T, L, "irregular") @ ur[0]
    np.testing.assert_allclose(frame, lab, rtol=1e-12)


def test_z_derivative_weights():
    rng = np.random.default_rng(3)
    L = 7
    pts = rng.standard_normal((4, 3))
    h = 1e-6
    dz = (solid_harmonics(pts + [0, 0, h], L) - solid_harmonics(pts - [0, 0, h], L)) / (2 * h)
    w = z_derivative_weights(L)
    for l in range(2, L + 1):
        for m in range(-(l - 1), l):
            ref = w[l, abs(m)] * solid_harmonics(pts, L)[:, flat_index(l - 1, m)]
            np.testing.assert_allclose(dz[:, flat_index(l, m)], ref, atol=1e-7)


def test_sphere_response_limits():
    # Jackson (1999), eq. 4.54: the dipole degree is the Clausius-Mossotti factor.
    assert sphere_response(1, 10.0, 2.0) == pytest.approx((10 - 2) / (10 + 4))
    assert sphere_response(7, 1e15, 1.0) == pytest.approx(1.0)
    assert sphere_response(3, 2.0, 2.0) == 0.0


def _scene(pos, eps=10.0, field=None, radius=1.0):
    return Scene(np.asarray(pos, float), Population(Sphere(radius), Material(eps)),
                 field=np.eye(3) if field is None else field)  # fmt: skip


POS = np.array([[0, 0, 0], [2.05, 0, 0.0], [0.5, 2.1, 0.3], [4.0, 1.0, 1.0], [-1.0, -2.0, 1.5]])


def test_apply_against_direct_evaluation_of_the_expansions():
    s = _scene(POS)
    op = MultipoleOperator(s, order=6, accuracy=1e-14)
    rng = np.random.default_rng(4)
    x = rng.standard_normal((5, op.n_per_body, 2))
    y = op.apply(x)
    rho = rng.standard_normal((4, 3)) * 0.002  # small: the local expansion stops at degree 6
    for i in range(5):
        for k in range(2):
            pot = sum(
                solid_harmonics(POS[i] + rho - POS[j], 6, "irregular") @ x[j, :, k]
                for j in range(5)
                if j != i
            )
            pot0 = sum(
                solid_harmonics((POS[i] - POS[j])[None], 6, "irregular") @ x[j, :, k]
                for j in range(5)
                if j != i
            )
            loc = -(solid_harmonics(rho, 6) @ y[i, :, k])  # F = -V
            np.testing.assert_allclose(loc, pot - pot0, rtol=1e-9, atol=1e-15)


def test_operator_is_symmetric_in_the_racah_basis():
    # The interaction energy sum Q_i G_ij Q_j is symmetric under i <-> j (reciprocity).
    op = MultipoleOperator(_scene(POS), order=4, accuracy=1e-14)
    G = op.dense()
    np.testing.assert_allclose(G, G.T, atol=1e-12 * np.abs(G).max())


def test_order_one_reproduces_the_point_dipole_backend():
    s = _scene(POS)
    ref = _quiet_solve(s, rtol=1e-13)
    op = MultipoleOperator(s, order=1, accuracy=1e-14)
    assert op.n_per_body == 3
    sol = _quiet_solve(s, rtol=1e-13, operator=op)
    np.testing.assert_allclose(sol.moments, ref.moments, rtol=0, atol=1e-14)
    x = np.random.default_rng(5).standard_normal((5, 3, 3))
    np.testing.assert_allclose(op.apply(x), make_operator(s, "direct").apply(x), atol=1e-14)


def test_three_dimensional_operator_matches_the_axial_pair_model():
    # Two spheres on an arbitrary axis: the rotate-translate-rotate operator against the
    # m-separated two-sphere solve (two independent codings of the same physics).
    u = np.array([0.3, -0.5, 0.8])
    u /= np.linalg.norm(u)
    w = np.cross(u, [0, 0, 1.0])
    w /= np.linalg.norm(w)
    for eps, gap, L in ((10.0, 0.1, 16), (1e12, 0.05, 24), (3.0 - 0.5j, 0.2, 10)):
        d = 2 + gap
        s = _scene([[0.1, 0.2, 0.3], np.array([0.1, 0.2, 0.3]) + d * u], eps=eps)
        sol = _quiet_solve(s, rtol=1e-13, operator=MultipoleOperator(s, order=L, accuracy=1e-14))
        P = sol.moments.sum(axis=0)
        assert u @ P @ u == pytest.approx(pair_dipoles(d, (1, 1), (eps, eps), 1.0, L, 0).sum(), rel=1e-11)
        assert w @ P @ w == pytest.approx(pair_dipoles(d, (1, 1), (eps, eps), 1.0, L, 1).sum(), rel=1e-11)


def test_complex_permittivity_and_solver_paths_agree():
    s = _scene(POS[:4], eps=5.0 - 2.0j)
    op = MultipoleOperator(s, order=5, accuracy=1e-14)
    sols = [_quiet_solve(s, method=m, rtol=1e-12, operator=op) for m in ("direct", "cocg", "gmres")]
    for sol in sols:
        assert sol.converged
        assert sol.multipoles.shape == (4, op.n_per_body, 3)
        np.testing.assert_allclose(sol.moments, sols[0].moments, rtol=1e-9, atol=1e-12)


def test_forces_are_the_energy_derivative():
    pos = np.array([[0, 0, 0], [1.0, 0.6, 2.0], [-1.5, 1.6, 0.4]])
    pos[1] *= 2.2 / np.linalg.norm(pos[1])

    def run(p, L):
        s = _scene(p, field=np.array([[0.2, 0.3, 0.93]]))
        return _quiet_solve(
            s, rtol=1e-13, operator=MultipoleOperator(s, order=L, accuracy=1e-14), method="cocg"
        )

    for L in (1, 8):
        F = forces(run(pos, L))[:, :, 0]
        h = 1e-5
        for a in range(3):
            pp, pm = pos.copy(), pos.copy()
            pp[1, a] += h
            pm[1, a] -= h
            fd = -(energy(run(pp, L))[0] - energy(run(pm, L))[0]) / (2 * h)
            assert F[1, a] == pytest.approx(fd, abs=1e-9)
        np.testing.assert_allclose(F.sum(axis=0), 0, atol=1e-12)  # Newton's third law


def test_near_contact_force_converges_monotonically_with_order():
    # Attraction of two spheres along the field at gap 0.05 radius, contrast 10.
    s = _scene([[0, 0, 0], [0, 0, 2.05]], field=np.array([[0, 0, 1.0]]))
    fz = []
    for L in (1, 2, 4, 8, 16, 32):
        sol = _quiet_solve(s, rtol=1e-13, operator=MultipoleOperator(s, order=L, accuracy=1e-14))
        fz.append(forces(sol)[1, 2, 0])
    steps = np.diff(fz)
    assert np.all(fz[0] < 0) and np.all(steps < 0)  # ever stronger attraction
    assert abs(steps[-1]) < 1e-3 * abs(fz[-1])
    assert fz[-1] / fz[0] > 1.5  # the point dipole badly underestimates it


def test_spheroids_stay_at_dipole_level():
    s = Scene(
        np.array([[0, 0, 0], [0, 0, 2.1], [3.0, 0, 0]]),
        [Population(Sphere(1.0), Material(10.0)), Population(Spheroid(1.0, 0.5), Material(10.0))],
        population_index=[0, 0, 1],
    )
    op = MultipoleOperator(s, order="auto", accuracy=1e-6)
    assert op.orders[2] == 1 and op.orders[0] > 1
    sol = _quiet_solve(s, operator=op, rtol=1e-12)
    assert sol.converged


def test_bad_input_names_the_key():
    s = _scene(POS)
    with pytest.raises(InputError, match="order"):
        MultipoleOperator(s, order="high")
    with pytest.raises(InputError, match="accuracy"):
        MultipoleOperator(s, accuracy=2.0)
    box = Scene(POS + 5, Population(Sphere(1.0), Material(4.0)), boundary="periodic", box=[12.0, 12.0, 12.0])
    with pytest.raises(InputError, match="periodic"):
        MultipoleOperator(box)


def test_maxwell_stress_and_energy_derivative_forces_agree():
    from dipolearray.observables import maxwell_stress_forces

    pos = np.array([[0, 0, 0], [0.4, 0.3, 2.1], [-1.9, 0.8, 0.9], [6.0, 0.0, 0.0]])
    s = _scene(pos, field=np.array([[0.2, 0.3, 0.93], [1.0, 0.0, 0.0]]))
    for L in (1, 4, 10):
        sol = _quiet_solve(
            s, rtol=1e-13, operator=MultipoleOperator(s, order=L, accuracy=1e-8), method="cocg"
        )
        a = forces(sol)
        b = maxwell_stress_forces(sol)
        np.testing.assert_allclose(b, a, atol=1e-10 * np.abs(a).max())


@pytest.mark.parametrize("complex_input", [False, True])
def test_low_order_tensor_kernel_matches_the_rotation_kernel(monkeypatch, complex_input):
    # Pairs up to LOW_ORDER go through harmonics and the fitted translation tensor; the
    # same operator with every pair on the rotate-translate-rotate kernel is the reference.
    import dipolearray.operators._multipole as mp

    rng = np.random.default_rng(7)
    pos = np.concatenate([POS, POS[:3] + [7.0, 0.0, 0.0], [[3.0, -3.5, 0.0]]])
    s = _scene(pos)
    op = MultipoleOperator(s, order="auto", accuracy=1e-9, check_error=False)
    op.pair_orders = np.minimum(op.pair_orders, rng.integers(1, 9, op.pair_orders.size))
    op._setup_kernels()
    assert op._lo_neighbours.size and op._hi_neighbours.size  # both kernels run
    x = rng.standard_normal((s.n_bodies, op.n_per_body, 2))
    if complex_input:
        x = x + 1j * rng.standard_normal(x.shape)
    got = op.apply(x)
    monkeypatch.setattr(mp, "LOW_ORDER", 0)
    op._setup_kernels()
    assert op._lo_neighbours.size == 0
    np.testing.assert_allclose(got, op.apply(x), atol=1e-13 * np.abs(got).max())


def test_row_restricted_coupling_matches_the_full_apply_on_those_rows():
    rng = np.random.default_rng(8)
    pos = np.array(
        [[0, 0, 0], [0, 0, 2.05], [2.3, 0.4, 0.9], [0.2, 2.4, 1.1], [-2.2, 0.3, -0.6], [6, 6, 6.0]]
    )
    s = _scene(pos)
    op = MultipoleOperator(s, order=5, accuracy=1e-8)
    x = rng.standard_normal((6, op.n_per_body, 2))
    full = op.apply(x)
    dip = np.zeros_like(full)
    dip[:, :3] = make_operator(s, "direct").apply(np.ascontiguousarray(x[:, :3]))
    rows = [1, 3]
    part = op.near_rows(x, rows)
    np.testing.assert_allclose(part[rows], (full - dip)[rows], rtol=1e-12, atol=1e-14)
    others = np.setdiff1d(np.arange(6), rows)
    assert not np.any(part[others])
    assert np.any(part[rows])
