"""Photometric files (IES LM-63 and EULUMDAT) into fixture types the engine can place.

Both formats are open and public: ANSI/IES LM-63 (1995, 2002 and 2019 revisions;
older files without the first identification line are read as 1991) and
EULUMDAT (``.ldt``). Only photometric type C (luminaires aimed down, vertical
angle 0 at nadir) can be placed; types A and B are refused.

A file in lumens and candela is turned into photons with a µmol-per-lumen
factor, from the fixture's spectrum (:mod:`app.engine.spectrum`) or given by
the grower; some horticultural makers publish files whose numbers already
are µmol/s and µmol s⁻¹ sr⁻¹, which the grower says with ``flux_unit='photon'``.
"""

from __future__ import annotations

from app.service.photometry_ies import parse_ies
from app.service.photometry_ldt import parse_ldt
from app.service.photometry_table import MAX_ANGLES, MAX_FILE_BYTES, Photometry, PhotometryError, zonal_flux

# The readers live in photometry_ies.py and photometry_ldt.py, the table they fill in photometry_table.py; callers
# import all of them from here.
__all__ = [
    "DECLARED_FLUX_TOLERANCE",
    "MAX_ANGLES",
    "MAX_FILE_BYTES",
    "Photometry",
    "PhotometryError",
    "fixture_type_from",
    "flux_findings",
    "parse_ies",
    "parse_ldt",
    "zonal_flux",
]


def fixture_type_from(
    ph: Photometry,
    *,
    type_id: str,
    name: str,
    power_w: float | None,
    flux_unit: str = "lumen",
    umol_per_lumen: float | None = None,
) -> tuple[dict, dict]:
    """A fixture type (as room-file JSON) and a report of the conversion.

    The fixture's PPF is the table's whole photon flux and the table is kept whole: the engine sends the
    downward share to the canopy and the upward share to the walls and ceiling (app/engine/distributions.py).
    Both shares are reported.
    """
    total = ph.zonal_flux
    down = ph.downward_flux
    if total <= 0:
        raise PhotometryError("the table sends no light")
    if flux_unit == "photon":
        factor = 1.0
    elif umol_per_lumen and umol_per_lumen > 0:
        factor = umol_per_lumen
    else:
        raise PhotometryError(
            "a file in lumens needs a µmol-per-lumen factor: give the fixture's spectrum or the factor"
        )
    ppf = total * factor
    power = power_w or ph.input_watts
    if not power:
        raise PhotometryError("the file gives no input watts: enter the fixture's power")
    polar = list(ph.polar_deg)
    table = [[max(v, 0.0) for v in r] for r in ph.candela]
    # LM-63 (and EULUMDAT) give the opening's length along the C0-C180 photometric axis and its width along
    # C90-C270; the engine's local x is azimuth 0, so the length goes there even when it is the shorter side
    # (laying the longer side along x would turn the opening 90 deg against its own candela table).
    geometry = (
        {"kind": "panel", "length_m": round(ph.length_m, 4), "width_m": round(ph.width_m, 4)}
        if min(ph.length_m, ph.width_m) > 0
        else {"kind": "point"}
    )
    ftype = {
        "id": type_id,
        "name": name[:120] or "Imported fixture",
        "geometry": geometry,
        "beam": {"kind": "tabulated", "polar_deg": polar, "azimuth_deg": ph.azimuth_deg, "relative_intensity": table},
        "ppf_umol_s": round(ppf, 3),
        "power_w": round(float(power), 3),
        "weight_kg": None,
        "notes": f"Imported from an {ph.format.upper()} file; " + "; ".join(ph.notes),
    }
    report = {
        "zonal_flux": total,
        "downward_flux": down,
        "upward_share": 1 - down / total if total > 0 else 0.0,
        "downward_share": down / total if total > 0 else 0.0,
        "declared_flux": ph.declared_flux,
        "zonal_over_declared": total / ph.declared_flux if ph.declared_flux else None,
        "flux_unit": flux_unit,
        "umol_per_unit": factor,
        "ppf_umol_s": ppf,
        "umol_per_j": ppf / float(power),
        "notes": ph.notes,
    }
    return ftype, report


DECLARED_FLUX_TOLERANCE = 0.05
"""Share by which a file's declared flux may differ from its table's zonal integral before Leafcast says so
(rounding of the table and coarse angle steps stay well inside it; common practice, no source)."""


def flux_findings(report: dict) -> list[dict]:
    """A finding when the flux a file declares disagrees with the integral of its own candela table."""
    ratio = report.get("zonal_over_declared")
    if ratio is None or abs(ratio - 1.0) <= DECLARED_FLUX_TOLERANCE:
        return []
    return [
        {
            "level": "suspicious",
            "code": "declared_flux_disagrees",
            "message": f"The file declares {report['declared_flux']:,.0f} but its candela table integrates (zonal "
            f"method) to {report['zonal_flux']:,.0f}, {ratio:.0%} of it. Leafcast uses the table's own integral "
            "(what reaches the canopy follows the table); check the file's lamp count, multiplier and units.",
        }
    ]
