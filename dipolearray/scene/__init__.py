"""Scene: the validated, immutable particle system every engine takes as input.

A :class:`Scene` holds positions, a population index per body, the populations
(shape and material), a per-body size scale and orientation, the host, the applied
field directions and the boundary. It is validated once when built: shapes of
arrays, NaN and infinities, sizes, rotation matrices and overlaps. Changing a scene
(:meth:`Scene.replace`) returns a new, re-validated one.

Public names
------------
Population
    A named kind of inclusion: shape plus material.
Scene
    The particle system (frozen; arrays read-only).
find_overlaps
    Index pairs of overlapping ellipsoids (exact: KD-tree for spheres, the
    Perram-Wertheim contact function for spheroids and ellipsoids).
"""

from ._overlap import find_overlaps
from ._scene import Population, Scene

__all__ = ["Population", "Scene", "find_overlaps"]
