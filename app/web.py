"""The FastAPI app: every URL is listed here. Handlers validate, call the service, render.

Pages and their JSON come from the same dictionaries (:mod:`app.pages`), so a
page and its API cannot drift apart: add ``?format=json`` to any page URL.
"""

from __future__ import annotations

import csv
import io
from importlib import resources
from pathlib import Path
from typing import Annotated, Any

from fastapi import FastAPI, Query, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import FileResponse, HTMLResponse, JSONResponse, Response
from fastapi.staticfiles import StaticFiles
from fastapi.templating import Jinja2Templates
from pydantic import BaseModel, ConfigDict, Field
from starlette.exceptions import HTTPException as StarletteHTTPException

from app import __version__, pages
from app.analysis import Region, analyse
from app.drawings import heatmap_svg
from app.engine.compute import SceneError
from app.engine.fitting import efficacy_findings, fit_ppfd_map, plausibility, predict_at_heights
from app.engine.spectrum import led_mix, parse_spectrum_csv, spectrum_figures
from app.library import crop_library, fixture_library
from app.middleware import BodyLimit, LocalOnly
from app.models import FixtureType, RoomFile
from app.photometry import MAX_FILE_BYTES as MAX_PHOTOMETRY_BYTES
from app.photometry import PhotometryError, fixture_type_from, parse_ies, parse_ldt
from app.planner import JobBoard, PlanOptions, check_setup, curves
from app.roomfile import Problem, RoomFileError, dump_room_file, parse_room_file, to_json_bytes
from app.settings import PROJECT_ROOT, Settings
from app.storage import RoomNotFound, RoomStore, StaleRevision, slugify
from app.units import format_area, format_length

TEMPLATES = PROJECT_ROOT / "templates"
STATIC = PROJECT_ROOT / "static"


class ProblemOut(BaseModel):
    field: str
    message: str


class ErrorOut(BaseModel):
    error: str = Field(description="Machine-readable kind of error.")
    message: str
    problems: list[ProblemOut] = []
    current_revision: int | None = None


class RoomSummaryOut(BaseModel):
    id: str
    name: str
    revision: int
    fixtures: int
    zones: int


class SavedOut(BaseModel):
    id: str
    revision: int
    name: str


ERRORS = {code: {"model": ErrorOut} for code in (400, 404, 409, 413, 421, 422)}
ROOM_BODY = {
    "requestBody": {
        "required": True,
        "description": "A Leafcast room file (format 'leafcast-room').",
        "content": {"application/json": {"schema": {"type": "object"}}},
    }
}


class ApiIn(BaseModel):
    """Request bodies: unknown keys, NaN and infinity refused."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)


class PeakIn(ApiIn):
    nm: float = Field(ge=300, le=800)
    fwhm_nm: float = Field(gt=1, le=300)
    weight: float = Field(gt=0, le=1e6)


class SpectrumIn(ApiIn):
    csv: str | None = Field(default=None, max_length=200_000, description="wavelength [nm], relative power")
    peaks: list[PeakIn] | None = Field(
        default=None, max_length=20, description="LED peaks (a white LED: blue + phosphor)"
    )


class MapFitIn(ApiIn):
    readings: list[list[Annotated[float, Field(ge=0, le=100_000)]]] = Field(
        min_length=3, max_length=101, description="PPFD rows, front to back [µmol m⁻² s⁻¹]"
    )
    cell_m: float = Field(gt=0, le=1, description="Spacing of the readings [m]")
    hanging_height_m: float = Field(gt=0, le=10, description="Height of the fixture above the map [m]")
    claimed_ppf_umol_s: float | None = Field(default=None, gt=0, le=20000)
    power_w: float | None = Field(default=None, gt=0, le=10000)
    ceiling_umol_j: float | None = Field(default=None, gt=0, le=10, description="From the fixture's spectrum, if known")
    heights_m: list[Annotated[float, Field(gt=0, le=10)]] = Field(default_factory=list, max_length=10)


class PlanIn(ApiIn):
    type_ids: list[str] = Field(default_factory=list, max_length=20, description="Candidate fixture types")
    objective: str = Field(
        default="power", pattern="^(power|count)$", description="Least input power, or fewest fixtures"
    )
    max_power_w: float | None = Field(default=None, gt=0, le=1e7, description="Power budget for the whole room [W]")
    min_clearance_m: float = Field(default=0.15, ge=0.02, le=3, description="Least height above the canopy [m]")
    seed: int = Field(default=0, ge=0, le=2**31)


class ApiError(Exception):
    def __init__(
        self,
        status: int,
        error: str,
        message: str,
        problems: list[Problem] | None = None,
        current_revision: int | None = None,
    ) -> None:
        self.status, self.error, self.message = status, error, message
        self.problems, self.current_revision = problems or [], current_revision


def _error_json(status: int, error: str, message: str, problems=(), current_revision=None) -> JSONResponse:
    body = {"error": error, "message": message, "problems": [p.as_dict() for p in problems]}
    if current_revision is not None:
        body["current_revision"] = current_revision
    return JSONResponse(body, status_code=status)


def _room_error(exc: RoomFileError) -> ApiError:
    status = 413 if exc.kind == "too_large" else 422
    first = exc.problems[0] if exc.problems else Problem("(document)", "invalid")
    message = f"{first.field}: {first.message}" + (
        f" (and {len(exc.problems) - 1} more)" if len(exc.problems) > 1 else ""
    )
    return ApiError(status, exc.kind, message, exc.problems)


async def _room_from_body(request: Request) -> RoomFile:
    raw = await request.body()
    try:
        return parse_room_file(raw)
    except RoomFileError as exc:
        raise _room_error(exc) from exc


def create_app(settings: Settings | None = None) -> FastAPI:
    settings = settings or Settings()
    store = RoomStore(settings.data_dir)
    if settings.seed_samples and settings.samples_dir and not store.list():
        seed_samples(store, settings.samples_dir)

    app = FastAPI(
        title="Leafcast",
        version=__version__,
        description="Lay out grow-room lighting: canopy PPFD and DLI maps, coverage, energy and circuits.",
    )
    app.state.settings, app.state.store = settings, store
    app.add_middleware(BodyLimit)
    app.add_middleware(LocalOnly, allowed_hosts=settings.allowed_hosts)
    templates = Jinja2Templates(directory=str(TEMPLATES))
    templates.env.globals["version"] = __version__
    templates.env.filters["length_fmt"] = lambda m, system, fine=False: format_length(m, system, fine)
    templates.env.filters["area_fmt"] = format_area
    app.mount("/static", StaticFiles(directory=str(STATIC)), name="static")

    @app.exception_handler(ApiError)
    async def _api_error(request: Request, exc: ApiError):
        return _error_json(exc.status, exc.error, exc.message, exc.problems, exc.current_revision)

    @app.exception_handler(RequestValidationError)
    async def _validation(request: Request, exc: RequestValidationError):
        problems = [Problem(".".join(str(p) for p in e["loc"]), e["msg"]) for e in exc.errors()]
        return _error_json(422, "invalid_request", problems[0].message if problems else "invalid request", problems)

    @app.exception_handler(StarletteHTTPException)
    async def _http(request: Request, exc: StarletteHTTPException):
        return _error_json(exc.status_code, "http_error", str(exc.detail))

    def load(room_id: str) -> RoomFile:
        try:
            return store.load(room_id)
        except RoomNotFound as exc:
            raise ApiError(404, "not_found", f"no room with id '{room_id}'") from exc
        except RoomFileError as exc:
            raise _room_error(exc) from exc

    def analysed(room_file: RoomFile, **kw) -> dict[str, Any]:
        try:
            return analyse(room_file, **kw)
        except SceneError as exc:
            raise ApiError(422, "bad_geometry", str(exc)) from exc

    # -- pages ----------------------------------------------------------
    def page(request: Request, template: str, data: dict[str, Any], fmt: str | None):
        if fmt == "json":
            return JSONResponse(data)
        return templates.TemplateResponse(request, template, {"page": data})

    @app.get("/", response_class=HTMLResponse, include_in_schema=False)
    def room_list_page(request: Request, format: str | None = None):
        return page(request, "rooms.html", pages.room_list(store), format)

    @app.get("/rooms/{room_id}", response_class=HTMLResponse, include_in_schema=False)
    def editor_page(request: Request, room_id: str, format: str | None = None):
        rf = load(room_id)
        return page(request, "editor.html", pages.editor(room_id, rf, analysed(rf)), format)

    @app.get("/rooms/{room_id}/sheet", response_class=HTMLResponse, include_in_schema=False)
    def sheet_page(request: Request, room_id: str, format: str | None = None, paper: str = "letter"):
        rf = load(room_id)
        return page(request, "sheet.html", pages.sheet(room_id, rf, analysed(rf), paper), format)

    @app.get("/static-lib/plotly.min.js", include_in_schema=False)
    def plotly_js():
        path = resources.files("plotly").joinpath("package_data", "plotly.min.js")
        return FileResponse(
            str(path), media_type="application/javascript", headers={"Cache-Control": "public, max-age=86400"}
        )

    # -- rooms API ------------------------------------------------------
    @app.get("/api/rooms", response_model=list[RoomSummaryOut], tags=["rooms"])
    def list_rooms():
        return [s.__dict__ for s in store.list()]

    @app.post(
        "/api/rooms",
        status_code=201,
        response_model=SavedOut,
        responses=ERRORS,
        openapi_extra=ROOM_BODY,
        tags=["rooms"],
        summary="Create a room from a room file",
    )
    async def create_room(request: Request):
        rf = await _room_from_body(request)
        room_id, stored = store.create(rf)
        return {"id": room_id, "revision": stored.revision, "name": stored.room.name}

    @app.post(
        "/api/rooms/import",
        status_code=201,
        response_model=SavedOut,
        responses=ERRORS,
        openapi_extra=ROOM_BODY,
        tags=["rooms"],
        summary="Import a room file; a colliding name gets a new one",
    )
    async def import_room(request: Request):
        rf = await _room_from_body(request)
        names = {s.name for s in store.list()}
        name, n = rf.room.name, 2
        while name in names:
            name, n = f"{rf.room.name} ({n})", n + 1
        rf = rf.model_copy(update={"room": rf.room.model_copy(update={"name": name[:120]})})
        room_id, stored = store.create(rf)
        return {"id": room_id, "revision": stored.revision, "name": stored.room.name}

    @app.get("/api/rooms/{room_id}", responses=ERRORS, tags=["rooms"], summary="Read a room file")
    def read_room(room_id: str) -> dict[str, Any]:
        return dump_room_file(load(room_id))

    @app.put(
        "/api/rooms/{room_id}",
        response_model=SavedOut,
        responses=ERRORS,
        openapi_extra=ROOM_BODY,
        tags=["rooms"],
        summary="Save a room; refused with 409 if its revision is stale",
    )
    async def save_room(room_id: str, request: Request):
        load(room_id)
        rf = await _room_from_body(request)
        try:
            stored = store.save(room_id, rf)
        except StaleRevision as exc:
            raise ApiError(
                409,
                "stale_revision",
                f"This room was changed elsewhere (now revision {exc.current}); your change was based on "
                f"revision {exc.given} and was not saved.",
                current_revision=exc.current,
            ) from exc
        return {"id": room_id, "revision": stored.revision, "name": stored.room.name}

    @app.delete("/api/rooms/{room_id}", status_code=204, responses=ERRORS, tags=["rooms"])
    def delete_room(room_id: str):
        try:
            store.delete(room_id)
        except RoomNotFound as exc:
            raise ApiError(404, "not_found", f"no room with id '{room_id}'") from exc
        return Response(status_code=204)

    @app.get("/api/rooms/{room_id}/file", responses=ERRORS, tags=["rooms"], summary="Download the room file")
    def export_room(room_id: str):
        rf = load(room_id)
        return Response(
            to_json_bytes(dump_room_file(rf)),
            media_type="application/json",
            headers={"Content-Disposition": f'attachment; filename="{room_id}.leafcast.json"'},
        )

    @app.get(
        "/api/rooms/{room_id}/analysis",
        responses=ERRORS,
        tags=["analysis"],
        summary="PPFD/DLI maps, coverage, energy, circuits and warnings",
    )
    def room_analysis(room_id: str, budget: bool = False, grids: bool = True) -> dict[str, Any]:
        return analysed(load(room_id), with_budget=budget, include_grids=grids)

    @app.post(
        "/api/analyze",
        responses=ERRORS,
        openapi_extra=ROOM_BODY,
        tags=["analysis"],
        summary="Analyse a posted room file without saving it (live editing)",
    )
    async def analyze_posted(
        request: Request,
        budget: bool = False,
        region: list[str] = Query(default=[], description="name,x_m,y_m,width_m,length_m"),
    ):
        rf = await _room_from_body(request)
        return analysed(rf, with_budget=budget, regions=_regions(region))

    @app.get(
        "/api/rooms/{room_id}/zones/{zone_id}/grid.csv",
        responses=ERRORS,
        tags=["analysis"],
        summary="A zone's PPFD and DLI grid as CSV",
    )
    def zone_csv(room_id: str, zone_id: str):
        result = analysed(load(room_id))
        zone = next((z for z in result["zones"] if z["id"] == zone_id), None)
        if zone is None:
            raise ApiError(404, "not_found", f"no zone '{zone_id}' in room '{room_id}'")
        return Response(
            grid_csv(zone),
            media_type="text/csv",
            headers={"Content-Disposition": f'attachment; filename="{room_id}-{zone_id}.csv"'},
        )

    @app.get(
        "/api/rooms/{room_id}/zones/{zone_id}/map.svg",
        responses=ERRORS,
        tags=["analysis"],
        summary="A zone's heatmap as SVG",
    )
    def zone_svg(room_id: str, zone_id: str, quantity: str = Query("ppfd", pattern="^(ppfd|dli)$")):
        rf = load(room_id)
        result = analysed(rf)
        zone = next((z for z in result["zones"] if z["id"] == zone_id), None)
        if zone is None:
            raise ApiError(404, "not_found", f"no zone '{zone_id}' in room '{room_id}'")
        return Response(
            heatmap_svg(zone, rf.room.display_units, quantity),
            media_type="image/svg+xml",
            headers={"Content-Disposition": f'attachment; filename="{room_id}-{zone_id}-{quantity}.svg"'},
        )

    # -- planner --------------------------------------------------------
    jobs = JobBoard()

    def job_or_404(job_id: str):
        job = jobs.get(job_id)
        if job is None:
            raise ApiError(404, "not_found", f"no planner job '{job_id}'")
        return job

    @app.get("/rooms/{room_id}/plan", response_class=HTMLResponse, include_in_schema=False)
    def plan_page(request: Request, room_id: str, format: str | None = None):
        rf = load(room_id)
        return page(request, "plan.html", pages.planner(room_id, rf), format)

    @app.post(
        "/api/rooms/{room_id}/plan",
        status_code=202,
        responses=ERRORS,
        tags=["planner"],
        summary="Start the layout planner in the background; poll the job",
    )
    def start_plan(room_id: str, body: PlanIn) -> dict[str, Any]:
        rf = load(room_id)
        opts = PlanOptions(
            type_ids=tuple(body.type_ids),
            objective=body.objective,
            max_power_w=body.max_power_w,
            min_clearance_m=body.min_clearance_m,
            seed=body.seed,
        )
        job = jobs.start(room_id, rf, opts)
        return {"job_id": job.id, "revision": rf.revision}

    @app.get("/api/plan-jobs/{job_id}", responses=ERRORS, tags=["planner"], summary="Progress and best layouts so far")
    def plan_job(job_id: str) -> dict[str, Any]:
        return job_or_404(job_id).public()

    @app.delete("/api/plan-jobs/{job_id}", responses=ERRORS, tags=["planner"], summary="Cancel a planner job")
    def cancel_job(job_id: str) -> dict[str, Any]:
        job = job_or_404(job_id)
        job.cancel.set()
        return job.public()

    @app.get(
        "/api/rooms/{room_id}/check",
        responses=ERRORS,
        tags=["planner"],
        summary="Does the room meet each zone's target? If not, the smallest changes that do",
    )
    def check_room(room_id: str) -> dict[str, Any]:
        return check_setup(load(room_id))

    @app.get(
        "/api/rooms/{room_id}/curves",
        responses=ERRORS,
        tags=["planner"],
        summary="Average and peak PPFD against hanging height and dimming",
    )
    def room_curves(
        room_id: str, zone: str = Query(..., max_length=40), fixture: list[str] = Query(default=[], max_length=200)
    ) -> dict[str, Any]:
        try:
            return curves(load(room_id), zone, tuple(fixture))
        except (ValueError, StopIteration) as exc:
            raise ApiError(422, "invalid_request", str(exc) or f"no zone '{zone}'") from exc

    # -- photometry -----------------------------------------------------
    @app.get("/fixtures/new", response_class=HTMLResponse, include_in_schema=False)
    def new_fixture_page(request: Request, format: str | None = None):
        return page(request, "fixture_new.html", pages.new_fixture(store), format)

    @app.post(
        "/api/photometry/import",
        responses=ERRORS,
        tags=["photometry"],
        openapi_extra={"requestBody": {"required": True, "content": {"text/plain": {"schema": {"type": "string"}}}}},
        summary="Turn an IES LM-63 or EULUMDAT file into a fixture type",
    )
    async def import_photometry(
        request: Request,
        kind: str = Query("ies", pattern="^(ies|ldt)$"),
        flux_unit: str = Query("lumen", pattern="^(lumen|photon)$"),
        umol_per_lumen: float | None = Query(None, gt=0, le=1),
        power_w: float | None = Query(None, gt=0, le=10000),
        name: str = Query("", max_length=120),
    ) -> dict[str, Any]:
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
            report["findings"] = efficacy_findings(ftype["ppf_umol_s"], ftype["power_w"])
        except PhotometryError as exc:
            raise ApiError(
                422, "bad_photometry", str(exc), [Problem(f"line {exc.line}" if exc.line else "file", str(exc))]
            ) from exc
        except ValueError as exc:
            raise ApiError(422, "bad_photometry", str(exc)) from exc
        return {"fixture_type": ftype, "report": report}

    @app.post(
        "/api/photometry/spectrum",
        responses=ERRORS,
        tags=["photometry"],
        summary="Band shares, photon ceiling and lux-to-PPFD factor of a spectrum",
    )
    def spectrum(body: SpectrumIn) -> dict[str, Any]:
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

    @app.post(
        "/api/photometry/fit",
        responses=ERRORS,
        tags=["photometry"],
        summary="Fit a fixture to a published PPFD map and check the map is plausible",
    )
    def fit_map(body: MapFitIn) -> dict[str, Any]:
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
            "findings": plausibility(
                body.readings,
                body.cell_m,
                body.claimed_ppf_umol_s,
                body.power_w,
                fit["ppf_umol_s"],
                body.ceiling_umol_j,
            ),
        }

    # -- libraries ------------------------------------------------------
    @app.get("/api/library/fixtures", tags=["library"])
    def fixture_types() -> list[dict[str, Any]]:
        return [t.model_dump(mode="json") for t in fixture_library().values()]

    @app.get("/api/library/crops", tags=["library"])
    def crops() -> list[dict[str, Any]]:
        return [c.model_dump(mode="json") for c in crop_library().values()]

    return app


def _regions(specs: list[str]) -> tuple[Region, ...]:
    out = []
    for i, spec in enumerate(specs):
        parts = spec.split(",")
        try:
            name, *nums = parts
            x, y, w, l = (float(v) for v in nums)
            if not all(map(_finite, (x, y, w, l))) or w <= 0 or l <= 0:
                raise ValueError
        except ValueError as exc:
            raise ApiError(
                422,
                "invalid_request",
                f"region[{i}]: expected name,x_m,y_m,width_m,length_m with positive finite sizes, got '{spec}'",
                [Problem(f"region[{i}]", "bad region")],
            ) from exc
        out.append(Region(name, x, y, w, l))
    return tuple(out)


def _finite(v: float) -> bool:
    return v == v and abs(v) != float("inf")


def grid_csv(zone: dict[str, Any]) -> str:
    """Long-format CSV: x_m, y_m, ppfd_umol_m2_s, dli_mol_m2_d."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["zone_id", "x_m", "y_m", "ppfd_umol_m2_s", "dli_mol_m2_d"])
    g = zone["grid"]
    for j, y in enumerate(g["y_m"]):
        for i, x in enumerate(g["x_m"]):
            w.writerow([zone["id"], x, y, g["ppfd"][j][i], g["dli"][j][i]])
    return buf.getvalue()


def seed_samples(store: RoomStore, samples_dir: Path) -> list[str]:
    """Copy the sample rooms into an empty data folder."""
    ids = []
    for path in sorted(Path(samples_dir).glob("*.json")):
        try:
            rf = parse_room_file(path.read_bytes())
        except RoomFileError:
            continue
        ids.append(store.create(rf)[0])
    return ids
