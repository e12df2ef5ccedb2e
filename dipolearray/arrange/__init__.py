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
"""

from ._generators import Arrangement, chain, cubic_lattice_sphere, random_sequential_addition

__all__ = ["Arrangement", "cubic_lattice_sphere", "chain", "random_sequential_addition"]
