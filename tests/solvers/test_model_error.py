"""Model-error control: automatic multipole orders, a posteriori estimate, near-contact warning."""

import warnings

import numpy as np
import pytest

from dipolearray import Material, Population, Scene, Sphere, solve
from dipolearray.operators import MultipoleOperator, pair_model
from dipolearray.solvers import NearContactWarning, closest_pair, near_contact_estimate


def cluster(n=14, min_gap=0.02, seed=3):
    """Spheres grown one by one onto a random earlier sphere at gaps from min_gap to 0.5."""
    rng = np.random.default_rng(seed)
    pos = [np.zeros(3)]
    gaps = np.geomspace(min_gap, 0.5, n - 1)
    rng.shuffle(gaps)
    for g in gaps:
        while True:
            base = pos[rng.integers(len(pos))]
            u = rng.standard_normal(3)
            u /= np.linalg.norm(u)
            cand = base + (2 + g) * u
            if all(np.linalg.norm(cand - p) >= 2 + min_gap for p in pos):
                pos.append(cand)
                break
    return np.array(pos)


def quiet(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return solve(*args, **kwargs)


@pytest.mark.parametrize("accuracy", [1e-3, 1e-5])
def test_automatic_orders_meet_the_requested_accuracy(accuracy):
    s = Scene(cluster(), Population(Sphere(1.0), Material(10.0)), field=np.eye(3))
    ref = quiet(s, rtol=1e-12, operator=MultipoleOperator(s, order=48, accuracy=1e-12))
    op = MultipoleOperator(s, order="auto", accuracy=accuracy)
    sol = quiet(s, rtol=1e-10, operator=op)
    assert op.orders.max() < 48  # it did not simply take the largest order
    scale = np.max(np.linalg.norm(ref.moments, axis=1))
    err = np.max(np.linalg.norm(sol.moments - ref.moments, axis=1)) / scale
    assert err <= 3 * accuracy
    est = sol.extra["model_error"]
    # The a posteriori estimate is of the right size: not below a tenth of the true error.
    assert est["body_moment_error"] >= 0.1 * err
    assert est["converged"]


def test_point_dipole_model_error_is_estimated_and_recorded():
    s = Scene(cluster(min_gap=0.02), Population(Sphere(1.0), Material(10.0)), field=np.eye(3))
    with pytest.warns(NearContactWarning, match=r"spheres \d+ and \d+ are 0.02 radii apart"):
        sol = solve(s, rtol=1e-10)
    info = sol.extra["near_contact"]
    assert info["gap_ratio"] == pytest.approx(0.02, rel=1e-9)
    ref = quiet(s, rtol=1e-12, operator=MultipoleOperator(s, order=40, accuracy=1e-12))
    i, j = info["pair"]
    true_err = np.max(np.abs(sol.moments[[i, j]] - ref.moments[[i, j]])) / np.max(np.abs(ref.moments[[i, j]]))
    # The two-sphere estimate is within a factor of three of the many-body error of that pair.
    assert info["dipole_error"] / 3 <= true_err <= 3 * info["dipole_error"]


def test_no_warning_for_well_separated_spheres():
    pos = np.array([[0, 0, 0], [4.0, 0, 0], [0, 4.5, 0]])
    s = Scene(pos, Population(Sphere(1.0), Material(10.0)))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        sol = solve(s)
    assert sol.extra["near_contact"]["dipole_error"] < 0.01


def test_closest_pair_in_a_periodic_box_uses_the_minimum_image():
    pos = np.array([[1.0, 5.0, 5.0], [8.5, 5.0, 5.0], [5.0, 5.0, 5.0]])
    s = Scene(pos, Population(Sphere(1.0), Material(4.0)), boundary="periodic", box=[10.0, 10.0, 10.0])
    info = closest_pair(s)
    assert set(info["pair"]) == {0, 1}
    assert info["gap"] == pytest.approx(0.5, abs=1e-12)  # through the boundary: 2.5 - 2


def test_pair_model_orders_grow_as_the_gap_closes():
    orders = [pair_model(g, (10.0, 10.0), 1.0, 1e-6)[0] for g in (3.0, 1.0, 0.3, 0.1)]
    assert orders == sorted(orders) and orders[0] < orders[-1]
    errs = [pair_model(g, (10.0, 10.0), 1.0, 1e-6)[1] for g in (3.0, 1.0, 0.3, 0.1, 0.01)]
    assert np.all(np.diff(errs) > 0)
    # Dipole error of two contrast-10 spheres at 0.01 radius: several percent (point-dipole
    # model misses the pair's moment, as measured when the issue was filed: about 8 %).
    assert 0.04 < errs[-1] < 0.12


def test_estimate_for_touching_chain_names_contact():
    pos = np.array([[0, 0, 2.0 * k] for k in range(5)], dtype=float)
    s = Scene(pos, Population(Sphere(1.0), Material(50.0)))
    info = near_contact_estimate(s)
    assert info["gap_ratio"] == pytest.approx(0.0, abs=1e-12)
    assert info["dipole_error"] > 0.1


def test_local_refined_estimate_matches_the_full_resolve(monkeypatch):
    # Far from the refined pairs the change of the solution decays like a dipole field,
    # so re-solving the refined system on the bodies around them gives the estimate of
    # the full re-solve (which is what it replaces on large scenes).
    import dipolearray.solvers._model_error as me

    rng = np.random.default_rng(5)
    grid = np.stack(np.meshgrid(*[np.arange(4)] * 3, indexing="ij"), -1).reshape(-1, 3) * 4.5
    pos = grid + rng.uniform(-0.3, 0.3, grid.shape)
    pos[1] = pos[0] + [0.0, 0.0, 2.03]  # one near-contact pair in a loose array of 64
    s = Scene(pos, Population(Sphere(1.0), Material(10.0)), field=np.eye(3))
    sol = quiet(s, rtol=1e-10, backend="multipole", backend_options={"accuracy": 1e-4})
    local = sol.extra["model_error"]
    assert local["solved_on"].endswith("around the refined pairs")
    op = sol.extra["multipole_operator"]
    monkeypatch.setattr(me, "LOCAL_REACH", 1e6)
    full = me.multipole_model_error(s, op, np.asarray(sol.multipoles), rtol=1e-10, maxiter=500)
    assert full["solved_on"] == "every body"
    assert local["body_moment_error"] == pytest.approx(full["body_moment_error"], rel=0.1)
    assert local["total_moment_error"] == pytest.approx(full["total_moment_error"], rel=0.3)
    assert full["body_moment_error"] > 0


def test_dipole_level_estimate_counts_every_close_neighbour_on_a_lattice():
    # Simple cubic lattice at 45 % (gap 0.104 radius), contrast 100: each sphere has six
    # neighbours at that gap, and their pair errors add on the total moment. The measured
    # model error of the point dipole is the multipole solve's total moment against the
    # dipole solve's: 23 % here; the estimate says 9.8 % (many-body enhancement beyond
    # additive pairs is missing), where counting only the nearest neighbour said 3 %.
    from dipolearray import Scene as _Scene
    from dipolearray.arrange import lattice

    arr = lattice("sc", volume_fraction=0.45, sample="periodic", cells=2)
    s = _Scene.from_arrangement(arr, Population(Sphere(1.0), Material(100.0)))
    est = near_contact_estimate(s)["total_moment_error"]
    dip = quiet(s, rtol=1e-10)
    mp = quiet(s, rtol=1e-10, backend="multipole", backend_options={"accuracy": 1e-4, "check_error": False})
    true = np.abs(np.asarray(mp.moments).sum(0) / np.asarray(dip.moments).sum(0) - 1)[[0, 1, 2], [0, 1, 2]]
    assert 0.3 < est / true.max() < 1.5


def test_refinement_residual_is_the_full_residual_change():
    # Rows of b - M_f x0 of the refined system, from the couplings that differ only:
    # equal to the full residual of the refined system minus that of the solved one.
    import dipolearray.solvers._model_error as me
    from dipolearray.solvers._common import MomentSystem

    s = Scene(cluster(n=10, min_gap=0.03), Population(Sphere(1.0), Material(10.0)), field=np.eye(3))
    op = MultipoleOperator(s, order="auto", accuracy=1e-4)
    x = quiet(s, rtol=1e-10, operator=op).multipoles
    fine = op.refined(n_pairs=3)
    x0 = np.zeros((s.n_bodies, fine.n_per_body, 3))
    x0[:, : x.shape[1]] = x
    m = op.n_per_body
    want = MomentSystem(s, fine).residual(x0)
    want[:, :m] -= MomentSystem(s, op).residual(np.ascontiguousarray(x))
    got = me._refinement_residual(op, fine, x0)
    np.testing.assert_allclose(got, want, rtol=0, atol=1e-12 * np.abs(want).max())
    assert np.abs(want).max() > 1e-6  # the refinement does change the residual


def test_adaptive_solve_by_corrections_matches_two_full_solves():
    # The adaptive solve first solves loosely, then corrects with the first operator as
    # inner solver; it must land on the solution of the extended system, as found by a
    # plain second solve to the same tolerance.
    from dipolearray.arrange import random_sequential_addition
    from dipolearray.solvers._common import MomentSystem

    arr = random_sequential_addition(80, 0.25, region="sphere", rng=2)
    s = Scene.from_arrangement(arr, Population(Sphere(1.0), Material(10.0)))
    op = MultipoleOperator(s, order="auto", accuracy=1e-5, check_error=False)
    sol = quiet(s, rtol=1e-7, operator=op)
    assert sol.converged
    assert "corrections from the first operator" in sol.method_reason
    assert sol.extra["pairs_added"] > 0
    base = MultipoleOperator(s, order="auto", accuracy=1e-5, check_error=False, adaptive=False)
    first = quiet(s, rtol=1e-7, operator=base)
    ext = base.extended(np.asarray(first.multipoles))
    assert ext.n_added == sol.extra["pairs_added"]
    ref = quiet(s, rtol=1e-9, operator=ext, x0=first.multipoles)
    scale = np.max(np.linalg.norm(ref.moments, axis=1))
    assert np.max(np.linalg.norm(sol.moments - ref.moments, axis=1)) / scale < 1e-6
    # and its residual in the extended system is what it reports
    true = MomentSystem(s, ext).residual_norms(np.asarray(sol.multipoles)) / MomentSystem(s, ext).b_norm
    np.testing.assert_allclose(true, sol.residual, rtol=1e-6)
    assert np.all(true <= 1e-7)


def test_defect_correction_gives_up_when_the_coarse_operator_is_far_off():
    # Coarse operator without any near-pair coupling: a near-contact chain's corrections
    # shrink the residual too slowly, and the correction says so (the solver then goes on
    # with the fine system alone).
    import copy

    from dipolearray.solvers._common import MomentSystem
    from dipolearray.solvers._krylov import defect_correction

    pos = np.array([[0, 0, 0], [0, 0, 2.01], [0, 0, 4.02], [0, 0, 6.03]])
    s = Scene(pos, Population(Sphere(1.0), Material(100.0)))
    fine_op = MultipoleOperator(s, order=12, accuracy=1e-8)
    coarse_op = copy.copy(fine_op)
    coarse_op.pairs = fine_op.pairs[:0]
    coarse_op.pair_orders = fine_op.pair_orders[:0]
    coarse_op._setup_kernels()
    fine, coarse = MomentSystem(s, fine_op), MomentSystem(s, coarse_op)
    x, hist, _it, reason, outer = defect_correction(
        fine, coarse, fine.b.copy(), rtol=1e-10, atol=0.0, maxiter=200, callback=None
    )
    assert reason == "slow"
    assert outer < 12
    # With the fine operator as its own coarse one, a correction solves it.
    x, hist, _it, reason, outer = defect_correction(
        fine, fine, fine.b.copy(), rtol=1e-10, atol=0.0, maxiter=200, callback=None, inner_rtol=1e-3
    )
    assert reason == "converged"
    assert np.all(fine.residual_norms(x) <= 1e-10 * fine.b_norm)
