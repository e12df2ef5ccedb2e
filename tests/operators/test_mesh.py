"""Free-space particle-mesh backend against the direct kernel, its numpy twins, and the solver."""

import math

import numpy as np
import pytest
from scipy.special import erf, erfc

import dipolearray as da
from dipolearray.arrange import clustered, cubic_lattice_sphere, random_sequential_addition
from dipolearray.operators import MeshOperator, make_operator


def _scene(kind, n=1500):
    if kind == "random":
        arr = random_sequential_addition(n, 0.2, region="sphere", rng=1)
    elif kind == "clustered":
        arr = clustered(n, 0.1, cluster_size=20, fraction_clustered=0.7, radius=1.0, gap=0.02, rng=2)
    else:
        arr = cubic_lattice_sphere(2.3, 16.0, radius=1.0)
    return da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(10.0)), host=da.Material(1.0)
    )


@pytest.mark.parametrize("kind", ["random", "clustered", "lattice"])
@pytest.mark.parametrize("accuracy", [1e-6, 1e-10])
def test_mesh_agrees_with_direct_to_the_requested_accuracy(kind, accuracy):
    sc = _scene(kind)
    x = np.random.default_rng(0).standard_normal((sc.n_bodies, 3, 2))
    direct = make_operator(sc, "direct")
    ref = direct.apply(x)
    op = make_operator(sc, "mesh", accuracy=accuracy)
    got = op.apply(x)
    assert np.linalg.norm(got - ref) <= accuracy * np.linalg.norm(ref)
    # Complex moments: real and imaginary parts through the same real applies.
    z = x[:, :, :1] + 0.5j * x[:, :, 1:]
    zr = direct.apply(z)
    assert np.linalg.norm(op.apply(z) - zr) <= accuracy * np.linalg.norm(zr)


def test_relaxed_levels_are_coarser_meet_their_accuracy_and_restore():
    sc = _scene("random")
    x = np.random.default_rng(1).standard_normal((sc.n_bodies, 3, 3))
    ref = make_operator(sc, "direct").apply(x)
    op = MeshOperator(sc, accuracy=1e-9)
    fine = op.mesh.copy()
    for asked, level in ((3.7e-6, 1e-6), (2e-4, 1e-4), (0.5, 1e-3), (1e-12, 1e-9)):
        op.set_apply_accuracy(asked)
        assert op.apply_accuracy == pytest.approx(level, rel=1e-12)
        err = np.linalg.norm(op.apply(x) - ref) / np.linalg.norm(ref)
        assert err <= level
        if level > 1e-9:
            assert np.all(op._level.mesh < fine) and op._level.r_cut < op.r_cut
    op.set_apply_accuracy(None)
    assert op.apply_accuracy == 1e-9 and op._level is op._levels[1e-9]
    # An operator looser than the relaxation ceiling is never tightened nor loosened.
    loose = MeshOperator(sc, accuracy=5e-3)
    loose.set_apply_accuracy(0.5)
    assert loose.apply_accuracy == 5e-3 and len(loose._levels) == 1


def _gauss(x, sigma):
    return np.exp(-(x**2) / (2 * sigma**2)) / math.sqrt(2 * math.pi * sigma**2)


def test_spread_and_gather_match_their_numpy_twins():
    from dipolearray.operators._kernels import mesh_gather, mesh_spread, mesh_starts

    rng = np.random.default_rng(4)
    n, P, h, sigma = 40, 6, 0.7, 0.6
    shape = (30, 28, 26)
    u = rng.uniform(P, np.array(shape) - P, (n, 3))
    p = rng.standard_normal((n, 3))
    st = mesh_starts(u, P)
    slab = st[:, 0] // P
    order = np.argsort(slab, kind="stable").astype(np.int64)
    slabs = np.searchsorted(slab[order], np.arange(shape[0] // P + 3)).astype(np.int64)
    Q = np.zeros(shape)
    mesh_spread(u, p, P, h, sigma, order, slabs, Q)
    # Twin: the truncated Gaussian gradient evaluated point by point.
    T = np.zeros(shape)
    Phi = rng.standard_normal(shape)
    E = np.zeros((n, 3))
    for j in range(n):
        idx = [np.floor(u[j, a]).astype(int) - P // 2 + 1 + np.arange(P) for a in range(3)]
        dist = [(u[j, a] - idx[a]) * h for a in range(3)]
        w = [_gauss(d, sigma) for d in dist]
        dw = [-d / sigma**2 * g for d, g in zip(dist, w, strict=True)]
        grad = [
            np.einsum("a,b,c->abc", dw[0], w[1], w[2]),
            np.einsum("a,b,c->abc", w[0], dw[1], w[2]),
            np.einsum("a,b,c->abc", w[0], w[1], dw[2]),
        ]
        block = np.ix_(*idx)
        T[block] += sum(p[j, k] * grad[k] for k in range(3))
        E[j] = [-(grad[k] * Phi[block]).sum() for k in range(3)]
    np.testing.assert_allclose(Q, T, rtol=1e-12, atol=1e-14 * np.abs(T).max())
    out = np.zeros((n, 3))
    mesh_gather(u, P, h, sigma, order, Phi, out)
    np.testing.assert_allclose(out, E, rtol=1e-11, atol=1e-13 * np.abs(E).max())


def test_short_range_part_matches_the_erfc_formula():
    # Ewald's real-space dipole field: E = -p B(r) + (p . r) C(r) r with
    # B = [erfc(ar) + 2ar/sqrt(pi) e^(-a^2 r^2)]/r^3 and
    # C = [3 erfc(ar) + 2ar/sqrt(pi) (3 + 2a^2 r^2) e^(-a^2 r^2)]/r^5 (de Leeuw, Perram and Smith 1980).
    sc = _scene("clustered", n=300)
    op = MeshOperator(sc, accuracy=1e-10, neighbours=60.0)
    x = np.random.default_rng(5).standard_normal((sc.n_bodies, 3, 2))
    got = op._real_space(x, op.r_cut)
    pos = np.asarray(sc.positions)
    a = op.alpha
    d = pos[:, None, :] - pos[None, :, :]
    r = np.linalg.norm(d, axis=-1)
    np.fill_diagonal(r, 1e6)  # far beyond the cutoff: no self term
    g = 2 * a * r / math.sqrt(math.pi) * np.exp(-((a * r) ** 2))
    B = (erfc(a * r) + g) / r**3
    C = (3 * erfc(a * r) + g * (3 + 2 * (a * r) ** 2)) / r**5
    mask = r < op.r_cut
    B, C = np.where(mask, B, 0.0), np.where(mask, C, 0.0)
    pr = np.einsum("ijc,jck->ijk", d, x)
    ref = np.einsum("ij,ijk,ijc->ick", C, pr, d) - np.einsum("ij,jck->ick", B, x)
    np.testing.assert_allclose(got, ref, rtol=1e-9, atol=1e-12 * np.abs(ref).max())
    assert mask.sum() > 10 * sc.n_bodies  # the cutoff holds many pairs


def test_kernel_split_sums_to_the_smooth_screened_potential():
    # erf(alpha r)/r = G_sigma * G_sigma * erf(alpha' r)/r when 1/(4 alpha^2) = sigma^2 + 1/(4 alpha'^2)
    # (Gaussian convolutions add variances): checked in one dimension of the radial
    # profile by direct quadrature of the two-Gaussian smoothing in 3D.
    from dipolearray.operators._mesh import mesh_parameters

    alpha = 0.4
    sigma, h, rc, P = mesh_parameters(1e-8, alpha)
    a_k = 1.0 / (2.0 * math.sqrt(1.0 / (4 * alpha**2) - sigma**2))
    # Two Gaussians of width sigma are one of width sigma sqrt(2); smooth erf(a_k r)/r
    # by it on a fine grid and compare with erf(alpha r)/r at a few radii.
    s2 = math.sqrt(2.0) * sigma
    t = np.linspace(-7 * s2, 7 * s2, 57)
    dt = t[1] - t[0]
    X, Y, Z = np.meshgrid(t, t, t, indexing="ij")
    w = np.exp(-(X**2 + Y**2 + Z**2) / (2 * s2**2)) / (2 * math.pi * s2**2) ** 1.5 * dt**3
    for r0 in (0.0, 1.3, 4.0):
        rr = np.sqrt((X + r0) ** 2 + Y**2 + Z**2)
        with np.errstate(divide="ignore", invalid="ignore"):
            k = np.where(rr > 0, erf(a_k * rr) / rr, 2 * a_k / math.sqrt(math.pi))
        want = erf(alpha * r0) / r0 if r0 > 0 else 2 * alpha / math.sqrt(math.pi)
        assert (w * k).sum() == pytest.approx(want, rel=1e-8)
    assert P % 2 == 0 and h < sigma and rc * alpha == pytest.approx(math.sqrt(math.log(30 / 1e-8)))


def test_mesh_solve_meets_the_tolerance_with_relaxed_applies():
    sc = _scene("clustered", n=2000)
    rtol = 1e-7
    sol = da.solve(sc, "cocg", rtol=rtol, backend="mesh")
    assert sol.backend == "mesh" and sol.converged
    acc = np.array(sol.extra["apply_accuracy"])
    assert acc.max() >= 1e3 * acc.min() and acc.max() <= 1e-3
    # True residual recomputed with the exact direct operator.
    op = make_operator(sc, "direct")
    p = np.asarray(sol.moments)
    b = np.einsum("nij,kj->nik", sc.polarizability, sc.field)
    res = b - (p - np.einsum("nij,njk->nik", sc.polarizability, op.apply(p)))
    assert np.linalg.norm(res) <= 1.5 * rtol * np.linalg.norm(b)
    np.testing.assert_allclose(
        da.effective_permittivity(sol).tensor,
        da.effective_permittivity(da.solve(sc, "cocg", rtol=rtol, backend="direct")).tensor,
        rtol=1e-6,
    )


def test_mesh_solve_of_a_cubic_cut_reproduces_the_direct_clausius_mossotti_approach():
    # Lorentz local field (Jackson 1999, sec. 4.5): a spherical cut of a simple cubic
    # lattice approaches Clausius-Mossotti; the mesh solve must give the direct solve's
    # tensor (isotropic by cubic symmetry) to its tolerance, within 1 % of CM here.
    from dipolearray.mixing import clausius_mossotti

    d = 2.5
    lay = cubic_lattice_sphere(d, 7 * d)
    s = da.Scene(
        lay.positions, da.Population(da.Sphere(1.0), da.Material(10.0)), sample_radius=lay.sample_radius
    )
    got = da.effective_permittivity(da.solve(s, "cocg", rtol=1e-9, backend="mesh")).tensor
    ref = da.effective_permittivity(da.solve(s, "cocg", rtol=1e-9, backend="direct")).tensor
    np.testing.assert_allclose(got, ref, rtol=1e-8, atol=1e-9)
    cm = clausius_mossotti(1.0, s.polarizability[0, 0, 0], 1 / d**3)
    assert abs(got[0, 0] - cm) < 0.01 * abs(cm - 1.0)


def test_mesh_bad_input():
    sc = _scene("random", n=100)
    with pytest.raises(da.InputError, match="accuracy"):
        MeshOperator(sc, accuracy=1e-13)
    with pytest.raises(da.InputError, match="accuracy"):
        MeshOperator(sc, accuracy=0.05)
    with pytest.raises(da.InputError, match="neighbours"):
        MeshOperator(sc, neighbours=-3)
    with pytest.raises(da.InputError, match="max_memory"):
        MeshOperator(sc, max_memory=0)
    arr = random_sequential_addition(50, 0.1, region="periodic", rng=3)
    per = da.Scene.from_arrangement(arr, da.Population(da.Sphere(1.0), da.Material(4.0)))
    with pytest.raises(da.InputError, match="backend"):
        MeshOperator(per)


def _far_apart_clusters():
    # Two compact groups 4000 radii apart on a diagonal: a bounding box almost all empty.
    arr = random_sequential_addition(400, 0.2, region="sphere", rng=6)
    pos = np.concatenate([arr.positions, arr.positions + 4000.0 / math.sqrt(3.0)])
    return da.Scene(pos, da.Population(da.Sphere(1.0), da.Material(5.0)))


def test_a_mesh_too_large_for_memory_is_refused_and_auto_falls_back(monkeypatch):
    import dipolearray.operators._mesh as mesh

    sc = _far_apart_clusters()
    with pytest.raises(da.InputError, match="max_memory") as err:
        MeshOperator(sc, accuracy=1e-6)
    assert "fmm" in str(err.value) and err.value.key == "backend"
    # A normal sample of the same count fits easily.
    ok = MeshOperator(_scene("random", n=800), accuracy=1e-6)
    assert mesh.mesh_memory(ok.mesh, ok._level.fft_shape) < 1e8
    monkeypatch.setattr(mesh, "MESH_CROSSOVER", ((0.0, 100),))
    op = make_operator(sc, "auto", accuracy=1e-6)
    assert op.backend == "direct" and "refused" in op.reason
    x = np.random.default_rng(7).standard_normal((sc.n_bodies, 3, 1))
    np.testing.assert_array_equal(op.apply(x), make_operator(sc, "direct").apply(x))


def test_automatic_choice_picks_the_mesh_only_above_the_crossover_and_meets_the_accuracy(monkeypatch):
    import dipolearray.operators._fmm as fmm
    import dipolearray.operators._mesh as mesh

    sc = _scene("clustered")
    assert make_operator(sc, "auto", accuracy=1e-7).backend == "direct"
    monkeypatch.setattr(mesh, "MESH_CROSSOVER", ((1e-4, 100), (1e-8, 1000), (1e-12, 1400), (0.0, 10**12)))
    assert mesh.mesh_crossover(1e-3) == 100 and mesh.mesh_crossover(1e-9) == 1400
    assert mesh.mesh_crossover(1e-13) == 10**12 and mesh.mesh_crossover(0.05) == 10**12
    x = np.random.default_rng(3).standard_normal((sc.n_bodies, 3, 1))
    ref = make_operator(sc, "direct").apply(x)
    for acc in (1e-3, 1e-6, 1e-10):
        op = make_operator(sc, "auto", accuracy=acc)
        assert op.backend == "mesh" and f"{acc:g}" in op.reason
        assert np.linalg.norm(op.apply(x) - ref) <= acc * np.linalg.norm(ref)
    # Tighter than the mesh offers: never the mesh (direct here, fmm only above its own crossover).
    monkeypatch.setattr(fmm, "CROSSOVER", ((0.0, 10**12),))
    assert make_operator(sc, "auto", accuracy=1e-13).backend == "direct"
    sol = da.solve(sc, rtol=1e-6)
    assert sol.backend == "mesh" and "crossover" in sol.extra["backend_reason"]
