"""dipolearray: coupled-dipole engine for particle-filled dielectrics.

Place many spherical or spheroidal inclusions in a host, solve their mutual
polarization self-consistently and turn the moments into effective permittivity,
fields, forces and energies. The names below are the everyday API; each layer's
subpackage documents the rest. Heavy modules (numba kernels, h5py) load on first use.

Example
-------
>>> import numpy as np
>>> import dipolearray as da
>>> pop = da.Population(da.Sphere(1.0), da.Material(20.0), name="filler")
>>> scene = da.Scene([[0, 0, 0], [0, 0, 2.5]], pop, host=da.Material(2.5))
>>> sol = da.solve(scene)
>>> bool(sol.converged)
True
"""

from ._version import __version__

_EXPORTS = {
    "Material": "dipolearray.materials",
    "Sphere": "dipolearray.shapes",
    "Spheroid": "dipolearray.shapes",
    "Ellipsoid": "dipolearray.shapes",
    "Population": "dipolearray.scene",
    "Scene": "dipolearray.scene",
    "make_operator": "dipolearray.operators",
    "solve": "dipolearray.solvers",
    "Solution": "dipolearray.solvers",
    "local_field": "dipolearray.observables",
    "interior_field": "dipolearray.observables",
    "field_at": "dipolearray.observables",
    "total_moment": "dipolearray.observables",
    "effective_permittivity": "dipolearray.observables",
    "energy": "dipolearray.observables",
    "forces": "dipolearray.observables",
    "torques": "dipolearray.observables",
    "save_result": "dipolearray.store",
    "load_result": "dipolearray.store",
    "InputError": "dipolearray.errors",
    "SolveError": "dipolearray.errors",
    "ConvergenceError": "dipolearray.errors",
}

__all__ = ["__version__", *_EXPORTS]


#: Layers reachable as attributes (``da.observables``, ``da.report``), imported on first use.
_LAYERS = (
    "materials",
    "shapes",
    "arrange",
    "scene",
    "operators",
    "solvers",
    "observables",
    "mixing",
    "store",
    "sweep",
    "plots",
    "config",
    "report",
    "cli",
)


def __getattr__(name):
    import importlib

    if name in _EXPORTS:
        value = getattr(importlib.import_module(_EXPORTS[name]), name)
        globals()[name] = value
        return value
    if name in _LAYERS:
        return importlib.import_module(f"{__name__}.{name}")
    raise AttributeError(f"module 'dipolearray' has no attribute {name!r}")


def __dir__():
    return sorted(__all__)
