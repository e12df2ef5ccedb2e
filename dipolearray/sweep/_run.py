from __future__ import annotations

import math
import os
from dataclasses import dataclass

import numpy as np

from .._validate import as_int, as_positive
from ..errors import InputError


@dataclass(frozen=True)
class RandomDispersion:
    """Scene maker for sweeps: equal spheres by random addition (or dense packing) in a periodic box.

    Called as ``maker(point, seed)``; the state point supplies ``volume_fraction``,
    ``eps_inclusion`` (and optionally ``eps_inclusion_loss``), ``eps_host`` (and
    ``eps_host_loss``). A plain frozen dataclass, so it travels to worker processes.

    Attributes
    ----------
    n_bodies : int
        Spheres per realization.
    """

    n_bodies: int = 200

    def __call__(self, point, seed):
        """The scene of one realization."""
        from ..arrange import dense_packing, random_sequential_addition
        from ..materials import Material
        from ..scene import Population, Scene
        from ..shapes import Sphere

        phi = float(point["volume_fraction"])
        gen = random_sequential_addition if phi < 0.3 else dense_packing
        arr = gen(self.n_bodies, phi, region="periodic", rng=seed)
        eps_i = complex(point["eps_inclusion"], -float(point.get("eps_inclusion_loss", 0.0)))
        eps_h = complex(point.get("eps_host", 1.0), -float(point.get("eps_host_loss", 0.0)))
        fix = lambda z: z.real if z.imag == 0 else z  # noqa: E731
        return Scene.from_arrangement(
            arr, Population(Sphere(1.0), Material(fix(eps_i))), host=Material(fix(eps_h))
        )


def _seed(seed, i, r):
    return int(np.random.SeedSequence([int(seed), int(i), int(r)]).generate_state(1)[0])


def _task(maker, point, seed, solve_options, threads=None):
    """Build, solve, reduce one realization to its effective tensor and solve record (runs on a worker).

    ``threads`` caps the compiled kernels' threads in this process: Dask workers run one
    task each per core, so their kernels run single-threaded instead of oversubscribing.
    """
    import time

    if threads is not None:
        from ..operators import set_num_threads

        set_num_threads(threads)

    from ..observables import effective_permittivity, field_enhancement
    from ..solvers import solve

    t = time.perf_counter()
    scene = maker(point, seed)
    sol = solve(scene, **(solve_options or {}))
    eff = effective_permittivity(sol)
    if eff.tensor is None:
        raise InputError("field: sweeps need the three field directions (the full tensor)", "field")
    volume = float(np.prod(scene.box)) if scene.box is not None else 4 / 3 * math.pi * scene.sample_radius**3
    stats = field_enhancement(sol).statistics()
    return {
        "enhancement_surface_p99": stats["surface"]["p99"],
        "enhancement_surface_max": stats["surface"]["max"],
        "enhancement_local_max": stats["local"]["max"],
        "eps_tensor": np.asarray(eff.tensor, dtype=complex),
        "seed": seed,
        "n_bodies": scene.n_bodies,
        "iterations": sol.iterations,
        "converged": bool(sol.converged),
        "wall_s": time.perf_counter() - t,
        "method": sol.method,
        "volume_fraction": float(scene.volumes.sum() / volume),
    }


def run_sweep(
    path,
    maker,
    points,
    n_realizations,
    *,
    seed=0,
    solve_options=None,
    workers=None,
    scheduler=None,
    progress=True,
    config_text=None,
    description="",
):
    """Ensembles of random realizations at each state point, stored as they finish; resumable.

    Every ``(point, realization)`` pair is one task: ``maker(point, seed)`` builds the
    scene (seeds derived from ``seed``, the point index and the realization index, so a
    rerun reproduces them), the solve runs, and the effective tensor with the solve
    record is written to ``path`` the moment the task finishes. Rerunning with the same
    points skips what the file already holds, so an interrupted sweep resumes without
    redoing or losing work; more realizations can be added later.

    Parameters
    ----------
    path : str or Path
        Sweep HDF5 file (created, or reopened to resume).
    maker : callable
        ``maker(point, seed) -> Scene``; must be picklable for worker processes (a
        module-level function or a dataclass such as :class:`RandomDispersion`).
    points : list of dict
        State points (JSON-serialisable), e.g. ``{"volume_fraction": 0.2, "eps_inclusion": 30}``.
    n_realizations : int
        Realizations per point.
    seed : int
    solve_options : dict, optional
        Keywords for :func:`~dipolearray.solve` (``rtol``, ``method``, ...).
    workers : int, optional
        ``0`` runs in this process. Otherwise tasks go to a Dask cluster: the one at
        ``scheduler`` if given, else a ``LocalCluster`` with ``workers`` processes
        (default: the CPU count).
    scheduler : str, optional
        Address of a running Dask scheduler (``"tcp://host:8786"``).
    progress : bool
        Show a progress bar.
    config_text : str, optional
        Config the maker was built from, stored in the file (``/config``).
    description : str
        Free text stored as the file's ``description`` attribute.

    Returns
    -------
    SweepResult
    """
    from ..store import open_sweep

    n_r = as_int(n_realizations, "n_realizations", minimum=1)
    pts = list(points)
    if not pts or not all(isinstance(p, dict) for p in pts):
        raise InputError("points: expected a non-empty list of dicts", "points")
    store = open_sweep(path, pts, n_r, description=description, config_text=config_text)
    done = store.done()
    todo = [(i, r) for i in range(len(pts)) for r in range(n_r) if (i, r) not in done]
    bar = None
    if progress and todo:
        from tqdm import tqdm

        bar = tqdm(total=len(todo), desc="realizations", unit="solve", leave=False)
    try:
        if workers == 0:
            for i, r in todo:
                store.write(i, r, _task(maker, pts[i], _seed(seed, i, r), solve_options))
                if bar is not None:
                    bar.update(1)
        elif todo:
            _run_dask(store, maker, pts, todo, seed, solve_options, workers, scheduler, bar)
    finally:
        if bar is not None:
            bar.close()
    return load_sweep(path)


def _run_dask(store, maker, pts, todo, seed, solve_options, workers, scheduler, bar):
    from dask.distributed import Client, LocalCluster, as_completed

    cluster = None
    if scheduler:
        client = Client(scheduler)
    else:
        n = as_int(workers if workers is not None else (os.cpu_count() or 1), "workers", minimum=1)
        cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, dashboard_address=None)
        client = Client(cluster)
    try:
        futures = {}
        for i, r in todo:
            fut = client.submit(
                _task, maker, pts[i], _seed(seed, i, r), solve_options, 1, pure=False, retries=2
            )
            futures[fut] = (i, r)
        for fut in as_completed(futures):
            i, r = futures[fut]
            store.write(i, r, fut.result())
            if bar is not None:
                bar.update(1)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


@dataclass(frozen=True)
class SweepResult:
    """Ensemble statistics of a sweep, per state point.

    Attributes
    ----------
    points : list of dict
    tensors : list of (n_i, 3, 3) ndarray
        Effective tensor of every finished realization.
    records : list of list of dict
        Solve record of every realization (seed, n_bodies, iterations, converged, ...).
    config_text : str or None
        The config a config sweep was made from.
    description : str
        The file's free-text description.
    """

    points: list
    tensors: list
    records: list
    config_text: str | None = None
    description: str = ""

    @property
    def n(self) -> np.ndarray:
        """Finished realizations per point."""
        return np.array([len(t) for t in self.tensors])

    @property
    def mean(self) -> np.ndarray:
        """(P, 3, 3) mean tensor per point (NaN where nothing finished)."""
        return np.array([t.mean(axis=0) if len(t) else np.full((3, 3), np.nan) for t in self.tensors])

    @property
    def isotropic(self) -> list:
        """Per point, the isotropic value (trace / 3) of every realization."""
        return [np.trace(t, axis1=1, axis2=2) / 3 for t in self.tensors]

    @property
    def isotropic_mean(self) -> np.ndarray:
        """(P,) mean isotropic permittivity."""
        return np.array([v.mean() if len(v) else np.nan for v in self.isotropic])

    @property
    def standard_error(self) -> np.ndarray:
        """(P,) standard error of the isotropic mean (real and loss parts separately as complex)."""
        out = []
        for v in self.isotropic:
            if len(v) < 2:
                out.append(np.nan)
                continue
            out.append(
                np.std(v.real, ddof=1) / math.sqrt(len(v)) + 1j * np.std(v.imag, ddof=1) / math.sqrt(len(v))
            )
        return np.array(out)

    def confidence_interval(self, level=0.95):
        """(P, 2) interval of the real part of the isotropic mean (Student t)."""
        from scipy.stats import t as student

        lv = as_positive(level, "level")
        out = []
        for v, se in zip(self.isotropic, self.standard_error, strict=True):
            if len(v) < 2:
                out.append((np.nan, np.nan))
                continue
            q = student.ppf(0.5 + lv / 2, len(v) - 1)
            m = v.real.mean()
            out.append((m - q * se.real, m + q * se.real))
        return np.array(out)


def load_sweep(path) -> SweepResult:
    """Read a sweep file into a :class:`SweepResult`."""
    from ..store import read_sweep

    store = read_sweep(path)
    points, tensors, records = store.read()
    return SweepResult(points, tensors, records, store.config_text(), store.description())


def comparison_table(
    result,
    *,
    fraction_key="volume_fraction",
    eps_inclusion_key="eps_inclusion",
    eps_host_key="eps_host",
    reference=None,
):
    """Computed bulk permittivity against the mixing rules and bounds, point by point.

    Each row: the state point, computed isotropic eps' with its standard error, Maxwell
    Garnett, Bruggeman, Hashin-Shtrikman bounds, the finite-concentration correction
    ``computed - MG`` and its significance ``(computed - MG) / SE``. With ``reference``
    (a :class:`SweepResult` over the same points, e.g. the dispersed arrangement at
    equal volume fraction for a clustered or chained one) also ``excess_over_reference``
    and its significance over the combined standard error.
    """
    from ..mixing import bruggeman, hashin_shtrikman_bounds, maxwell_garnett

    rows = []
    means, ses = result.isotropic_mean, result.standard_error
    if reference is not None and len(reference.points) != len(result.points):
        raise InputError("reference: needs one state point per point of the result", "reference")
    for p, m, se in zip(result.points, means, ses, strict=True):
        phi = float(p[fraction_key])
        ei = float(p[eps_inclusion_key])
        eh = float(p.get(eps_host_key, 1.0))
        mg = float(maxwell_garnett(eh, ei, phi))
        lo, hi = hashin_shtrikman_bounds(eh, ei, phi)
        excess = float(np.real(m)) - mg
        rows.append(
            {
                **p,
                "computed": float(np.real(m)),
                "standard_error": float(np.real(se)),
                "maxwell_garnett": mg,
                "bruggeman": float(bruggeman(eh, ei, phi)),
                "hashin_shtrikman_lower": float(lo),
                "hashin_shtrikman_upper": float(hi),
                "excess_over_mg": excess,
                "significance": excess / float(np.real(se)) if np.real(se) > 0 else float("nan"),
            }
        )
    if reference is not None:
        for row, m_ref, se_ref in zip(rows, reference.isotropic_mean, reference.standard_error, strict=True):
            diff = row["computed"] - float(np.real(m_ref))
            comb = math.hypot(row["standard_error"], float(np.real(se_ref)))
            row["reference"] = float(np.real(m_ref))
            row["excess_over_reference"] = diff
            row["significance_over_reference"] = diff / comb if comb > 0 else float("nan")
    return rows
