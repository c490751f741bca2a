"""Plausibility of a fixture type typed in from its spec sheet: its efficacy against the photon ceiling
(Planck relation) and the best measured fixtures, and its weight against its size."""

from __future__ import annotations

from typing import Any

from app.engine.fitting import efficacy_findings
from app.room.models import FixtureType

# Grow fixtures weigh roughly 2-25 kg per m² of emitting face (common practice, no source); far outside that,
# the figure is more likely a typing slip (grams for kilograms, pounds for kilograms).
PLAUSIBLE_KG_PER_M2 = (0.5, 60.0)


def fixture_findings(t: FixtureType) -> list[dict[str, Any]]:
    out = efficacy_findings(t.ppf_umol_s, t.power_w)
    g = t.geometry
    face_m2 = g.length_m * g.width_m if g.kind in ("panel", "bar_array") else g.length_m * g.bar_width_m
    if t.weight_kg and face_m2 > 0:
        per_m2 = t.weight_kg / face_m2
        lo, hi = PLAUSIBLE_KG_PER_M2
        if not lo <= per_m2 <= hi:
            out.append(
                {
                    "level": "suspicious",
                    "code": "weight_for_size",
                    "message": f"{t.weight_kg:g} kg for {face_m2:.2f} m² of face is {per_m2:.1f} kg/m², outside the "
                    f"usual {lo:g}-{hi:g} kg/m² (common practice, no source): check the unit.",
                }
            )
    return out
