"""The FastAPI app factory: it assembles the routers, the middleware and the error mapping.

Every URL lives in one router module under :mod:`app.web.routes`, one per resource. Pages and their JSON come
from the same dictionaries (:mod:`app.web.views`), so a page and its API cannot drift apart: add
``?format=json`` to any page URL.
"""

from __future__ import annotations

from pathlib import Path

from fastapi import FastAPI
from fastapi.openapi.utils import get_openapi
from fastapi.staticfiles import StaticFiles
from fastapi.templating import Jinja2Templates

from app import __version__
from app.assets import asset_dir
from app.room.models import RoomFile
from app.room.roomfile import RoomFileError, parse_room_file
from app.room.storage import RoomStore
from app.room.units import format_area, format_length
from app.service.guarded import AnalysisRunner
from app.service.planner import JobBoard
from app.settings import Settings
from app.web.errors import install_error_handlers
from app.web.guards import CrossSiteGuard, SecurityHeaders
from app.web.middleware import BodyLimit, LocalOnly
from app.web.routes import (
    analysis,
    docs,
    fixture_types,
    footprints,
    library,
    meter,
    pages,
    photometry,
    planner,
    rooms,
    sheet,
    variants,
    year,
)

ROUTERS = (
    pages,
    rooms,
    analysis,
    planner,
    photometry,
    library,
    meter,
    year,
    sheet,
    docs,
    footprints,
    fixture_types,
    variants,
)


def create_app(settings: Settings | None = None) -> FastAPI:
    settings = settings or Settings()
    store = RoomStore(settings.data_dir)
    restored = store.recover()  # rooms a crash left without their file come back from their previous revision
    if settings.seed_samples and settings.samples_dir and not store.list():
        seed_samples(store, settings.samples_dir)

    app = FastAPI(
        title="Leafcast",
        version=__version__,
        description="Lay out grow-room lighting: canopy PPFD and DLI maps, coverage, energy and circuits.",
        docs_url=None,  # served by app.web.routes.docs from installed files (offline, no inline script)
        redoc_url=None,
    )
    app.state.settings, app.state.store, app.state.jobs = settings, store, JobBoard()
    app.state.restored = restored
    app.state.runner = AnalysisRunner(budget_s=settings.max_analysis_s, workers=settings.analysis_workers)
    app.state.templates = _templates()
    app.add_middleware(BodyLimit)
    app.add_middleware(CrossSiteGuard)
    app.add_middleware(LocalOnly, allowed_hosts=settings.allowed_hosts)
    app.add_middleware(SecurityHeaders)  # outermost: every answer carries the headers, refusals included
    app.mount("/static", StaticFiles(directory=str(asset_dir("static"))), name="static")
    install_error_handlers(app)
    for module in ROUTERS:
        app.include_router(module.router)
    app.openapi = lambda: _openapi(app)
    return app


def _templates() -> Jinja2Templates:
    templates = Jinja2Templates(directory=str(asset_dir("templates")))
    templates.env.globals["version"] = __version__
    templates.env.filters["length_fmt"] = lambda m, system, fine=False: format_length(m, system, fine)
    templates.env.filters["area_fmt"] = format_area
    return templates


def _openapi(app: FastAPI) -> dict:
    """The generated schema, with the room file model's JSON schema under components (room request bodies)."""
    if app.openapi_schema:
        return app.openapi_schema
    schema = get_openapi(title=app.title, version=app.version, description=app.description, routes=app.routes)
    room_schema = RoomFile.model_json_schema(ref_template="#/components/schemas/{model}")
    components = schema.setdefault("components", {}).setdefault("schemas", {})
    for name, sub in room_schema.pop("$defs", {}).items():
        components.setdefault(name, sub)
    components["RoomFile"] = room_schema
    app.openapi_schema = schema
    return schema


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
