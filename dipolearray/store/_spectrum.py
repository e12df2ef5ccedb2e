"""Spectrum files: the spectral representation of an arrangement and the response over frequency."""

from __future__ import annotations

import datetime as _dt
import math
import os
import tempfile
from pathlib import Path

import numpy as np

from .._version import __version__
from ..errors import InputError, SchemaError
from ._hdf5 import _h5py
from ._schema import CONVENTION, SPECTRUM_FORMAT_NAME, SPECTRUM_SCHEMA_VERSION

_EPS0 = 8.8541878128e-12


def save_spectrum(path, scene, spectrum, *, frequency_hz=None, eps_tensor=None, eps_host=None,
                  eps_inclusion=None, maxwell_garnett=None, config_text=None, overwrite=False):  # fmt: skip
    """Write a spectrum (and optionally its response over frequency) atomically.

    Parameters
    ----------
    path : str or Path
    scene : Scene
        The arrangement (its geometry is stored).
    spectrum : Spectrum or None
        ``None`` for a frequency-by-frequency sweep (several filler materials).
    frequency_hz : (F,) array_like, optional
    eps_tensor : (F, 3, 3) array_like of complex, optional
    eps_host, eps_inclusion, maxwell_garnett : (F,) array_like of complex, optional
    config_text : str, optional
    overwrite : bool

    Returns
    -------
    Path
    """
    path = Path(path)
    if path.exists() and not overwrite:
        raise InputError(f"output: {path} exists; pass --overwrite to replace it", "output")
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    h5py = _h5py()
    try:
        with h5py.File(tmp, "w") as f:
            f.attrs["format"] = SPECTRUM_FORMAT_NAME
            f.attrs["schema_version"] = SPECTRUM_SCHEMA_VERSION
            f.attrs["package_version"] = __version__
            f.attrs["created_utc"] = _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
            f.attrs["convention"] = CONVENTION
            g = f.create_group("scene")
            g.attrs["boundary"] = scene.boundary
            g.attrs["length_unit_m"] = math.nan if scene.length_unit_m is None else float(scene.length_unit_m)
            big = dict(compression="gzip", shuffle=True) if scene.n_bodies > 1000 else {}
            g.create_dataset("positions", data=np.asarray(scene.positions, dtype=float), **big)
            g.create_dataset("semi_axes", data=np.asarray(scene.semi_axes, dtype=float), **big)
            g.create_dataset("rotations", data=np.asarray(scene.rotations, dtype=float), **big)
            if spectrum is not None:
                _write_spectrum(f, spectrum)
            if frequency_hz is not None:
                fr = np.asarray(frequency_hz, dtype=float)
                eps = np.asarray(eps_tensor, dtype=complex)
                iso = np.trace(eps, axis1=1, axis2=2) / 3
                r = f.create_group("response")
                r.attrs["volume_fraction"] = float(_fraction(scene))
                r.create_dataset("frequency_Hz", data=fr)
                r.create_dataset("eps_tensor", data=eps)
                r.create_dataset("eps_real", data=iso.real)
                r.create_dataset("eps_loss", data=-iso.imag)
                r.create_dataset("loss_tangent", data=-iso.imag / iso.real)
                r.create_dataset("conductivity_S_per_m", data=2 * math.pi * fr * _EPS0 * (-iso.imag))
                r.create_dataset("eps_host", data=np.asarray(eps_host, dtype=complex))
                r.create_dataset("eps_inclusion", data=np.asarray(eps_inclusion, dtype=complex))
                if maxwell_garnett is not None:
                    r.create_dataset("maxwell_garnett", data=np.asarray(maxwell_garnett, dtype=complex))
            if config_text is not None:
                f.create_dataset("config", data=str(config_text), dtype=h5py.string_dtype())
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.remove(tmp)
        raise
    return path


def _fraction(scene):
    if scene.boundary == "periodic":
        return scene.volumes.sum() / np.prod(scene.box)
    if scene.sample_radius:
        return scene.volumes.sum() / (4 / 3 * math.pi * scene.sample_radius**3)
    return math.nan


def _write_spectrum(f, spectrum):
    s = f.create_group("spectrum")
    s.attrs["method"] = spectrum.method
    s.attrs["volume"] = float(spectrum.volume)
    s.attrs["sample_radius"] = math.nan if spectrum.sample_radius is None else float(spectrum.sample_radius)
    s.attrs["volume_fraction"] = float(spectrum.volume_fraction)
    s.attrs["n_applies"] = int(spectrum.n_applies)
    s.attrs["converged"] = bool(spectrum.converged)
    s.attrs["estimate"] = float(spectrum.estimate)
    s.create_dataset("poles", data=np.asarray(spectrum.poles, dtype=float))
    s.create_dataset("weights", data=np.asarray(spectrum.weights, dtype=float))
    s.create_dataset("residues", data=np.asarray(spectrum.residues, dtype=float))


def load_spectrum(path):
    """Read a spectrum file: ``(Spectrum or None, response dict or None, config text or None)``."""
    from ..spectra import Spectrum

    p = Path(path)
    if not p.exists():
        raise InputError(f"path: no such file {p}", "path")
    try:
        f = _h5py().File(p, "r")
    except OSError as exc:
        raise SchemaError(f"{p}: not an HDF5 file ({exc})") from None
    with f:
        if f.attrs.get("format") != SPECTRUM_FORMAT_NAME:
            raise SchemaError(f"{p}: not a dipolearray spectrum file")
        if int(f.attrs["schema_version"]) > SPECTRUM_SCHEMA_VERSION:
            raise SchemaError(
                f"{p}: spectrum schema {int(f.attrs['schema_version'])} is newer than this reader"
            )
        sp = None
        if "spectrum" in f:
            sp = _read_spectrum(f, Spectrum)
        response = None
        if "response" in f:
            response = {k: f["response"][k][...] for k in f["response"]}
            response["volume_fraction"] = float(f["response"].attrs["volume_fraction"])
        text = None
        if "config" in f:
            v = f["config"][()]
            text = v.decode() if isinstance(v, bytes) else str(v)
    return sp, response, text


def _read_spectrum(f, Spectrum):
    s = f["spectrum"]
    R = float(s.attrs["sample_radius"])
    return Spectrum(
        poles=s["poles"][...],
        weights=s["weights"][...],
        boundary=str(f["scene"].attrs["boundary"]),
        volume=float(s.attrs["volume"]),
        sample_radius=None if math.isnan(R) else R,
        volume_fraction=float(s.attrs["volume_fraction"]),
        method=str(s.attrs["method"]),
        n_applies=int(s.attrs["n_applies"]),
        converged=bool(s.attrs["converged"]),
        estimate=float(s.attrs["estimate"]),
    )
