from __future__ import annotations

#: Typical short-term dielectric strength of common insulating hosts, kV/mm, at the low
#: end of the usual range for millimetre-scale gaps or thick samples (common practice,
#: no source; real values depend on thickness, electrodes, temperature, moisture,
#: ageing and the test standard). Thin oriented films hold far more.
TYPICAL_BREAKDOWN_KV_PER_MM = {
    "air (1 atm)": 3.0,
    "silicone oil": 10.0,
    "mineral transformer oil": 10.0,
    "silicone rubber": 18.0,
    "cast epoxy resin": 20.0,
    "polyethylene": 20.0,
    "polyimide film": 150.0,
    "biaxially oriented polypropylene film": 400.0,
}

CAUTION = (
    "Caution: this tool estimates fields with a model: point dipoles underestimate the field in "
    "narrow gaps between bodies, and the multipole model resolves it only to its reported model "
    "error. It does not certify insulation, creepage or breakdown "
    "strength. Electrorheological and field-grading devices run at kilovolts per millimetre; design, "
    "build and test high-voltage equipment under your local electrical-safety codes and with "
    "qualified, licensed practice."
)


def breakdown_notes(applied_V_per_m, peak_V_per_m=None) -> list[str]:
    """Warnings when the applied or peak local field passes typical breakdown strengths.

    Parameters
    ----------
    applied_V_per_m : float or None
        Applied field strength, V/m (``None`` when the run has no SI field).
    peak_V_per_m : float, optional
        Largest estimated local host field, V/m.

    Returns
    -------
    list of str
        One line per field that exceeds at least one entry of
        :data:`TYPICAL_BREAKDOWN_KV_PER_MM`, naming the hosts it exceeds; empty when
        neither does (or no SI field is known).
    """
    notes = []
    for label, value in (("applied field", applied_V_per_m), ("peak local host field", peak_V_per_m)):
        if value is None:
            continue
        kv_mm = float(value) / 1e6
        over = [f"{name} ({s:g})" for name, s in TYPICAL_BREAKDOWN_KV_PER_MM.items() if kv_mm > s]
        if over:
            notes.append(
                f"warning: the {label} ({kv_mm:.3g} kV/mm) exceeds the typical breakdown strength "
                f"(kV/mm) of {', '.join(over)}; check your host's rated strength and margins"
            )
    return notes
