"""Spectra: the spectral representation of an arrangement and dielectric spectra from it.

The poles and weights of an arrangement's dipole response depend on its geometry
alone (Bergman 1978; Milton 1981), so one decomposition gives the effective
permittivity for any host and filler permittivities, and for permittivity models over
any frequency grid, at negligible cost.

Public names
------------
spectral_representation, Spectrum
    Poles and weights by dense eigendecomposition or block Lanczos; evaluate, sum
    rules, pole density.
frequency_response
    Effective tensor over frequency for two permittivity models.
bergman_s
    ``s = eps_h / (eps_h - eps_i)``.
frequency_sweep
    The general path (several filler materials): one solve per frequency, each
    warm-started from the previous frequency's moments.
loss_peak
    Frequency, height and width (decades) of the loss peak of a sampled spectrum.
"""

from ._analysis import loss_peak
from ._spectral import Spectrum, bergman_s, frequency_response, spectral_representation
from ._sweep import frequency_sweep

__all__ = [
    "spectral_representation",
    "Spectrum",
    "frequency_response",
    "bergman_s",
    "loss_peak",
    "frequency_sweep",
]
