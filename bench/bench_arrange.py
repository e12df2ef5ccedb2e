"""Arrangement benchmark: generators and descriptors against the issue targets and a baseline.

Run:  python bench/bench_arrange.py [--quick]

Prints, for orientation on this machine (every timing follows a warm-up, so numba
compilation is excluded):
1. random sequential addition of 1e5 spheres at 0.30 (periodic and spherical sample),
   against a pure-Python cell-list addition (the generator this project shipped first)
   on the same bodies, and against the 10 s target;
2. dense packing of 1e4 spheres at 0.55 (and 0.60) against the 2 min target;
3. descriptors of 1e5 bodies (g(r) to three diameters, nearest gaps, coordination,
   clusters with percolation, chains) against the 10 s target and against a plain
   scipy cKDTree pair count within the same distance (the unavoidable part).
No BLAS-heavy code runs here, so OPENBLAS settings do not matter.
"""

from __future__ import annotations

import argparse
import math
import time

import numpy as np
from scipy.spatial import cKDTree

from dipolearray.arrange import (
    chains,
    clusters,
    coordination,
    dense_packing,
    nearest_gaps,
    radial_distribution,
    random_sequential_addition,
)


def python_addition(n, phi, rng):
    """Pure-Python random sequential addition on a dict cell list (baseline)."""
    rng = np.random.default_rng(rng)
    edge = (n * 4 / 3 * math.pi / phi) ** (1 / 3)
    ncell = int(edge // 2.0)
    cell = edge / ncell
    grid: dict[tuple, list] = {}
    pos = np.empty((n, 3))
    placed = 0
    while placed < n:
        c = rng.uniform(0, edge, 3)
        key = tuple((c // cell).astype(int) % ncell)
        ok = True
        for dx in (-1, 0, 1):
            for dy in (-1, 0, 1):
                for dz in (-1, 0, 1):
                    k = ((key[0] + dx) % ncell, (key[1] + dy) % ncell, (key[2] + dz) % ncell)
                    for j in grid.get(k, ()):
                        d = c - pos[j]
                        d -= edge * np.round(d / edge)
                        if d @ d < 4.0:
                            ok = False
                            break
                    if not ok:
                        break
                if not ok:
                    break
            if not ok:
                break
        if ok:
            pos[placed] = c
            grid.setdefault(key, []).append(placed)
            placed += 1
    return pos


def timed(fn):
    t = time.perf_counter()
    out = fn()
    return time.perf_counter() - t, out


def main(quick=False):
    n_rsa = 20_000 if quick else 100_000
    n_dense = 2_000 if quick else 10_000
    random_sequential_addition(500, 0.3, region="periodic", rng=0)
    random_sequential_addition(500, 0.3, region="sphere", rng=0)
    dense_packing(300, 0.5, rng=0)

    print(f"1. random sequential addition, {n_rsa} spheres at 0.30")
    t_per, arr = timed(lambda: random_sequential_addition(n_rsa, 0.3, region="periodic", rng=1))
    t_sph, _ = timed(lambda: random_sequential_addition(n_rsa, 0.3, region="sphere", rng=1))
    n_base = n_rsa // 10
    t_py, _ = timed(lambda: python_addition(n_base, 0.3, 1))
    t_nb, _ = timed(lambda: random_sequential_addition(n_base, 0.3, region="periodic", rng=1))
    print(f"   periodic {t_per:.2f} s, sphere {t_sph:.2f} s  (target 10 s: {10 / t_per:.1f}x margin)")
    print(
        f"   at {n_base}: pure-Python cell list {t_py:.2f} s vs compiled {t_nb:.3f} s "
        f"-> {t_py / t_nb:.0f}x faster"
    )

    print(f"2. dense packing, {n_dense} spheres")
    for phi in (0.55, 0.60):
        t, d = timed(lambda phi=phi: dense_packing(n_dense, phi, rng=1))
        print(f"   fraction {phi:.2f}: {t:.1f} s  (target 120 s at 0.55: {120 / t:.1f}x margin)")

    print(f"3. descriptors of {arr.n_bodies} bodies")
    total = 0.0
    for name, fn in [
        ("g(r) to 3 diameters", lambda: radial_distribution(arr, 6.0, n_bins=120)),
        ("nearest gaps", lambda: nearest_gaps(arr)),
        ("coordination at gap 0.1", lambda: coordination(arr, 0.1)),
        ("clusters + percolation at 0.1", lambda: clusters(arr, 0.1)),
        ("chains at 0.1", lambda: chains(arr, 0.1)),
    ]:
        t, _ = timed(fn)
        total += t
        print(f"   {name}: {t:.2f} s")
    tree = cKDTree(np.mod(arr.positions, arr.box), boxsize=arr.box)
    t_base, _ = timed(lambda: tree.count_neighbors(tree, 6.0))
    print(f"   all: {total:.2f} s  (target 10 s: {10 / total:.1f}x margin)")
    print(
        f"   baseline cKDTree pair count to 6.0: {t_base:.2f} s -> descriptors cost {total / t_base:.1f}x it"
    )


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--quick", action="store_true", help="smaller sizes for a smoke run")
    main(ap.parse_args().quick)
