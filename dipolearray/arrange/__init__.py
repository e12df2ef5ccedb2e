"""Arrange: pure geometry generators that feed a scene (no physics here).

Each generator returns an :class:`Arrangement` (positions, per-body sizes, optional
semi-axes, orientations and population labels, and the sample region), seeded
through a ``numpy.random.Generator`` or an integer seed so results are reproducible.
Every generator's output is free of overlaps by the same exact test the scene uses.

Public names
------------
Arrangement
    Positions, sizes, orientations and the sample region.
cubic_lattice_sphere, chain
    A simple cubic lattice cut as a sphere; bodies on a straight line.
lattice, LATTICES, touching_fraction, chain_array
    sc, bcc, fcc, hcp and bct lattices by lattice constant or volume fraction, cut as a
    sphere, cube or slab, or as a periodic box; square arrays of straight chains.
random_sequential_addition, addition_kinetics
    Random sequential addition of spheres, spheroids or ellipsoids (exact overlap test,
    cell list) in a sphere, cube or periodic box; coverage against time.
dense_packing, equilibrate
    Dense random packings by overlap relaxation (to about 0.62 for equal spheres) and
    hard-body Monte Carlo equilibration.
lognormal_radii
    Polydisperse radii.
orientations, order_parameter, ORIENTATIONS
    Aligned, isotropic or nematic orientation distributions for spheroids.
cluster_aggregation, fractal_dimension, clustered, place_groups, CLUSTER_KINDS
    Diffusion-limited cluster-cluster aggregation; fillers partly in fractal or compact
    clusters at a fixed overall fraction; random placement of rigid groups.
field_chains, chain_lengths, LENGTH_DISTRIBUTIONS, CHAIN_LAYOUTS
    Chains along the field with a length distribution and misalignment, as single
    chains, sheets or body-centred tetragonal columns.
read_arrangement, write_arrangement, LENGTH_UNITS
    CSV and extended XYZ import/export with the column convention documented in
    ``docs/microstructure_files.md``; exact round trip.
overlapping_pairs
    The first overlapping pairs (exact test), as the scene would find them.
radial_distribution, contact_value, nearest_gaps, coordination
    Descriptors: g(r) (periodic or with a guard zone), contact value, nearest-neighbour
    surface gaps, coordination numbers.
clusters, ClusterReport, chains, ChainReport
    Connected groups within a gap: sizes, largest, percolation across the sample; chain
    lengths and alignment with an axis.
"""

from ._chains import CHAIN_LAYOUTS, LENGTH_DISTRIBUTIONS, chain_lengths, field_chains
from ._clusters import CLUSTER_KINDS, cluster_aggregation, clustered, fractal_dimension, place_groups
from ._describe import (
    ChainReport,
    ClusterReport,
    chains,
    clusters,
    contact_value,
    coordination,
    nearest_gaps,
    overlapping_pairs,
    radial_distribution,
)
from ._generators import REGIONS, Arrangement, chain, cubic_lattice_sphere
from ._io import LENGTH_UNITS, microstructure_format_markdown, read_arrangement, write_arrangement
from ._lattices import LATTICES, chain_array, lattice, touching_fraction
from ._orient import ORIENTATIONS, order_parameter, orientations
from ._packing import (
    addition_kinetics,
    dense_packing,
    equilibrate,
    lognormal_radii,
    random_sequential_addition,
)

__all__ = [
    "Arrangement",
    "REGIONS",
    "cubic_lattice_sphere",
    "chain",
    "lattice",
    "LATTICES",
    "touching_fraction",
    "chain_array",
    "random_sequential_addition",
    "addition_kinetics",
    "dense_packing",
    "equilibrate",
    "lognormal_radii",
    "orientations",
    "order_parameter",
    "ORIENTATIONS",
    "radial_distribution",
    "contact_value",
    "nearest_gaps",
    "coordination",
    "clusters",
    "ClusterReport",
    "chains",
    "ChainReport",
    "cluster_aggregation",
    "fractal_dimension",
    "clustered",
    "place_groups",
    "CLUSTER_KINDS",
    "field_chains",
    "chain_lengths",
    "LENGTH_DISTRIBUTIONS",
    "CHAIN_LAYOUTS",
    "read_arrangement",
    "write_arrangement",
    "LENGTH_UNITS",
    "microstructure_format_markdown",
    "overlapping_pairs",
]
