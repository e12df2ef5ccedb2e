"""Engine benchmark: matrix-free apply, solve, memory, against plain numpy in the same run.

Run:  env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE python bench/bench_engine.py [--quick]

Prints, for orientation on this machine:
1. pair interactions per second of the matrix-free apply at N = 1e3, 1e4, 3e4 for one and
   three right-hand sides (three right-hand sides count 3 pair-rhs interactions per pair);
2. at N = 4000 the dense numpy path (build the 3N x 3N matrix by broadcasting, then matvec)
   against the matrix-free apply;
3. the solve to relative residual 1e-8 at N = 4000, volume fraction 0.1, contrast 10,
   three field directions: plain numpy (build + numpy.linalg.solve) against dipolearray's
   auto solver, with the difference of the answers;
4. peak traced memory of the matrix-free solve at two sizes (O(N): bytes per body flat).
Every timing follows a warm-up call, so compilation is excluded.
"""

from __future__ import annotations

import argparse
import time
import tracemalloc

import numpy as np

import dipolearray as da
from dipolearray.arrange import random_sequential_addition
from dipolearray.operators import make_operator


def best_time(fn, repeats=3):
    fn()
    best = np.inf
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def scene_of(n, phi=0.1, contrast=10.0, seed=0):
    lay = random_sequential_addition(n, phi, rng=seed)
    pop = da.Population(da.Sphere(1.0), da.Material(contrast))
    return da.Scene(lay.positions, pop, host=da.Material(1.0), sample_radius=lay.sample_radius)


def numpy_dense_T(pos):
    n = pos.shape[0]
    r = pos[:, None, :] - pos[None, :, :]
    d2 = np.einsum("ijc,ijc->ij", r, r)
    np.fill_diagonal(d2, 1.0)
    inv = d2**-0.5
    inv3 = inv**3
    u = r * inv[:, :, None]
    T = (3.0 * u[:, :, :, None] * u[:, :, None, :] - np.eye(3)) * inv3[:, :, None, None]
    T[np.arange(n), np.arange(n)] = 0.0
    return T.transpose(0, 2, 1, 3).reshape(3 * n, 3 * n)


def blas_info():
    try:
        from threadpoolctl import threadpool_info

        return "; ".join(
            f"{i.get('internal_api')} {i.get('version')} "
            f"({i.get('architecture')}, {i.get('num_threads')} threads)"
            for i in threadpool_info()
            if i.get("user_api") == "blas"
        )
    except ImportError:
        return "threadpoolctl not installed"


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="smaller sizes (smoke run)")
    args = ap.parse_args()
    sizes = (1000, 4000) if args.quick else (1000, 10000, 30000)
    n_solve = 1500 if args.quick else 4000
    print(f"BLAS: {blas_info()}")
    from dipolearray.operators import get_num_threads

    print(f"kernel threads: {get_num_threads()}")

    print("\n1. matrix-free apply")
    print(f"{'N':>7} {'rhs':>4} {'time_s':>10} {'pairs/s':>12} {'pair-rhs/s':>12}")
    for n in sizes:
        rng = np.random.default_rng(1)
        pos = rng.uniform(0, n ** (1 / 3) * 3.0, size=(n, 3))
        s = da.Scene(pos, da.Population(da.Sphere(0.01), da.Material(4.0)), check_overlap=False)
        op = make_operator(s, "direct")
        for k in (1, 3):
            x = rng.normal(size=(n, 3, k))
            t = best_time(lambda op=op, x=x: op._apply(x), repeats=3 if n <= 10000 else 1)
            pairs = n * (n - 1)
            print(f"{n:>7} {k:>4} {t:>10.4f} {pairs / t:>12.3e} {k * pairs / t:>12.3e}")

    print(f"\n2. dense numpy matvec vs matrix-free at N = {n_solve}")
    s = scene_of(n_solve)
    pos = np.ascontiguousarray(s.positions)
    t0 = time.perf_counter()
    T = numpy_dense_T(pos)
    t_build = time.perf_counter() - t0
    x = np.random.default_rng(2).normal(size=3 * n_solve)
    t_mv = best_time(lambda T=T, x=x: T @ x)
    op = make_operator(s, "direct")
    t_mf = best_time(lambda: op._apply(x.reshape(n_solve, 3, 1)))
    np.testing.assert_allclose(op.apply(x), T @ x, rtol=1e-9, atol=1e-12)
    pairs = n_solve * (n_solve - 1)
    print(
        f"numpy build {t_build:.2f} s ({T.nbytes / 1e9:.2f} GB), matvec {t_mv * 1e3:.1f} ms "
        f"({pairs / t_mv:.3e} pairs/s)"
    )
    print(
        f"matrix-free apply {t_mf * 1e3:.1f} ms ({pairs / t_mf:.3e} pairs/s), "
        f"ratio numpy/matrix-free = {t_mv / t_mf:.2f}x"
    )

    print(f"\n3. solve to rtol 1e-8, N = {n_solve}, phi 0.1, contrast 10, 3 field directions")
    t0 = time.perf_counter()
    alpha = s.polarizability[0, 0, 0]
    M = -alpha * T
    M[np.diag_indices_from(M)] += 1.0
    b = np.tile(alpha * np.eye(3), (n_solve, 1))
    p_np = np.linalg.solve(M, b)
    t_np = time.perf_counter() - t0 + t_build
    del M, T
    da.solve(scene_of(200), "cocg")  # warm-up compile of the solver path
    print(f"numpy build + solve {t_np:.2f} s")
    # A residual of 1e-8 bounds the moment error by cond(M) * 1e-8; one decade tighter
    # brings the answers together to 1e-8, so both are shown.
    for rtol in (1e-8, 1e-9):
        t0 = time.perf_counter()
        sol = da.solve(s, rtol=rtol)
        t_da = time.perf_counter() - t0
        diff = np.abs(sol.moments.reshape(3 * n_solve, 3) - p_np).max() / np.abs(p_np).max()
        print(
            f"  rtol {rtol:g}: dipolearray {sol.method} {t_da:.3f} s ({sol.iterations} iterations), "
            f"speed-up {t_np / t_da:.1f}x, max relative difference {diff:.2e}"
        )

    print("\n4. memory of the matrix-free solve (tracemalloc peak)")
    for n in (n_solve // 2, n_solve):
        sc = scene_of(n, seed=3)
        tracemalloc.start()
        da.solve(sc, "cocg", rtol=1e-8)
        _cur, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        print(
            f"N = {n:>6}: peak {peak / 1e6:8.2f} MB, {peak / n / 1e3:6.2f} kB per body "
            f"(an N x N float64 array would be {n * n * 8 / 1e6:.0f} MB)"
        )


if __name__ == "__main__":
    main()
