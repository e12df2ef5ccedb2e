"""Periodic (Ewald) benchmark: solve cost against N, and an ensemble on two workers against serial.

Run:  env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE python bench/bench_periodic.py [--quick]

Prints, for orientation on this machine (timings follow a warm-up, so compilation is
excluded):
1. the periodic solve of N random spheres at volume fraction 0.3, contrast 10, three
   field directions, to relative residual 1e-8 (Ewald accuracy 1e-9), for N = 1e3, 3e3,
   1e4 (and 3e4 with --large), with the Ewald parameters, iterations and the fitted
   cost exponent, against the 60 s target at 1e4;
2. an ensemble of 16 realizations of N = 2000 at 0.3: serial on one core (baseline),
   serial with the kernels' threads, and a Dask LocalCluster of two worker processes.
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np

import dipolearray as da
from dipolearray.arrange import dense_packing, random_sequential_addition
from dipolearray.operators import EwaldOperator
from dipolearray.sweep import RandomDispersion, run_sweep


def periodic_scene(n, phi=0.3, contrast=10.0, seed=0):
    gen = random_sequential_addition if phi < 0.3 else dense_packing
    arr = gen(n, phi, region="periodic", rng=seed)
    return da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(contrast)), host=da.Material(1.0)
    )


def main(quick=False, large=False):
    sizes = [500, 1000, 2000] if quick else [1000, 3000, 10000] + ([30000] if large else [])
    warm = periodic_scene(200)
    da.solve(warm, "cocg", rtol=1e-8, operator=EwaldOperator(warm, accuracy=1e-9))
    print("1. periodic solve, fraction 0.3, contrast 10, 3 directions, rtol 1e-8, Ewald accuracy 1e-9")
    times = []
    for n in sizes:
        scene = periodic_scene(n)
        t = time.perf_counter()
        op = EwaldOperator(scene, accuracy=1e-9)
        sol = da.solve(scene, "cocg", rtol=1e-8, operator=op)
        dt = time.perf_counter() - t
        times.append(dt)
        eps = da.effective_permittivity(sol).isotropic
        print(
            f"   N = {n:6d}: {dt:7.2f} s, {sol.iterations} iterations, {op.n_applies} applies, "
            f"eps_eff {complex(eps).real:.5f}; {op.describe()}"
        )
    slope = np.polyfit(np.log(sizes), np.log(times), 1)[0]
    print(f"   cost exponent over N = {sizes[0]}..{sizes[-1]}: {slope:.2f}")
    if 10000 in sizes:
        t10 = times[sizes.index(10000)]
        print(f"   N = 1e4 against the 60 s target: {60 / t10:.2f}x")

    n_ens, n_real = (500, 8) if quick else (2000, 16)
    print(f"2. ensemble of {n_real} realizations, N = {n_ens}, fraction 0.3")
    points = [{"volume_fraction": 0.3, "eps_inclusion": 10.0, "eps_host": 1.0}]
    opts = {"rtol": 1e-8}
    from dipolearray.operators import get_num_threads, set_num_threads

    threads = get_num_threads()
    with tempfile.TemporaryDirectory() as tmp:
        set_num_threads(1)
        t = time.perf_counter()
        run_sweep(
            Path(tmp) / "one.h5", RandomDispersion(n_ens), points, n_real, solve_options=opts, workers=0
        )
        one_core = time.perf_counter() - t
        set_num_threads(threads)
        t = time.perf_counter()
        run_sweep(
            Path(tmp) / "serial.h5", RandomDispersion(n_ens), points, n_real, solve_options=opts, workers=0
        )
        serial = time.perf_counter() - t
        t = time.perf_counter()
        run_sweep(
            Path(tmp) / "dask.h5", RandomDispersion(n_ens), points, n_real, solve_options=opts, workers=2
        )
        parallel = time.perf_counter() - t
    print(f"   serial on one core (kernels single-threaded): {one_core:.1f} s")
    print(f"   serial, kernels on {threads} threads: {serial:.1f} s -> {one_core / serial:.2f}x")
    print(f"   two Dask worker processes, one thread each: {parallel:.1f} s -> {one_core / parallel:.2f}x")


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--quick", action="store_true", help="smaller sizes for a smoke run")
    ap.add_argument("--large", action="store_true", help="also N = 3e4")
    args = ap.parse_args()
    main(args.quick, args.large)
