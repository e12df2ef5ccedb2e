"""Fields, local fields and hot spots of multipole solutions."""

import warnings

import numpy as np
import pytest

from dipolearray import Material, Population, Scene, Sphere, solve
from dipolearray.observables import field_at, field_enhancement, local_field
from dipolearray.operators import MultipoleOperator


def pair(gap, eps=10.0, order=24, field=(0.0, 0.0, 1.0)):
    s = Scene(
        np.array([[0.0, 0.0, 0.0], [0.0, 0.0, 2.0 + gap]]),
        Population(Sphere(1.0), Material(eps)),
        field=np.array([field]),
    )
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return solve(
            s, rtol=1e-12, operator=MultipoleOperator(s, order=order, accuracy=1e-12, check_error=False)
        )


def test_boundary_conditions_converge_with_order_near_contact():
    # Tangential E and normal D are continuous across the surface (Jackson 1999, sec. 4.4).
    # Inside, the field comes from the sphere's truncated interior expansion, outside from
    # every body's outgoing expansion: their mismatch on the side facing the partner is the
    # truncation error, and it must fall with the order.
    eps = 10.0
    rng = np.random.default_rng(0)
    n = rng.standard_normal((12, 3))
    n[:, 2] = np.abs(n[:, 2]) + 2.0  # the hemisphere facing the partner
    n /= np.linalg.norm(n, axis=1)[:, None]
    h = 1e-7
    mismatch = []
    for order in (6, 12, 24):
        sol = pair(0.3, eps=eps, order=order, field=(0.3, 0.0, 0.95))
        out = field_at(sol, n * (1 + h))[:, :, 0]
        inn = field_at(sol, n * (1 - h))[:, :, 0]
        en_out, en_in = np.sum(out * n, axis=1), np.sum(inn * n, axis=1)
        t_out, t_in = out - en_out[:, None] * n, inn - en_in[:, None] * n
        scale = np.max(np.linalg.norm(out, axis=1))
        mismatch.append(max(np.abs(t_out - t_in).max(), np.abs(en_out - eps * en_in).max()) / scale)
    assert mismatch == sorted(mismatch, reverse=True)
    assert mismatch[-1] < 1e-3 and mismatch[-1] < 0.05 * mismatch[0]


def test_local_field_includes_the_multipoles():
    sol = pair(0.05)
    loc = local_field(sol)
    # u_1 = alpha (E0 + F_1): the dipole moment is the sphere's polarizability times it.
    beta = (10 - 1) / (10 + 2)
    np.testing.assert_allclose(sol.moments, beta * loc, rtol=1e-10, atol=1e-14)


def test_isolated_sphere_pole_field():
    # Far apart, order forced: the largest host field on the surface is the pole field
    # (1 + 2 beta) E0 (Jackson 1999, sec. 4.4).
    s = Scene(np.array([[0.0, 0.0, 0.0], [0.0, 0.0, 60.0]]), Population(Sphere(1.0), Material(6.0)),
              field=np.array([[0.0, 0.0, 1.0]]))  # fmt: skip
    op = MultipoleOperator(s, order=6, accuracy=1e-14)
    assert op.pairs.shape[0] == 1
    sol = solve(s, rtol=1e-13, operator=op)
    beta = 5 / 8
    surf = field_enhancement(sol).surface[:, 0]
    np.testing.assert_allclose(surf, 1 + 2 * beta, rtol=2e-4)


def test_gap_hot_spot_grows_as_the_gap_closes_and_beats_the_dipole_estimate():
    peaks, dipole_peaks = [], []
    for gap in (0.5, 0.2, 0.05):
        sol = pair(gap, order=30)
        peaks.append(float(np.nanmax(field_enhancement(sol).surface)))
        d = pair(gap, order=1)
        dipole_peaks.append(float(np.max(field_enhancement(d).surface)))
        mid = field_at(sol, np.array([[0.0, 0.0, 1.0 + gap / 2]]))[0, 2, 0]
        assert mid > 1.5  # the gap field exceeds the applied field
    assert peaks == sorted(peaks)
    assert all(p > 1.3 * q for p, q in zip(peaks, dipole_peaks, strict=True))


@pytest.mark.parametrize("order", [8, 16])
def test_exterior_field_against_finite_differences_of_the_potential(order):
    from dipolearray.operators._harmonics import solid_harmonics

    sol = pair(0.3, order=order)
    op = sol.extra["multipole_operator"]
    u = np.asarray(sol.multipoles)[:, :, 0]
    pts = np.array([[1.5, 0.4, 1.1], [-0.3, 1.4, 2.9], [0.2, -0.1, 4.5]])

    def potential(x):
        total = 0.0
        for j, c in enumerate(op.scene.positions):
            L = int(op.orders[j])
            total = total + solid_harmonics(x - c, L, "irregular") @ u[j, : L * (L + 2)]
        return total

    h = 1e-6
    fd = np.stack([-(potential(pts + h * e) - potential(pts - h * e)) / (2 * h) for e in np.eye(3)], axis=1)
    got = field_at(sol, pts)[:, :, 0] - sol.scene.field[0][None, :]
    np.testing.assert_allclose(got, fd, atol=1e-7)


def test_loaded_multipole_result_evaluates_at_multipole_level(tmp_path):
    from dipolearray import load_result, save_result

    sol = pair(0.1, order=12)
    path = tmp_path / "pair.h5"
    save_result(path, sol, observables=["surface_field"])
    back = load_result(path)
    np.testing.assert_array_equal(back.multipoles, sol.multipoles)
    pts = np.array([[0.0, 0.0, 1.05], [0.3, 0.2, 3.5]])
    np.testing.assert_allclose(field_at(back, pts), field_at(sol, pts), rtol=1e-9)
    np.testing.assert_allclose(field_enhancement(back).surface, field_enhancement(sol).surface, rtol=1e-9)
