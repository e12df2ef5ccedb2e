from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from ._effective import effective_permittivity
from ._enhancement import field_enhancement
from ._fields import interior_field, local_field, total_moment
from ._mechanics import energy, forces, torques


@dataclass(frozen=True)
class Observable:
    """A registry entry: how to compute, store and describe one observable."""

    name: str
    compute: Callable
    shape: str
    unit: str
    description: str


def _eps_tensor(sol):
    eff = effective_permittivity(sol)
    return eff.tensor if eff.tensor is not None else eff.along_field


_ENTRIES = [
    Observable("local_field", local_field, "(N, 3, K)", "field", "exciting field at each body centre"),
    Observable("interior_field", interior_field, "(N, 3, K)", "field", "uniform field inside each body"),
    Observable(
        "surface_field",
        lambda sol: field_enhancement(sol).surface,
        "(N, K)",
        "field",
        "largest host field on each body's surface, |E| (the hot spot outside the body)",
    ),
    Observable("total_moment", total_moment, "(3, K)", "moment", "sum of all dipole moments"),
    Observable("energy", energy, "(K,)", "energy", "electrostatic energy at fixed applied field"),
    Observable("forces", forces, "(N, 3, K)", "force", "force on every body"),
    Observable("torques", torques, "(N, 3, K)", "torque", "torque on every body"),
    Observable(
        "effective_permittivity",
        _eps_tensor,
        "(3, 3) or (K,)",
        "dimensionless",
        "effective permittivity of the spherical sample, or of the bulk for a periodic box "
        "(tensor when three fields are solved)",
    ),
]

#: name -> :class:`Observable`; adding an observable is adding one entry here.
OBSERVABLES = {o.name: o for o in _ENTRIES}
