"""Open-boundary scaling: where the fast-multipole backend beats the direct kernel, and solves against N.

Run:  env -u OPENBLAS_CORETYPE -u OPENBLAS_L2_SIZE python bench/bench_scaling.py [--quick] [--solve N ...]

1. Crossover: one apply (three right-hand sides) of the direct numba kernel against
   fmm3dpy at requested accuracies 1e-3, 1e-6, 1e-9 for random spheres at volume
   fraction 0.2, N from 5e3 to 8e4; prints the times, their ratio and the measured
   relative error, and the crossover N per accuracy (what ``operators._fmm.CROSSOVER``
   records).
2. Solves: random spheres at 0.2, contrast 10, tolerance 1e-6, three field
   directions, COCG with the automatic backend, for the N given with --solve
   (default 1e4 and 1e5): time, iterations, backend and peak memory (RSS).
3. With --periodic N ...: periodic boxes of random spheres at 0.2, contrast 10,
   tolerance 1e-6 (the open state), by smooth PME (accuracy 1e-7, a tenth of the
   tolerance, as ``backend="auto"`` asks) against plain Ewald (same accuracy) up to
   N = 1e4; prints time, iterations, the cost exponent between successive N and the
   peak memory.
4. With --open N ...: the open state (random spheres at 0.2 in a spherical sample,
   contrast 10, tolerance 1e-6, three field directions) solved by COCG on the
   free-space particle-mesh backend (accuracy 1e-7, relaxed by decades as the residual
   falls): build and solve time, iterations, applies per accuracy level, the cost
   exponent between successive N, peak memory; against the direct solve up to 2e4.
5. With --mesh-crossover: one apply (three right-hand sides) of the direct kernel
   against the particle-mesh backend at accuracies 1e-3, 1e-6, 1e-9 (what
   ``operators._mesh.MESH_CROSSOVER`` records for ``backend="auto"``).
6. With --iterations: COCG iteration counts against N (1e3 .. 6.4e4) at fixed volume
   fraction and contrast (0.2 / 10, 0.3 / 100, 0.3 / 1e4), tolerance 1e-6: the body-block
   Jacobi scaling (``alpha^1/2``) must keep them flat.
7. With --pme-crossover: one apply of plain Ewald against smooth PME (periodic random
   0.2, N = 500 .. 8000, accuracies 1e-4, 1e-7, 1e-10): the crossover that
   ``operators._pme.PME_CROSSOVER`` records for ``backend="auto"``.
"""

from __future__ import annotations

import argparse
import math
import resource
import time

import numpy as np

import dipolearray as da
from dipolearray.arrange import random_sequential_addition
from dipolearray.operators import make_operator


def scene(n, phi=0.2, contrast=10.0, seed=0):
    arr = random_sequential_addition(n, phi, region="sphere", rng=seed)
    return da.Scene.from_arrangement(
        arr, da.Population(da.Sphere(1.0), da.Material(contrast)), host=da.Material(1.0)
    )


def crossover(sizes, accuracies):
    warm = scene(500)
    x = np.ones((500, 3, 3))
    make_operator(warm, "direct").apply(x)
    make_operator(warm, "fmm", accuracy=1e-6).apply(x)
    first = {}
    print("N        direct_s   " + "   ".join(f"fmm@{a:g}_s (ratio, err)" for a in accuracies))
    for n in sizes:
        sc = scene(n)
        x = np.random.default_rng(0).standard_normal((n, 3, 3))
        t = time.perf_counter()
        ref = make_operator(sc, "direct").apply(x)
        td = time.perf_counter() - t
        cells = []
        for a in accuracies:
            op = make_operator(sc, "fmm", accuracy=a)
            t = time.perf_counter()
            y = op.apply(x)
            tf = time.perf_counter() - t
            err = np.linalg.norm(y - ref) / np.linalg.norm(ref)
            cells.append(f"{tf:8.3f} ({td / tf:5.2f}x, {err:.1e})")
            if tf < td and a not in first:
                first[a] = n
        print(f"{n:<8d} {td:9.3f}   " + "   ".join(cells))
    for a in accuracies:
        print(f"crossover at accuracy {a:g}: N = {first.get(a, '> ' + str(sizes[-1]))}")


def solves(sizes):
    for n in sizes:
        sc = scene(n, seed=1)
        t = time.perf_counter()
        sol = da.solve(sc, "cocg", rtol=1e-6)
        dt = time.perf_counter() - t
        rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1e6
        acc = sol.extra.get("apply_accuracy")
        relaxed = f", apply accuracy {acc[0]:.1e} -> {max(acc):.1e} (inexact Krylov)" if acc else ""
        print(
            f"solve N = {n}: {dt:.1f} s, {sol.iterations} iterations, backend {sol.backend}, "
            f"converged {sol.converged}{relaxed}, peak RSS so far {rss:.2f} GB",
            flush=True,
        )


def pme_crossover(sizes=(500, 1000, 2000, 4000, 8000), accuracies=(1e-4, 1e-7, 1e-10)):
    """One apply (three right-hand sides) of plain Ewald against smooth PME, periodic random 0.2."""
    from dipolearray.operators import EwaldOperator, PMEOperator

    first = {}
    print("N        " + "   ".join(f"ewald/pme@{a:g} (s, s, ratio, err)" for a in accuracies))
    for n in sizes:
        arr = random_sequential_addition(n, 0.2, region="periodic", rng=0)
        sc = da.Scene.from_arrangement(
            arr, da.Population(da.Sphere(1.0), da.Material(10.0)), host=da.Material(1.0)
        )
        x = np.random.default_rng(0).standard_normal((n, 3, 3))
        cells = []
        for a in accuracies:
            ops = [EwaldOperator(sc, accuracy=a), PMEOperator(sc, accuracy=a)]
            times, ys = [], []
            for op in ops:
                op.apply(x)  # compile / warm
                t = time.perf_counter()
                ys.append(op.apply(x))
                times.append(time.perf_counter() - t)
            err = np.linalg.norm(ys[1] - ys[0]) / np.linalg.norm(ys[0])
            cells.append(f"{times[0]:.3f} {times[1]:.3f} {times[0] / times[1]:5.2f}x {err:.0e}")
            if times[1] < times[0] and a not in first:
                first[a] = n
        print(f"{n:<8d} " + "   ".join(cells), flush=True)
    for a in accuracies:
        print(f"PME crossover at accuracy {a:g}: N = {first.get(a, '> ' + str(sizes[-1]))}")


def periodic(sizes, accuracy=1e-7, rtol=1e-6, ewald_max=10000):
    """Periodic solves (random 0.2, contrast 10) by smooth PME, against Ewald up to ``ewald_max``."""
    from dipolearray.operators import EwaldOperator, PMEOperator

    prev = None
    for n in sizes:
        arr = random_sequential_addition(n, 0.2, region="periodic", rng=0)
        sc = da.Scene.from_arrangement(
            arr, da.Population(da.Sphere(1.0), da.Material(10.0)), host=da.Material(1.0)
        )
        t = time.perf_counter()
        op = PMEOperator(sc, accuracy=accuracy)
        sol = da.solve(sc, "cocg", rtol=rtol, operator=op)
        tp = time.perf_counter() - t
        line = f"periodic N = {n}: PME {tp:.1f} s ({sol.iterations} iterations, {op.describe()})"
        if prev is not None:
            line += f"; exponent from N = {prev[0]}: {math.log(tp / prev[1]) / math.log(n / prev[0]):.2f}"
        prev = (n, tp)
        if n <= ewald_max:
            t = time.perf_counter()
            ref = da.solve(sc, "cocg", rtol=rtol, operator=EwaldOperator(sc, accuracy=accuracy))
            te = time.perf_counter() - t
            d = np.abs(da.effective_permittivity(sol).tensor - da.effective_permittivity(ref).tensor).max()
            line += f"; Ewald {te:.1f} s ({te / tp:.1f}x), tensors differ by {d:.1e}"
        rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1e6
        print(line + f"; peak RSS so far {rss:.2f} GB", flush=True)


def open_solves(sizes, accuracy=1e-7, rtol=1e-6, direct_max=20000):
    """Open solves (random 0.2 in a sphere, contrast 10) by the particle-mesh backend."""
    from collections import Counter

    from dipolearray.operators import MeshOperator

    warm = scene(2000)
    da.solve(warm, "cocg", rtol=rtol, operator=MeshOperator(warm, accuracy=accuracy))
    prev = None
    for n in sizes:
        t = time.perf_counter()
        sc = scene(n, seed=1)
        tg = time.perf_counter() - t
        t = time.perf_counter()
        op = MeshOperator(sc, accuracy=accuracy)
        tb = time.perf_counter() - t
        t = time.perf_counter()
        sol = da.solve(sc, "cocg", rtol=rtol, operator=op)
        ts = time.perf_counter() - t
        total = tb + ts
        levels = Counter(f"{a:.0e}" for a in sol.extra.get("apply_accuracy", []))
        line = (
            f"open N = {n}: scene {tg:.1f} s, build {tb:.1f} s, solve {ts:.1f} s, total {total:.1f} s, "
            f"{sol.iterations} iterations, converged {sol.converged}, final residual "
            f"{float(np.max(sol.residual_history[-1])):.1e}, relaxed applies {dict(levels)}; {op.describe()}"
        )
        if prev is not None:
            line += f"; exponent from N = {prev[0]}: {math.log(total / prev[1]) / math.log(n / prev[0]):.2f}"
        prev = (n, total)
        if n <= direct_max:
            t = time.perf_counter()
            ref = da.solve(sc, "cocg", rtol=rtol, backend="direct")
            td = time.perf_counter() - t
            d = np.abs(da.effective_permittivity(sol).tensor - da.effective_permittivity(ref).tensor).max()
            line += f"; direct {td:.1f} s ({td / total:.1f}x), tensors differ by {d:.1e}"
        rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1e6
        print(line + f"; peak RSS so far {rss:.2f} GB", flush=True)
        del sol, op, sc


def mesh_crossover(sizes=(2000, 4000, 8000, 16000, 32000, 64000), accuracies=(1e-3, 1e-6, 1e-9, 1e-12)):
    """One apply (three right-hand sides) of the direct kernel against the particle-mesh backend."""
    from dipolearray.operators import DirectOperator, MeshOperator

    first = {}
    print("N        direct_s   " + "   ".join(f"mesh@{a:g} (s, ratio, err)" for a in accuracies))
    for n in sizes:
        sc = scene(n)
        x = np.random.default_rng(0).standard_normal((n, 3, 3))
        d = DirectOperator(sc)
        d.apply(x)  # compile / warm
        t = time.perf_counter()
        ref = d.apply(x)
        td = time.perf_counter() - t
        cells = []
        for a in accuracies:
            t = time.perf_counter()
            op = MeshOperator(sc, accuracy=a)
            y = op.apply(x)
            tm = time.perf_counter() - t  # build included: auto pays it once per solve
            err = np.linalg.norm(y - ref) / np.linalg.norm(ref)
            cells.append(f"{tm:.3f} {td / tm:5.2f}x {err:.0e}")
            if tm < td and a not in first:
                first[a] = n
        print(f"{n:<8d} {td:9.3f}   " + "   ".join(cells), flush=True)
    for a in accuracies:
        print(f"mesh crossover at accuracy {a:g}: N = {first.get(a, '> ' + str(sizes[-1]))}")


def iteration_counts(sizes=(1000, 4000, 16000, 64000), states=((0.2, 10.0), (0.3, 100.0), (0.3, 1e4))):
    """COCG iterations against N at fixed volume fraction and contrast (tolerance 1e-6)."""
    import warnings

    from dipolearray.solvers import NearContactWarning

    print("phi   contrast   " + "  ".join(f"N={n}" for n in sizes))
    for phi, contrast in states:
        counts = []
        for n in sizes:
            sc = scene(n, phi=phi, contrast=contrast, seed=1)
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", NearContactWarning)
                sol = da.solve(sc, "cocg", rtol=1e-6)
            counts.append(f"{sol.iterations}{'' if sol.converged else '!'}")
        print(
            f"{phi:<5} {contrast:<10g} "
            + "  ".join(f"{c:>{len(str(n)) + 2}}" for c, n in zip(counts, sizes, strict=True))
        )


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small sizes only (smoke run)")
    ap.add_argument("--solve", type=int, nargs="*", default=None, help="solve these N (default 1e4 1e5)")
    ap.add_argument(
        "--periodic", type=int, nargs="*", default=None, help="only the periodic PME solves at these N"
    )
    ap.add_argument("--pme-crossover", action="store_true", help="only the Ewald / PME apply crossover")
    ap.add_argument("--open", type=int, nargs="*", default=None, help="only the open particle-mesh solves")
    ap.add_argument("--mesh-crossover", action="store_true", help="only the direct / mesh apply crossover")
    ap.add_argument("--iterations", action="store_true", help="only the iteration counts against N")
    args = ap.parse_args()
    if args.iterations:
        iteration_counts()
    elif args.open is not None:
        open_solves(args.open or [10000, 100000, 1000000])
    elif args.mesh_crossover:
        mesh_crossover()
    elif args.pme_crossover:
        pme_crossover()
    elif args.periodic is not None:
        periodic(args.periodic or [3000, 10000, 30000, 100000])
    elif args.quick:
        crossover([2000, 5000], [1e-3, 1e-6])
        solves([3000])
    else:
        crossover([5000, 10000, 20000, 40000, 80000], [1e-3, 1e-6, 1e-9])
        solves(args.solve if args.solve is not None else [10000, 100000])
