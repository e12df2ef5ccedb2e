import numpy as np
import pytest
from catalogue import CATALOGUE, FIXED_POINT_DIVERGES, sphere_scene

import dipolearray as da
from dipolearray.errors import ConvergenceError
from dipolearray.solvers import estimate_spectral_radius


def true_residual(sol):
    """Residual of p = alpha (E0 + T p) recomputed outside the solver, with the dense T."""
    s = sol.scene
    n = s.n_bodies
    T = da.make_operator(s).dense()
    p = sol.moments.reshape(3 * n, -1)
    loc = s.field.T[None, :, :] + (T @ p).reshape(n, 3, -1)
    b = np.einsum("nij,njk->nik", s.polarizability, np.broadcast_to(s.field.T, (n, 3, s.n_fields)))
    r = np.einsum("nij,njk->nik", s.polarizability, loc) - sol.moments
    return np.linalg.norm(r.reshape(3 * n, -1), axis=0) / np.linalg.norm(b.reshape(3 * n, -1), axis=0)


@pytest.mark.parametrize("method", ["direct", "cocg", "gmres", "fixed_point"])
def test_catalogue_every_method(catalogue_scene, method):
    name, scene = catalogue_scene
    sol = da.solve(scene, method, rtol=1e-11, maxiter=400)
    if method == "fixed_point" and name in FIXED_POINT_DIVERGES:
        assert not sol.converged and sol.reason == "diverged"
        assert sol.spectral_radius > 1.0
        return
    assert sol.converged, sol.summary()
    assert np.all(true_residual(sol) < 1e-10)
    ref = da.solve(scene, "direct")
    scale = np.abs(ref.moments).max()
    assert np.abs(sol.moments - ref.moments).max() < 1e-9 * scale


def test_solvers_agree_to_near_machine_precision():
    scene = CATALOGUE["dilute_random"]()
    ref = da.solve(scene, "direct")
    scale = np.abs(ref.moments).max()
    for m in ("cocg", "gmres", "fixed_point"):
        sol = da.solve(scene, m, rtol=1e-14, maxiter=500)
        assert sol.converged, sol.summary()
        assert np.abs(sol.moments - ref.moments).max() < 1e-13 * scale, m


def test_fixed_point_starts_from_isolated_response_and_records():
    scene = CATALOGUE["pair_along_field"]()
    sol = da.solve(scene, "fixed_point", maxiter=1)
    # One re-polarization step from p0 = alpha E0 is p1 = alpha (E0 + T alpha E0).
    a = scene.polarizability[0, 0, 0]
    d = 2.3
    assert sol.moments[0, 2, 2] == pytest.approx(a + a * 2 * a / d**3, rel=1e-13)
    assert not sol.converged and sol.reason == "maxiter" and sol.iterations == 1
    with pytest.raises(ConvergenceError, match="maxiter") as info:
        sol.check()
    assert info.value.solution is sol
    full = da.solve(scene, "fixed_point", rtol=1e-12)
    assert full.residual_history.shape[0] == full.iterations + 1
    assert np.all(np.diff(np.log(full.residual_history[:, 2])) < 0)
    # Residual ratio of the order-of-scattering series is the pair's spectral radius 2a/d^3.
    assert full.spectral_radius == pytest.approx(2 * a / d**3, rel=0.02)


def test_dense_high_contrast_diverges_with_estimate_above_one():
    scene = CATALOGUE["dense_high_contrast"]()
    rho = estimate_spectral_radius(scene)
    assert rho > 1.0
    sol = da.solve(scene, "fixed_point", maxiter=200)
    assert sol.reason == "diverged" and "diverged" in sol.summary()
    # The Krylov path still solves it.
    assert da.solve(scene, "cocg", rtol=1e-10).converged


def _alpha_t(scene):
    n = scene.n_bodies
    T = da.make_operator(scene).dense().reshape(n, 3, n, 3)
    return np.einsum("iab,ibjc->iajc", scene.polarizability, T).reshape(3 * n, 3 * n)


def test_spectral_radius_estimate_matches_dense_eigenvalues():
    scene = CATALOGUE["chain"]()
    exact = np.max(np.abs(np.linalg.eigvals(_alpha_t(scene))))
    assert estimate_spectral_radius(scene, n_iter=300) == pytest.approx(exact, rel=1e-3)


def test_relaxed_iteration_rate_matches_its_iteration_matrix():
    # The residual ratio of p <- p + w r tends to max |1 - w + w lambda| over the
    # eigenvalues lambda of alpha T (linear algebra of stationary iterations).
    scene = CATALOGUE["chain"]()
    lam = np.linalg.eigvals(_alpha_t(scene))
    w = 0.8
    rate = np.max(np.abs(1 - w + w * lam))
    sol = da.solve(scene.replace(field=[0, 0, 1.0]), "fixed_point", relaxation=w, rtol=1e-12, maxiter=2000)
    assert sol.converged
    assert sol.spectral_radius == pytest.approx(rate, rel=0.02)
    ref = da.solve(scene.replace(field=[0, 0, 1.0]), "direct")
    np.testing.assert_allclose(sol.moments, ref.moments, rtol=1e-10)


def test_auto_records_choice_and_three_directions():
    small = CATALOGUE["dilute_random"]()
    sol = da.solve(small)
    assert sol.method == "direct" and "N = 120" in sol.method_reason
    assert sol.moments.shape == (120, 3, 3)
    single = small.replace(field=[0.0, 0.0, 1.0])
    one = da.solve(single)
    np.testing.assert_allclose(one.moments[:, :, 0], sol.moments[:, :, 2], rtol=1e-12, atol=1e-15)


def test_auto_large_uses_krylov():
    from dipolearray.arrange import random_sequential_addition

    lay = random_sequential_addition(1100, 0.1, rng=3)
    sol = da.solve(sphere_scene(lay.positions), rtol=1e-9)
    assert sol.method == "cocg" and sol.converged and "1100" in sol.method_reason


def test_x0_is_used():
    scene = CATALOGUE["chain"]()
    ref = da.solve(scene, "direct")
    warm = da.solve(scene, "cocg", x0=ref.moments, rtol=1e-10)
    assert warm.iterations == 0 and warm.converged


@pytest.mark.parametrize(
    "kw, key",
    [
        (dict(method="newton"), "method"),
        (dict(rtol=-1.0), "rtol"),
        (dict(rtol=0.0, atol=0.0), "rtol"),
        (dict(maxiter=0), "maxiter"),
        (dict(maxiter=2.5), "maxiter"),
        (dict(relaxation=3.0), "relaxation"),
        (dict(x0=np.zeros((2, 3))), "x0"),
        (dict(callback=5), "callback"),
    ],
)
def test_bad_solver_arguments(kw, key):
    with pytest.raises(da.InputError, match=key):
        da.solve(CATALOGUE["pair_along_field"](), **kw)


def test_callback_sees_every_iteration():
    seen = []
    sol = da.solve(CATALOGUE["chain"](), "cocg", callback=lambda it, r: seen.append((it, r.copy())))
    assert [s[0] for s in seen] == list(range(1, sol.iterations + 1))
    assert seen[-1][1].shape == (3,)


def test_solution_is_frozen_record():
    sol = da.solve(CATALOGUE["isolated_sphere"]())
    with pytest.raises(TypeError):
        iter(sol)
    with pytest.raises(AttributeError):
        sol.converged = False
    with pytest.raises(ValueError):
        sol.moments[0, 0, 0] = 1.0
