"""Operators: apply the mutual coupling of the bodies to a vector of their unknowns.

Every backend implements one contract (:class:`InteractionOperator`): ``apply``
maps per-body unknowns of shape ``(N, n_per_body, K)`` (or ``(N, n_per_body)``, or
flat ``(N*n_per_body,)`` / ``(N*n_per_body, K)``) to the field they produce at every
other body, for ``K`` right-hand sides at once. For point dipoles ``n_per_body = 3``
and ``apply(p)_i = sum_{j != i} T(r_i - r_j) p_j`` with ``T(r) = (3 r^ r^ - I)/r^3``
(reduced units). Real and complex unknowns are both accepted; since ``T`` is real, a
complex apply is two real ones sharing the geometry.

Backends are chosen by name from a registry; new ones (Ewald, fast multipole,
multipole orders above the dipole) subclass :class:`InteractionOperator`, implement
``_apply`` and register themselves with :func:`register_backend`.

Public names
------------
InteractionOperator
    The contract.
DirectOperator
    O(N^2) matrix-free numba kernel, parallel over targets; dense assembly for small N.
EwaldOperator, ewald_parameters
    Periodic orthorhombic box, Ewald summation with conducting (tin-foil) boundary;
    parameters chosen for a requested accuracy.
PMEOperator
    Periodic box by smooth particle-mesh Ewald (B-spline mesh, scipy.fft).
MultipoleOperator, BodyResponse, sphere_response, pair_model, pair_dipoles
    Spheres beyond the point dipole: induced multipoles to order L on near pairs
    (rotate-translate-rotate), point dipoles for the rest; the sphere response of each
    degree; the two-sphere model that picks orders and estimates the dipole error.
MeshOperator, mesh_parameters
    Open scenes by free-space particle-mesh summation (Gaussian split, zero-padded
    FFT convolution), O(N + n^3 log n) per apply on both cores.
FMMOperator, fmm_available
    Open scenes by the Laplace fast multipole method (fmm3dpy), O(N) per apply at a
    requested accuracy.
make_operator
    Build an operator for a scene by backend name (``"auto"`` records its choice).
register_backend, available_backends
    The registry.
set_num_threads, get_num_threads
    Thread control of the compiled kernels.
"""

from ._base import (
    InteractionOperator,
    available_backends,
    make_operator,
    register_backend,
)
from ._direct import DirectOperator
from ._ewald import EwaldOperator, ewald_parameters
from ._fmm import FMMOperator, fmm_available
from ._mesh import MeshOperator, mesh_parameters
from ._multipole import BodyResponse, MultipoleOperator, pair_dipoles, pair_model, sphere_response
from ._pme import PMEOperator
from ._threads import get_num_threads, set_num_threads

__all__ = [
    "InteractionOperator",
    "DirectOperator",
    "EwaldOperator",
    "ewald_parameters",
    "FMMOperator",
    "PMEOperator",
    "MeshOperator",
    "mesh_parameters",
    "MultipoleOperator",
    "BodyResponse",
    "sphere_response",
    "pair_model",
    "pair_dipoles",
    "fmm_available",
    "make_operator",
    "register_backend",
    "available_backends",
    "set_num_threads",
    "get_num_threads",
]
