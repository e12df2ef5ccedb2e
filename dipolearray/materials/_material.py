from __future__ import annotations

from dataclasses import dataclass

from .._validate import as_permittivity


@dataclass(frozen=True)
class Material:
    """A phase with a constant relative permittivity.

    Parameters
    ----------
    eps : float or complex
        Relative permittivity ``eps' - 1j*eps''`` (``eps'' >= 0``).
    name : str
        Label carried into results and reports.

    Examples
    --------
    >>> Material(3.0 - 0.03j, name="epoxy-like host").loss_tangent
    0.01
    """

    eps: complex | float
    name: str = "material"

    def __post_init__(self):
        object.__setattr__(self, "eps", as_permittivity(self.eps, "eps"))
        if not isinstance(self.name, str):
            raise TypeError(f"name: expected a string, got {self.name!r}")

    @property
    def is_lossy(self) -> bool:
        """True when the permittivity has a non-zero loss part ``eps''``."""
        return complex(self.eps).imag != 0

    @property
    def loss_tangent(self) -> float:
        """``eps''/eps'`` (zero for a lossless material)."""
        e = complex(self.eps)
        return round(-e.imag / e.real, 15)
