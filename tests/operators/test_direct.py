import numpy as np
import pytest

import dipolearray as da
from dipolearray.operators import DirectOperator, available_backends, make_operator
from dipolearray.operators._kernels import dipole_field, dipole_pair_forces


def numpy_twin(targets, sources, moments):
    """Slow, obviously correct sum of T(r) p over all pairs with r != 0."""
    out = np.zeros((targets.shape[0], 3, moments.shape[2]), dtype=moments.dtype)
    for i, t in enumerate(targets):
        for j, s in enumerate(sources):
            r = t - s
            d = np.linalg.norm(r)
            if d == 0:
                continue
            u = r / d
            T = (3 * np.outer(u, u) - np.eye(3)) / d**3
            out[i] += T @ moments[j]
    return out


def force_twin(pos, p):
    out = np.zeros_like(p)
    for i in range(len(pos)):
        for j in range(len(pos)):
            if i == j:
                continue
            r = pos[i] - pos[j]
            d = np.linalg.norm(r)
            u = r / d
            for k in range(p.shape[2]):
                a, b = p[i, :, k] @ u, p[j, :, k] @ u
                out[i, :, k] += (
                    3 / d**4 * (a * p[j, :, k] + b * p[i, :, k] + (p[i, :, k] @ p[j, :, k] - 5 * a * b) * u)
                )
    return out


@pytest.fixture
def cloud():
    rng = np.random.default_rng(11)
    pos = rng.uniform(-8, 8, size=(60, 3))
    return pos, rng


@pytest.mark.parametrize("k", [1, 2, 3, 4, 5, 7])
def test_kernel_matches_numpy_twin(cloud, k):
    pos, rng = cloud
    m = rng.normal(size=(60, 3, k))
    np.testing.assert_allclose(dipole_field(pos, pos, m), numpy_twin(pos, pos, m), rtol=1e-12, atol=1e-13)


def test_kernel_at_other_targets(cloud):
    pos, rng = cloud
    pts = rng.uniform(-9, 9, size=(17, 3))
    m = rng.normal(size=(60, 3, 3))
    np.testing.assert_allclose(dipole_field(pts, pos, m), numpy_twin(pts, pos, m), rtol=1e-12, atol=1e-13)


def test_operator_real_complex_and_shapes(cloud):
    pos, rng = cloud
    s = da.Scene(pos, da.Population(da.Sphere(0.1), da.Material(4.0)), check_overlap=False)
    op = make_operator(s, "direct")
    m = rng.normal(size=(60, 3, 2)) + 1j * rng.normal(size=(60, 3, 2))
    keep = m.copy()
    y = op.apply(m)
    np.testing.assert_array_equal(m, keep)
    np.testing.assert_allclose(y, numpy_twin(pos, pos, m), rtol=1e-12, atol=1e-13)
    assert y.dtype == np.complex128
    flat = op.apply(m[:, :, 0].reshape(-1))
    np.testing.assert_allclose(flat, y[:, :, 0].reshape(-1), rtol=1e-14)
    np.testing.assert_allclose(op.apply(m[:, :, 1]), y[:, :, 1], rtol=1e-14)
    with pytest.raises(da.InputError, match="moments"):
        op.apply(np.zeros((59, 3)))


def test_dense_matches_apply_and_is_symmetric(cloud):
    pos, rng = cloud
    s = da.Scene(pos, da.Population(da.Sphere(0.1), da.Material(4.0)), check_overlap=False)
    op = DirectOperator(s)
    T = op.dense()
    np.testing.assert_allclose(T, T.T, atol=1e-15)
    np.testing.assert_allclose(np.trace(T), 0.0, atol=1e-12)
    x = rng.normal(size=(180, 2))
    np.testing.assert_allclose(T @ x, op.apply(x), rtol=1e-12, atol=1e-13)
    lin = op.as_linear_operator()
    assert lin.dtype == np.float64 and lin.shape == (180, 180)
    np.testing.assert_allclose(lin @ x[:, 0], T @ x[:, 0], rtol=1e-12, atol=1e-13)


def test_force_kernel_matches_twin(cloud):
    pos, rng = cloud
    p = rng.normal(size=(60, 3, 2))
    np.testing.assert_allclose(dipole_pair_forces(pos, p), force_twin(pos, p), rtol=1e-11, atol=1e-13)


def test_registry_and_auto_choice():
    s = da.Scene([[0, 0, 0]], da.Population(da.Sphere(1.0), da.Material(4.0)))
    assert "direct" in available_backends()
    op = make_operator(s)
    assert op.backend == "direct" and "auto" in op.reason
    with pytest.raises(da.InputError, match="backend"):
        make_operator(s, "fmm-please")
