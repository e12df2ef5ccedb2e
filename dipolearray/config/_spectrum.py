from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import ConfigError
from ._build import build_scene, output_path


def dispersion_of(phase):
    """The :class:`~dipolearray.materials.Dispersion` a ``[host]`` or ``[[population]]`` table describes."""
    from ..materials import cole_cole, constant, debye, drude, havriliak_negami

    m, sig = phase["model"], phase["conductivity"]
    if m == "constant":
        return constant(phase["eps"], phase["eps_loss"], sigma_dc=sig)
    if m == "debye":
        return debye(phase["eps"], phase["delta_eps"], phase["tau"], sigma_dc=sig)
    if m == "cole_cole":
        return cole_cole(phase["eps"], phase["delta_eps"], phase["tau"], phase["alpha"], sigma_dc=sig)
    if m == "havriliak_negami":
        return havriliak_negami(
            phase["eps"], phase["delta_eps"], phase["tau"], phase["alpha"], phase["beta"], sigma_dc=sig
        )
    return drude(phase["eps"], phase["plasma_frequency"], phase["damping"], sigma_dc=sig)


def frequency_grid(cfg):
    """The ``[frequency]`` grid, Hz."""
    fr = cfg.frequency
    if fr["spacing"] == "log":
        return np.logspace(np.log10(fr["min"]), np.log10(fr["max"]), fr["points"])
    return np.linspace(fr["min"], fr["max"], fr["points"])


def spectrum_output_path(cfg, override=None) -> Path:
    """Where a spectrum goes: the override, ``frequency.output``, or ``runs/<name>-spectrum.h5``."""
    if override:
        return Path(override)
    if cfg.frequency["output"]:
        return Path(cfg.frequency["output"])
    stem = output_path(cfg).with_suffix("")
    return stem.with_name(stem.name + "-spectrum.h5")


def run_config_spectrum(cfg, *, output=None, overwrite=False, save=True, progress=None):
    """Spectral representation of the config's arrangement and the composite over its frequency grid.

    With one filler model for every population the spectral representation is
    computed once and evaluated at every frequency; with several filler materials
    (the spectrum has one variable ``s``) every frequency is solved in turn, each
    warm-started from the previous one (:func:`~dipolearray.spectra.frequency_sweep`),
    and ``spectrum`` is ``None``.

    Returns
    -------
    dict
        ``spectrum`` (``None`` on the frequency-by-frequency path), ``scene``,
        ``frequency_hz``, ``eps_tensor`` (F, 3, 3),
        ``eps_host``, ``eps_inclusion``, ``maxwell_garnett`` (spheres, one population:
        the rule for the same phases; else ``None``), ``peak``
        (:func:`~dipolearray.spectra.loss_peak` of the isotropic part) and ``path``.
    """
    from ..mixing import maxwell_garnett
    from ..spectra import frequency_response, loss_peak, spectral_representation
    from ..store import save_spectrum

    keys = ("model", "eps", "eps_loss", "delta_eps", "tau", "alpha", "beta", "plasma_frequency", "damping",
            "conductivity")  # fmt: skip
    first = cfg.populations[0]
    single = all(all(p[k] == first[k] for k in keys) for p in cfg.populations[1:])
    path = spectrum_output_path(cfg, output)
    if save and path.exists() and not overwrite:
        raise ConfigError(f"output: {path} exists; pass --overwrite to replace it", "output")
    scene = build_scene(cfg, progress=progress)
    if progress is not None:
        progress("spectral decomposition", 0, 1)
    fr = cfg.frequency
    f = frequency_grid(cfg)
    host, fill = dispersion_of(cfg.host), dispersion_of(first)
    eh, ei = np.asarray(host(f), dtype=complex), np.asarray(fill(f), dtype=complex)
    if single:
        sp = spectral_representation(scene, method=fr["method"], tol=fr["tol"])
        if progress is not None:
            progress("spectral decomposition", 1, 1)
        eps = frequency_response(sp, host, fill, f)
    else:
        from ..spectra import frequency_sweep

        sp = None
        s = cfg.solver
        method = "cocg" if s["method"] in ("auto", "fixed_point") else s["method"]
        res = frequency_sweep(
            scene, host, [dispersion_of(p) for p in cfg.populations], f, method=method,
            rtol=s["rtol"], progress=progress,
        )  # fmt: skip
        eps = res["eps_tensor"]
    mg = None
    if len(cfg.populations) == 1 and first["shape"] == "sphere":
        mg = np.array(
            [complex(maxwell_garnett(h, i, sp.volume_fraction)) for h, i in zip(eh, ei, strict=True)]
        )
    iso = np.trace(eps, axis1=1, axis2=2) / 3
    peak = loss_peak(f, -iso.imag)
    written = None
    if save:
        written = save_spectrum(
            path, scene, sp, frequency_hz=f, eps_tensor=eps, eps_host=eh, eps_inclusion=ei,
            maxwell_garnett=mg, config_text=cfg.recorded_text, overwrite=overwrite,
        )  # fmt: skip
    return {
        "spectrum": sp,
        "scene": scene,
        "frequency_hz": f,
        "eps_tensor": eps,
        "eps_host": eh,
        "eps_inclusion": ei,
        "maxwell_garnett": mg,
        "peak": peak,
        "path": written,
    }
