import numpy as np
import pytest
from catalogue import CATALOGUE, sphere_scene

import dipolearray as da
from dipolearray.shapes import rotation_to_axis


def _energy_z(positions, **kw):
    s = sphere_scene(positions, field=[0.0, 0.0, 1.0], **kw)
    return float(da.energy(da.solve(s, "direct"))[0])


def test_forces_are_minus_energy_gradient():
    # Internal consistency: F_i = -dW/dr_i at fixed applied field, by central differences.
    rng = np.random.default_rng(4)
    pos = np.array([[0, 0, 0], [0.3, 0.2, 2.4], [2.5, -0.4, 0.8], [-1.0, 2.3, 1.7]])
    s = sphere_scene(pos, field=[[0.0, 0.0, 1.0]])
    F = da.forces(da.solve(s, "direct"))[:, :, 0]
    h = 1e-5
    for i in range(len(pos)):
        for c in range(3):
            up, dn = pos.copy(), pos.copy()
            up[i, c] += h
            dn[i, c] -= h
            fd = -(_energy_z(up) - _energy_z(dn)) / (2 * h)
            assert F[i, c] == pytest.approx(fd, rel=1e-6, abs=1e-9)
    assert rng is not None


@pytest.mark.parametrize("name", ["dilute_random", "complex_permittivity", "tilted_spheroids", "chain"])
def test_net_force_of_isolated_scene_vanishes(name):
    sol = da.solve(CATALOGUE[name](), "direct")
    F = da.forces(sol)
    scale = np.abs(F).max()
    assert scale > 0
    np.testing.assert_allclose(F.sum(axis=0), 0.0, atol=1e-12 * scale * sol.scene.n_bodies)


def test_pair_force_textbook_formula():
    # Two point dipoles p along the line joining them: F = -6 p^2 / d^4 (attraction);
    # across it: F = +3 p^2 / d^4 (repulsion). Jackson (1999), sec. 4.2 energy of a
    # dipole, U = (p1.p2 - 3 (p1.u)(p2.u))/d^3, differentiated by hand.
    d = 2.6
    s = sphere_scene([[0, 0, 0], [0, 0, d]], field=[[0, 0, 1.0], [1.0, 0, 0]])
    sol = da.solve(s, "direct")
    F = da.forces(sol)
    pz = sol.moments[1, 2, 0]
    px = sol.moments[1, 0, 1]
    assert F[1, 2, 0] == pytest.approx(-6 * pz**2 / d**4, rel=1e-12)
    assert F[1, 2, 1] == pytest.approx(3 * px**2 / d**4, rel=1e-12)


def test_torque_is_minus_energy_derivative_by_angle():
    # A lone prolate spheroid tilted in a uniform field feels tau = p x E0; its energy
    # W(theta) = -1/2 p.E0 and tau_y = -dW/dtheta (rotation about y).
    pop = da.Population(da.Spheroid(polar=2.0, equatorial=1.0), da.Material(8.0))

    def scene(theta):
        axis = [np.sin(theta), 0.0, np.cos(theta)]
        return da.Scene(
            [[0, 0, 0]], pop, host=da.Material(2.0), rotations=[rotation_to_axis(axis)], field=[0.0, 0.0, 1.0]
        )

    th, h = 0.4, 1e-5
    tau = da.torques(da.solve(scene(th)))[0, :, 0]
    w = lambda t: float(da.energy(da.solve(scene(t)))[0])  # noqa: E731
    fd = -(w(th + h) - w(th - h)) / (2 * h)
    assert tau[1] == pytest.approx(fd, rel=1e-6)
    assert tau[1] < 0  # the long axis turns toward the field
    assert abs(tau[0]) < 1e-14 and abs(tau[2]) < 1e-14


def test_torque_vanishes_for_lossless_spheres():
    sol = da.solve(CATALOGUE["dilute_random"](), "direct")
    T = da.torques(sol)
    assert np.abs(T).max() < 1e-13 * np.abs(sol.moments).max()


def test_local_field_and_interior_consistency():
    sol = da.solve(CATALOGUE["tilted_spheroids"](), "direct")
    loc = da.local_field(sol)
    s = sol.scene
    np.testing.assert_allclose(
        np.einsum("nij,njk->nik", s.polarizability, loc), sol.moments, rtol=1e-10, atol=1e-13
    )
    e_in = da.interior_field(sol)
    # p = V (eps_i - eps_h)/(4 pi eps_h) E_in for every ellipsoid (reduced units).
    pref = (s.volumes * (s.eps_inclusion - s.eps_host) / (4 * np.pi * s.eps_host))[:, None, None]
    np.testing.assert_allclose(pref * e_in, sol.moments, rtol=1e-10, atol=1e-13)


def test_field_at_outside_and_inside():
    s = sphere_scene([[0, 0, 0], [0, 0, 3.0]])
    sol = da.solve(s)
    pts = np.array([[0, 0, 1.5], [4.0, 1.0, -2.0], [0.2, 0.1, 0.3], [0, 0, 3.5]])
    E = da.field_at(sol, pts)
    # Outside: applied field plus both dipole fields, summed by hand.
    for m in (0, 1):
        ref = s.field.T.copy()
        for j in range(2):
            r = pts[m] - s.positions[j]
            d = np.linalg.norm(r)
            u = r / d
            ref += (3 * np.outer(u, u) - np.eye(3)) @ sol.moments[j] / d**3
        np.testing.assert_allclose(E[m], ref, rtol=1e-12)
    inner = da.interior_field(sol)
    np.testing.assert_allclose(E[2], inner[0], rtol=1e-14)
    np.testing.assert_allclose(E[3], inner[1], rtol=1e-14)
    with pytest.raises(da.InputError, match="points"):
        da.field_at(sol, [[0, 0]])


def test_energy_is_half_the_dipole_work():
    sol = da.solve(CATALOGUE["pair_along_field"]())
    W = da.energy(sol)
    np.testing.assert_allclose(W, -0.5 * np.einsum("nkk->k", sol.moments), rtol=1e-14)


def test_effective_permittivity_needs_a_sample_radius():
    sol = da.solve(CATALOGUE["pair_along_field"]())
    with pytest.raises(da.InputError, match="sample_radius"):
        da.effective_permittivity(sol)
    eff = da.effective_permittivity(sol, sample_radius=5.0)
    assert eff.tensor.shape == (3, 3)
    # Along the pair axis the composite is more polarizable than across it.
    assert eff.tensor[2, 2] > eff.tensor[0, 0]
    one = da.solve(sol.scene.replace(field=[0, 0, 2.0]))
    e1 = da.effective_permittivity(one, sample_radius=5.0)
    assert e1.tensor is None and e1.along_field[0] == pytest.approx(eff.tensor[2, 2], rel=1e-12)


def test_bulk_tensor_of_aligned_spheroids_has_the_right_axes_and_loss():
    from dipolearray.arrange import random_sequential_addition
    from dipolearray.shapes import rotation_to_axis

    u = np.array([1.0, 1.0, 0.0]) / np.sqrt(2)
    R = rotation_to_axis(u)
    arr = random_sequential_addition(
        80, 0.12, semi_axes=(0.6, 0.6, 1.8), rotations=R, region="periodic", rng=3
    )
    pop = da.Population(da.Spheroid(polar=1.8, equatorial=0.6), da.Material(20.0 - 4.0j))
    sol = da.solve(da.Scene.from_arrangement(arr, pop, host=da.Material(2.0)), rtol=1e-10)
    eff = da.effective_permittivity(sol)
    assert eff.boundary == "periodic"
    main_axis = eff.axes[:, -1]
    assert abs(main_axis @ u) > 0.99  # the largest principal value lies along the spheroid axes
    iso = complex(eff.isotropic)
    assert eff.loss_tangent == pytest.approx(-iso.imag / iso.real) and eff.loss_tangent > 0
