"""Photometry: photometric files to fixture types, spectrum figures, a fixture fitted to a PPFD map."""

from __future__ import annotations

from fastapi import APIRouter, Query, Request

from app.engine.fitting import efficacy_findings, fit_findings, fit_ppfd_map, plausibility, predict_at_heights
from app.engine.spectrum import led_mix, parse_spectrum_csv, spectrum_figures
from app.room.models import FixtureType
from app.room.roomfile import Problem
from app.room.storage import slugify
from app.service.photometry import MAX_FILE_BYTES as MAX_PHOTOMETRY_BYTES
from app.service.photometry import PhotometryError, fixture_type_from, flux_findings, parse_ies, parse_ldt
from app.service.results import MapFitResult, SpectrumFigures
from app.service.results_library import ImportedFixture
from app.web.bodies import MapFitIn, SpectrumIn
from app.web.errors import ERRORS, ApiError

router = APIRouter(prefix="/api/photometry", tags=["photometry"])


@router.post(
    "/import",
    responses=ERRORS,
    openapi_extra={
        "requestBody": {
            "required": True,
            "content": {"application/octet-stream": {"schema": {"type": "string", "format": "binary"}}},
        }
    },
    summary="Turn an IES LM-63 or EULUMDAT file into a fixture type",
)
async def import_photometry(
    request: Request,
    kind: str = Query("ies", pattern="^(ies|ldt)$"),
    flux_unit: str = Query("lumen", pattern="^(lumen|photon)$"),
    umol_per_lumen: float | None = Query(None, gt=0, le=1),
    power_w: float | None = Query(None, gt=0, le=10000),
    name: str = Query("", max_length=120),
) -> ImportedFixture:
    raw = await request.body()
    if len(raw) > MAX_PHOTOMETRY_BYTES:
        raise ApiError(413, "too_large", f"a photometric file over {MAX_PHOTOMETRY_BYTES:,} bytes is refused")
    text = raw.decode("utf-8", errors="replace")
    try:
        ph = parse_ies(text) if kind == "ies" else parse_ldt(text)
        ftype, report = fixture_type_from(
            ph,
            type_id=slugify(name or ph.name or "imported")[:40],
            name=name or ph.name or "Imported fixture",
            power_w=power_w,
            flux_unit=flux_unit,
            umol_per_lumen=umol_per_lumen,
        )
        ftype = FixtureType.model_validate(ftype).model_dump(mode="json")
        report["findings"] = efficacy_findings(ftype["ppf_umol_s"], ftype["power_w"]) + flux_findings(report)
    except PhotometryError as exc:
        raise ApiError(
            422, "bad_photometry", str(exc), [Problem(f"line {exc.line}" if exc.line else "file", str(exc))]
        ) from exc
    except ValueError as exc:
        raise ApiError(422, "bad_photometry", str(exc)) from exc
    return {"fixture_type": ftype, "report": report}


@router.post(
    "/spectrum",
    responses=ERRORS,
    summary="Band shares, photon ceiling and lux-to-PPFD factor of a spectrum",
)
def spectrum(body: SpectrumIn) -> SpectrumFigures:
    try:
        if body.csv:
            wl, pw = parse_spectrum_csv(body.csv)
        elif body.peaks:
            wl, pw = led_mix([p.model_dump() for p in body.peaks])
        else:
            raise ValueError("give a spectrum as CSV or as LED peaks")
        return spectrum_figures(wl, pw)
    except ValueError as exc:
        raise ApiError(422, "bad_spectrum", str(exc)) from exc


@router.post(
    "/fit",
    responses=ERRORS,
    summary="Fit a fixture to a published PPFD map and check the map is plausible",
)
def fit_map(body: MapFitIn) -> MapFitResult:
    widths = {len(r) for r in body.readings}
    if len(widths) != 1 or not 3 <= widths.pop() <= 101:
        raise ApiError(422, "invalid_request", "every row of readings must have the same length, 3 to 101")
    try:
        fit = fit_ppfd_map(body.readings, body.cell_m, body.hanging_height_m)
    except ValueError as exc:
        raise ApiError(422, "invalid_request", str(exc)) from exc
    shape = (len(body.readings), len(body.readings[0]))
    heights = body.heights_m or [round(body.hanging_height_m * f, 3) for f in (0.5, 0.75, 1.0, 1.5, 2.0)]
    if any(not 0 < h <= 10 for h in heights):
        raise ApiError(422, "invalid_request", "heights must be between 0 and 10 m")
    return {
        "fit": fit,
        "predictions": predict_at_heights(fit, shape, body.cell_m, heights),
        "findings": fit_findings(fit, body.cell_m, shape)
        + plausibility(
            body.readings,
            body.cell_m,
            body.claimed_ppf_umol_s,
            body.power_w,
            fit["ppf_umol_s"],
            body.ceiling_umol_j,
        ),
    }
