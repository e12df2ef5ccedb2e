from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._fields import interior_field, local_field

#: Percentiles reported by :meth:`FieldEnhancement.statistics`.
PERCENTILES = (50.0, 95.0, 99.0)


def _magnitude(field):
    # Norm of the complex phasor vector: the peak instantaneous amplitude never exceeds it.
    return np.sqrt(np.sum(np.abs(field) ** 2, axis=1))


@dataclass(frozen=True)
class FieldEnhancement:
    """Field magnitudes relative to the applied field, per body and field direction.

    Attributes
    ----------
    local : (N, K) ndarray
        ``|E_loc| / |E0|``, the exciting field at each body centre.
    interior : (N, K) ndarray
        ``|E_in| / |E0|``, the uniform field inside each body (in the filler).
    surface : (N, K) ndarray
        ``max(|eps_i / eps_h|, 1) |E_in| / |E0|``: the largest host field on the body's
        surface (the hot spot in the host, where breakdown starts).

    Notes
    -----
    Just outside an ellipsoid with a uniform interior field ``E_in`` the tangential
    field is continuous and the normal displacement is, so the host field at a surface
    point of normal ``n`` is ``E_in + (eps_i/eps_h - 1)(n . E_in) n``; its largest
    magnitude over the surface is ``|eps_i/eps_h| |E_in|`` (at ``n`` parallel to
    ``E_in``) when the filler is the denser phase, ``|E_in|`` otherwise. For an
    isolated sphere this is the pole field ``(1 + 2 beta) E0`` (Jackson 1999,
    Classical Electrodynamics, 3rd ed., sec. 4.4). The point-dipole model takes each
    body's interior field as uniform, so in narrow gaps between bodies it
    underestimates the true peak. For a multipole solution ``surface`` is instead the
    largest host field sampled on each sphere's surface from its incident and induced
    expansions (:meth:`MultipoleOperator.surface_host_field`), and ``interior`` is the
    uniform (degree-1) part of the interior field.
    """

    local: np.ndarray
    interior: np.ndarray
    surface: np.ndarray

    def statistics(self) -> dict:
        """Mean, median, 95th and 99th percentiles and maximum of each kind, over bodies and directions.

        Returns
        -------
        dict
            ``{"local": {"mean": ..., "p50": ..., "p95": ..., "p99": ..., "max": ...,
            "argmax_body": ...}, "interior": {...}, "surface": {...}}``.
        """
        out = {}
        for name in ("local", "interior", "surface"):
            v = getattr(self, name)
            flat = v.ravel()
            row = {"mean": float(flat.mean())}
            for q, val in zip(PERCENTILES, np.percentile(flat, PERCENTILES), strict=True):
                row[f"p{q:g}"] = float(val)
            row["max"] = float(flat.max())
            row["argmax_body"] = int(np.unravel_index(int(np.argmax(v)), v.shape)[0])
            out[name] = row
        return out


def field_enhancement(sol, operator=None) -> FieldEnhancement:
    """Local, interior and host-surface field enhancement of every body.

    Parameters
    ----------
    sol : Solution
    operator : InteractionOperator, optional

    Returns
    -------
    FieldEnhancement
        Magnitudes relative to ``|E0|`` of each applied field.
    """
    from ._fields import solution_operator

    op = solution_operator(sol, operator)
    scene = sol.scene
    e0 = np.linalg.norm(np.asarray(scene.field, dtype=float), axis=1)[None, :]
    loc = local_field(sol, op)
    inner = interior_field(sol, op)
    ratio = np.abs(np.asarray(scene.eps_inclusion) / scene.eps_host)
    jump = np.maximum(ratio, 1.0)[:, None]
    m_in = _magnitude(inner) / e0
    surface = jump * m_in
    if sol.multipoles is not None and hasattr(op, "surface_host_field"):
        # Multipole level: the host field sampled on each sphere's surface (gap hot spots).
        sampled = op.surface_host_field(np.asarray(sol.multipoles)) / e0
        surface = np.where(np.isnan(sampled), surface, sampled)
    return FieldEnhancement(local=_magnitude(loc) / e0, interior=m_in, surface=surface)
