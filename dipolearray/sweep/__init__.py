"""Sweep: ensembles of random realizations over state points, locally or on a Dask cluster, resumable.

Public names
------------
run_sweep
    Run (or resume) a sweep; every finished realization is stored at once.
load_sweep, SweepResult
    Read a sweep file: mean tensors, standard errors, confidence intervals.
RandomDispersion
    A picklable scene maker: equal spheres at random in a periodic box (any config
    parameter can be swept with :class:`dipolearray.config.ConfigScene`).
comparison_table
    Computed bulk permittivity against Maxwell Garnett, Bruggeman and the
    Hashin-Shtrikman bounds, with the finite-concentration correction and its
    significance.
"""

from ._run import RandomDispersion, SweepResult, comparison_table, load_sweep, run_sweep

__all__ = ["run_sweep", "load_sweep", "SweepResult", "RandomDispersion", "comparison_table"]
