"""Dielectric spectrum benchmark: the spectral path against one solve per frequency.

Run:  env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE python bench/bench_spectra.py [--quick]

N = 2000 random spheres in a spherical sample at volume fraction 0.2; the filler
relaxes (Debye, plus a DC conductivity for Maxwell-Wagner-Sillars loss) in a slightly
lossy host; 200 log-spaced frequencies. Baseline: one direct solve (COCG to 1e-12,
three field directions) per frequency. Spectral path: one block-Lanczos decomposition,
then evaluation at every frequency. Prints both times, their ratio (target >= 50) and
the largest relative difference of the tensors (target <= 1e-8). Timings follow a
warm-up call, so compilation is excluded.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

import dipolearray as da
from dipolearray.arrange import random_sequential_addition
from dipolearray.materials import constant, debye
from dipolearray.observables import effective_permittivity
from dipolearray.spectra import frequency_response, spectral_representation


def blas_kernel():
    try:
        from threadpoolctl import threadpool_info

        return ", ".join(f"{i['internal_api']}:{i.get('architecture')}" for i in threadpool_info())
    except Exception:  # noqa: BLE001 - reporting only
        return "unknown (threadpoolctl missing)"


def main(quick=False):
    n, n_freq = (500, 40) if quick else (2000, 200)
    arr = random_sequential_addition(n, 0.2, region="sphere", rng=1)
    base = da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(10.0)), host=da.Material(2.5)
    )
    host = constant(2.5, 0.005)
    fill = debye(8.0, 40.0, 1e-5, sigma_dc=1e-6)
    f = np.logspace(1, 8, n_freq)
    print(f"BLAS: {blas_kernel()}")
    # Warm-up (compiles the kernels).
    da.solve(base, "cocg", rtol=1e-6)
    spectral_representation(base, method="lanczos", max_steps=3)

    t = time.perf_counter()
    sp = spectral_representation(base, method="lanczos")
    eps = frequency_response(sp, host, fill, f)
    t_spec = time.perf_counter() - t
    print(
        f"spectral: {t_spec:.2f} s ({sp.n_applies} applies, {len(sp.poles)} poles, converged {sp.converged}, "
        f"estimate {sp.estimate:.1e})"
    )

    t = time.perf_counter()
    worst = 0.0
    for i, fi in enumerate(f):
        pop = da.Population(da.Sphere(1.0), da.Material(complex(fill(fi))))
        sc = base.replace(host=da.Material(complex(host(fi))), populations=(pop,))
        ref = effective_permittivity(da.solve(sc, "cocg", rtol=1e-12)).tensor
        worst = max(worst, float(np.max(np.abs(eps[i] - ref)) / np.max(np.abs(ref))))
    t_direct = time.perf_counter() - t
    print(f"direct: {t_direct:.2f} s for {n_freq} solves")
    print(f"speed-up spectral / direct: {t_direct / t_spec:.1f}x (target >= 50)")
    print(f"largest relative difference of the tensors: {worst:.2e} (target <= 1e-8)")


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="N = 500, 40 frequencies (smoke run)")
    main(ap.parse_args().quick)
