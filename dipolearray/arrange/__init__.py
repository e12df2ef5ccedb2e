"""Arrange: pure geometry generators that feed a scene (no physics here).

Each generator returns an :class:`Arrangement` (positions, per-body radius or size
scale, and the radius of the spherical sample when there is one), seeded through a
``numpy.random.Generator`` or an integer seed so results are reproducible.

Public names
------------
Arrangement
    Positions plus per-body sizes and the sample radius.
cubic_lattice_sphere
    Simple cubic lattice points cut as a sphere.
chain
    Equally spaced bodies on a straight line.
random_sequential_addition
    Non-overlapping random spheres in a spherical or cubic region (cell list).
lattice, LATTICES, touching_fraction
    sc, bcc, fcc, hcp and bct lattices by lattice constant or volume fraction, cut as a
    sphere, cube or slab, or as a periodic box.
chain_array
    A square array of straight chains along an axis.
"""

from ._generators import Arrangement, chain, cubic_lattice_sphere, random_sequential_addition
from ._lattices import LATTICES, chain_array, lattice, touching_fraction

__all__ = [
    "Arrangement",
    "cubic_lattice_sphere",
    "chain",
    "random_sequential_addition",
    "lattice",
    "LATTICES",
    "touching_fraction",
    "chain_array",
]
