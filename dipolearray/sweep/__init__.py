"""Sweep: ensembles of random realizations over state points, locally or on a Dask cluster, resumable.

Public names
------------
run_sweep
    Run (or resume) a sweep; every finished realization is stored at once.
load_sweep, SweepResult
    Read a sweep file: mean tensors, standard errors, confidence intervals.
RandomDispersion, ConfigScene
    Picklable scene makers: equal spheres at random in a periodic box; or any TOML
    config with dotted keys overridden per state point.
comparison_table
    Computed bulk permittivity against Maxwell Garnett, Bruggeman and the
    Hashin-Shtrikman bounds, with the finite-concentration correction and its
    significance.
"""

from ._run import ConfigScene, RandomDispersion, SweepResult, comparison_table, load_sweep, run_sweep

__all__ = ["run_sweep", "load_sweep", "SweepResult", "RandomDispersion", "ConfigScene", "comparison_table"]
