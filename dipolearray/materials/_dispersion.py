from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._validate import as_positive
from ..errors import InputError

#: Vacuum permittivity, F/m (CODATA 2018).
EPS0 = 8.8541878128e-12


def _omega(frequency_hz):
    f = np.asarray(frequency_hz, dtype=float)
    if np.any(~np.isfinite(f)) or np.any(f <= 0):
        raise InputError("frequency: expected positive finite frequencies in Hz", "frequency")
    return 2.0 * math.pi * f


def _nonneg(value, key):
    v = float(value)
    if not math.isfinite(v) or v < 0:
        raise InputError(f"{key}: expected a finite value >= 0, got {value!r}", key)
    return v


def _unit_interval(value, key, low_open=True):
    v = float(value)
    ok = (0 < v <= 1) if low_open else (0 <= v < 1)
    if not ok:
        rng = "(0, 1]" if low_open else "[0, 1)"
        raise InputError(f"{key}: expected a value in {rng}, got {value!r}", key)
    return v


@dataclass(frozen=True)
class Dispersion:
    """Relative permittivity against frequency, ``eps(f) = eps' - j eps''`` (``exp(+j omega t)``).

    The sum of a high-frequency constant ``eps_inf``, an optional relaxation
    (``kind``: ``"debye"``, ``"cole_cole"``, ``"havriliak_negami"``), an optional
    Drude term and a DC conductivity term ``-j sigma_dc / (eps0 omega)``. Build one with
    :func:`constant`, :func:`debye`, :func:`cole_cole`, :func:`havriliak_negami` or
    :func:`drude`; add conductivity with ``sigma_dc``.

    Attributes
    ----------
    eps_inf : float
    kind : str
        ``"constant"``, ``"debye"``, ``"cole_cole"``, ``"havriliak_negami"`` or ``"drude"``.
    delta_eps : float
        Relaxation strength (static minus high-frequency permittivity).
    tau_s : float
        Relaxation time, s.
    alpha, beta : float
        Shape parameters (Cole-Cole ``alpha`` in [0, 1); Havriliak-Negami ``alpha``,
        ``beta`` in (0, 1]).
    plasma_hz, damping_hz : float
        Drude plasma and collision frequencies ``omega_p / 2 pi``, ``gamma / 2 pi``, Hz.
    sigma_dc : float
        DC conductivity, S/m.
    eps_loss : float
        Frequency-independent loss part added to a constant.
    """

    eps_inf: float
    kind: str = "constant"
    delta_eps: float = 0.0
    tau_s: float = 0.0
    alpha: float = 1.0
    beta: float = 1.0
    plasma_hz: float = 0.0
    damping_hz: float = 0.0
    sigma_dc: float = 0.0
    eps_loss: float = 0.0

    def __call__(self, frequency_hz):
        """Complex relative permittivity at ``frequency_hz`` (scalar or array, Hz)."""
        w = _omega(frequency_hz)
        eps = np.full(w.shape, complex(self.eps_inf, -self.eps_loss))
        if self.kind in ("debye", "cole_cole", "havriliak_negami"):
            x = 1j * w * self.tau_s
            if self.kind == "debye":
                eps = eps + self.delta_eps / (1.0 + x)
            elif self.kind == "cole_cole":
                eps = eps + self.delta_eps / (1.0 + x ** (1.0 - self.alpha))
            else:
                eps = eps + self.delta_eps / (1.0 + x**self.alpha) ** self.beta
        elif self.kind == "drude":
            wp, g = 2 * math.pi * self.plasma_hz, 2 * math.pi * self.damping_hz
            eps = eps - wp**2 / (w**2 - 1j * g * w)
        if self.sigma_dc:
            eps = eps - 1j * self.sigma_dc / (EPS0 * w)
        return eps if eps.ndim else complex(eps)

    @property
    def eps_static(self):
        """Permittivity as ``f -> 0`` without the conductivity term (``inf`` for Drude)."""
        if self.kind == "drude":
            return -math.inf
        return self.eps_inf + self.delta_eps


def constant(eps, eps_loss=0.0, *, sigma_dc=0.0):
    """A frequency-independent permittivity ``eps - j eps_loss`` (plus a conductivity term)."""
    return Dispersion(
        float(eps), "constant", sigma_dc=_nonneg(sigma_dc, "sigma_dc"), eps_loss=_nonneg(eps_loss, "eps_loss")
    )


def debye(eps_inf, delta_eps, tau_s, *, sigma_dc=0.0):
    """Debye relaxation ``eps_inf + delta / (1 + j omega tau)``.

    References
    ----------
    Debye, P. (1929). Polar Molecules. Chemical Catalog Co., New York.
    """
    return Dispersion(
        float(eps_inf), "debye", _nonneg(delta_eps, "delta_eps"), as_positive(tau_s, "tau_s"),
        sigma_dc=_nonneg(sigma_dc, "sigma_dc"),
    )  # fmt: skip


def cole_cole(eps_inf, delta_eps, tau_s, alpha, *, sigma_dc=0.0):
    """Cole-Cole relaxation ``eps_inf + delta / (1 + (j omega tau)^(1 - alpha))``, ``0 <= alpha < 1``.

    References
    ----------
    Cole, K. S. and Cole, R. H. (1941). Dispersion and absorption in dielectrics.
    J. Chem. Phys. 9, 341.
    """
    return Dispersion(
        float(eps_inf), "cole_cole", _nonneg(delta_eps, "delta_eps"), as_positive(tau_s, "tau_s"),
        alpha=_unit_interval(alpha, "alpha", low_open=False), sigma_dc=_nonneg(sigma_dc, "sigma_dc"),
    )  # fmt: skip


def havriliak_negami(eps_inf, delta_eps, tau_s, alpha, beta, *, sigma_dc=0.0):
    """Havriliak-Negami ``eps_inf + delta / (1 + (j omega tau)^alpha)^beta``, ``alpha, beta`` in (0, 1].

    References
    ----------
    Havriliak, S. and Negami, S. (1967). A complex plane representation of dielectric
    and mechanical relaxation processes in some polymers. Polymer 8, 161.
    """
    return Dispersion(
        float(eps_inf), "havriliak_negami", _nonneg(delta_eps, "delta_eps"), as_positive(tau_s, "tau_s"),
        alpha=_unit_interval(alpha, "alpha"), beta=_unit_interval(beta, "beta"),
        sigma_dc=_nonneg(sigma_dc, "sigma_dc"),
    )  # fmt: skip


def drude(eps_inf, plasma_hz, damping_hz, *, sigma_dc=0.0):
    """Drude metal ``eps_inf - omega_p^2 / (omega^2 - j gamma omega)`` (frequencies in Hz).

    References
    ----------
    Drude, P. (1900). Zur Elektronentheorie der Metalle. Ann. Phys. 306, 566;
    Ashcroft, N. W. and Mermin, N. D. (1976). Solid State Physics, ch. 1.
    """
    return Dispersion(
        float(eps_inf), "drude", plasma_hz=as_positive(plasma_hz, "plasma_hz"),
        damping_hz=_nonneg(damping_hz, "damping_hz"), sigma_dc=_nonneg(sigma_dc, "sigma_dc"),
    )  # fmt: skip
