from __future__ import annotations

import numpy as np

from ..errors import InputError


def frequency_sweep(
    scene, host, fillers, frequency_hz, *, method="cocg", rtol=1e-10, warm=True, progress=None
):
    """Effective tensor over frequency by one solve per frequency, each warm-started from the last.

    The general path for arrangements whose populations are different materials (the
    spectral representation needs a single filler material): frequencies are solved
    in order and each solve starts from the previous frequency's moments, which the
    smooth dispersion of real materials keeps close.

    Parameters
    ----------
    scene : Scene
    host : Dispersion or callable or complex
    fillers : Dispersion (or callable) or sequence of them
        One model for every population, or one per population.
    frequency_hz : (F,) array_like
    method : str
        Solver (``"cocg"``, ``"gmres"``, ``"direct"``, ...).
    rtol : float
    warm : bool
        Start each solve from the previous moments (``False``: from the isolated response).
    progress : callable, optional
        ``progress(stage, done, total)``.

    Returns
    -------
    dict
        ``eps_tensor`` (F, 3, 3), ``eps_host`` (F,), ``eps_inclusion`` (F, P) per
        population, ``iterations`` (F,), ``converged`` (F,) bool.
    """
    from ..materials import Material
    from ..observables import effective_permittivity
    from ..scene import Population
    from ..solvers import solve

    f = np.asarray(frequency_hz, dtype=float)
    models = list(fillers) if isinstance(fillers, (list, tuple)) else [fillers] * len(scene.populations)
    if len(models) != len(scene.populations):
        raise InputError(
            f"fillers: expected one model or {len(scene.populations)} (one per population), "
            f"got {len(models)}",
            "fillers",
        )

    def value(model, fr):
        return complex(model(fr)) if callable(model) else complex(model)

    def tidy(z):
        return z.real if z.imag == 0 else z

    out = np.empty((len(f), 3, 3), dtype=complex)
    eh_all = np.empty(len(f), dtype=complex)
    ei_all = np.empty((len(f), len(models)), dtype=complex)
    its = np.zeros(len(f), dtype=int)
    ok = np.zeros(len(f), dtype=bool)
    x0 = None
    for i, fr in enumerate(f):
        eh = value(host, fr)
        eis = [value(m, fr) for m in models]
        pops = tuple(
            Population(p.shape, Material(tidy(e), name=p.material.name), name=p.name)
            for p, e in zip(scene.populations, eis, strict=True)
        )
        sc = scene.replace(host=Material(tidy(eh), name=scene.host.name), populations=pops)
        if x0 is not None and sc.is_complex and not np.iscomplexobj(x0):
            x0 = x0.astype(complex)
        # The near-contact estimate depends on the frequency only through eps: once is enough.
        sol = solve(sc, method, rtol=rtol, x0=x0 if warm else None, model_check=(i == 0))
        x0 = np.asarray(sol.moments)
        out[i] = effective_permittivity(sol).tensor
        eh_all[i], ei_all[i], its[i], ok[i] = eh, eis, sol.iterations, sol.converged
        if progress is not None:
            progress("frequencies", i + 1, len(f))
    return {
        "eps_tensor": out,
        "eps_host": eh_all,
        "eps_inclusion": ei_all,
        "iterations": its,
        "converged": ok,
    }
