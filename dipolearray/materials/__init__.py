"""Materials: relative permittivities of the host and of the inclusions.

Convention: ``eps = eps' - 1j*eps''`` with ``eps'' >= 0`` for a lossy material
(the engineering ``exp(+j omega t)`` convention). A positive imaginary part is
rejected with an :class:`~dipolearray.errors.InputError`.

Public names
------------
Material
    A named phase with a constant relative permittivity.
"""

from ._material import Material

__all__ = ["Material"]
