"""Materials: relative permittivities of the host and of the inclusions.

Convention: ``eps = eps' - 1j*eps''`` with ``eps'' >= 0`` for a lossy material
(the engineering ``exp(+j omega t)`` convention). A positive imaginary part is
rejected with an :class:`~dipolearray.errors.InputError`.

Public names
------------
Material
    A named phase with a constant relative permittivity.
Dispersion
    Permittivity against frequency: a constant, Debye, Cole-Cole or Havriliak-Negami
    relaxation, or a Drude metal, each with an optional DC-conductivity term; call it
    with frequencies in Hz.
constant, debye, cole_cole, havriliak_negami, drude
    Build a :class:`Dispersion` (each with its published source).
EPS0
    Vacuum permittivity, F/m.
"""

from ._dispersion import EPS0, Dispersion, cole_cole, constant, debye, drude, havriliak_negami
from ._material import Material

__all__ = ["Material", "Dispersion", "constant", "debye", "cole_cole", "havriliak_negami", "drude", "EPS0"]
