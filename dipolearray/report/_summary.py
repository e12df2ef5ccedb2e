from __future__ import annotations

import numpy as np

from ._safety import breakdown_notes


def _c(z):
    """A complex number as ``[eps', eps'']`` (``eps = eps' - j eps''``)."""
    z = complex(z)
    return [z.real, -z.imag]


def volume_fraction(scene):
    """Filler fraction of the sample sphere or periodic box, or ``None`` when neither is known."""
    if scene.boundary == "periodic":
        return float(scene.volumes.sum() / np.prod(scene.box))
    if scene.sample_radius:
        return float(scene.volumes.sum() / (4 / 3 * np.pi * scene.sample_radius**3))
    return None


def mixing_comparison(scene, phi):
    """Mixing-rule values for the scene's phases at fraction ``phi`` (one population only).

    Returns
    -------
    dict or None
        ``{"rules": {name: [eps', eps'']}, "bounds": {name: [lower, upper]}, "note": str}``;
        ``None`` with several populations (the rules here are two-phase).
    """
    from ..mixing import (
        bruggeman,
        hashin_shtrikman_bounds,
        lichtenecker,
        looyenga,
        maxwell_garnett,
        maxwell_garnett_ellipsoids,
        wiener_bounds,
    )

    if len(scene.populations) != 1 or phi is None:
        return None
    pop = scene.populations[0]
    eh, ei = scene.eps_host, pop.material.eps
    rules = {}
    note = "two-phase rules for the host and the filler at the realized volume fraction"
    if pop.shape.kind == "sphere":
        rules["Maxwell Garnett"] = _c(maxwell_garnett(eh, ei, phi))
        rules["Bruggeman"] = _c(bruggeman(eh, ei, phi))
    else:
        L = pop.shape.depolarization
        rot = scene.rotations
        aligned = np.allclose(rot, rot[0], atol=1e-9)
        orient = "aligned" if aligned else "random"
        mg = np.atleast_1d(maxwell_garnett_ellipsoids(eh, ei, phi, L, orientation=orient))
        if aligned:
            # Principal values in the body frame; the lab tensor is R diag R^T.
            lab = rot[0] @ np.diag(mg) @ rot[0].T
            rules["Maxwell Garnett (aligned ellipsoids), isotropic part"] = _c(np.trace(lab) / 3)
            note += "; aligned ellipsoids: compare the tensor, the isotropic part is shown"
        else:
            rules["Maxwell Garnett (randomly oriented ellipsoids)"] = _c(mg.mean())
            note += "; orientations taken as isotropic"
        rules["Bruggeman (spheres, for scale)"] = _c(bruggeman(eh, ei, phi))
    rules["Looyenga"] = _c(looyenga(eh, ei, phi))
    rules["Lichtenecker"] = _c(lichtenecker(eh, ei, phi))
    bounds = {
        "Hashin-Shtrikman (isotropic, eps')": [
            float(v) for v in hashin_shtrikman_bounds(complex(eh).real, complex(ei).real, phi)
        ],
        "Wiener (any microstructure, eps')": [
            float(v) for v in wiener_bounds(complex(eh).real, complex(ei).real, phi)
        ],
    }
    return {"rules": rules, "bounds": bounds, "note": note}


def model_summary(sol):
    """The physical model of a solve and its estimated model error, as a JSON-ready dict."""
    from ..store import model_record

    model, err, gap = model_record(sol)
    if err is None and "stored_model_error" in sol.extra:
        err = sol.extra["stored_model_error"]
    out = {"model": model, "model_error": err, "closest_gap_ratio": gap}
    if model == "multipole":
        orders = np.asarray(sol.extra.get("orders", [1]))
        out["max_order"] = int(orders.max())
        out["mean_order"] = round(float(orders.mean()), 3)
        if "operator" in sol.extra:
            out["operator"] = sol.extra["operator"]
        est = sol.extra.get("model_error")
        if est:
            out["estimate"] = {k: v for k, v in est.items() if k != "note"}
        out["note"] = (
            "model_error: change of the dipole moments when the closest pairs go to higher order, or the "
            "bound on the far multipoles left to the point dipoles, whichever is larger"
        )
    else:
        near = sol.extra.get("near_contact")
        if near:
            out["closest_pair"] = list(near["pair"])
            out["total_moment_error"] = near["total_moment_error"]
        out["note"] = (
            "point dipoles; model_error: the closest pair's two-sphere multipole estimate "
            "(use [solver] model = 'multipole' where it matters)"
        )
    return out


def run_summary(sol, *, enhancement=None):
    """Summary numbers of a solve as a plain, JSON-ready dict.

    Holds the solver record, the volume fraction, the effective permittivity (tensor,
    isotropic part, principal values, loss tangent), mixing-rule values at the same
    fraction, field-enhancement statistics (reduced and, where the scene knows its SI
    field, in V/m) and breakdown warnings.
    """
    from ..observables import effective_permittivity, field_enhancement

    scene = sol.scene
    out = {
        "n_bodies": scene.n_bodies,
        "n_fields": scene.n_fields,
        "boundary": scene.boundary,
        "method": sol.method,
        "method_reason": sol.method_reason,
        "backend": sol.backend,
        "converged": bool(sol.converged),
        "reason": sol.reason,
        "iterations": int(sol.iterations),
        "rtol": float(sol.rtol),
        "max_relative_residual": float(np.max(sol.residual)),
        "wall_s": round(float(sol.wall_s), 4),
        "eps_host": _c(scene.eps_host),
        "populations": [
            {
                "name": p.name,
                "shape": p.shape.kind,
                "semi_axes": [float(v) for v in p.shape.semi_axes],
                "eps": _c(p.material.eps),
                "n_bodies": int(np.sum(scene.population_index == i)),
            }
            for i, p in enumerate(scene.populations)
        ],
        "applied_field_V_per_m": scene.field_V_per_m,
        "length_unit_m": scene.length_unit_m,
    }
    out["model"] = model_summary(sol)
    phi = volume_fraction(scene)
    if phi is not None:
        out["volume_fraction"] = round(phi, 6)
        eff = effective_permittivity(sol)
        iso = complex(eff.isotropic)
        out["eps_eff_isotropic"] = _c(iso)
        out["eps_eff_along_field"] = [_c(v) for v in eff.along_field]
        if eff.tensor is not None:
            out["eps_eff_tensor_real"] = np.real(eff.tensor).round(8).tolist()
            out["eps_eff_tensor_loss"] = (-np.imag(eff.tensor)).round(8).tolist()
            out["eps_eff_principal"] = [_c(v) for v in eff.eigenvalues]
        if iso.imag:
            out["loss_tangent_eff"] = -iso.imag / iso.real
        # Numerical error of the moments is of the order of the residual; the effective
        # permittivity's departure from the host inherits it.
        out["eps_eff_numerical_error"] = float(abs(iso - scene.eps_host) * np.max(sol.residual))
        out["mixing"] = mixing_comparison(scene, phi)
    enh = enhancement if enhancement is not None else field_enhancement(sol)
    stats = enh.statistics()
    out["field_enhancement"] = stats
    e0 = scene.field_V_per_m
    peak = None
    if e0 is not None:
        peak = stats["surface"]["max"] * e0
        out["peak_host_field_V_per_m"] = peak
        out["peak_local_field_V_per_m"] = stats["local"]["max"] * e0
    out["breakdown_notes"] = breakdown_notes(e0, peak)
    return out
