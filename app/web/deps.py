"""What every router needs from the running app: the store, the templates, a room by id, its analysis."""

from __future__ import annotations

from typing import Any

from fastapi import Request
from fastapi.templating import Jinja2Templates

from app.engine.compute import SceneError
from app.room.models import RoomFile
from app.room.roomfile import RoomFileError
from app.room.storage import RoomNotFound, RoomStore
from app.service.analysis import analyse
from app.service.cost import OverBudget
from app.service.guarded import AnalysisMemory, AnalysisRunner, AnalysisTimeout
from app.web.errors import ApiError, not_found, room_error
from app.web.json_edge import FiniteJSONResponse


def store_of(request: Request) -> RoomStore:
    return request.app.state.store


def templates_of(request: Request) -> Jinja2Templates:
    return request.app.state.templates


def load_room(store: RoomStore, room_id: str) -> RoomFile:
    try:
        return store.load(room_id)
    except RoomNotFound as exc:
        raise not_found(f"no room with id '{room_id[:80]}'") from exc
    except RoomFileError as exc:
        raise room_error(exc) from exc


def runner_of(request: Request) -> AnalysisRunner | None:
    return getattr(request.app.state, "runner", None)


def within_budget(request: Request, room_file: RoomFile) -> None:
    """Refuse up front (422) a room whose analysis would be over the budget (planner, check-my-setup)."""
    runner = runner_of(request)
    if runner is not None:
        try:
            runner.estimate(room_file)
        except OverBudget as exc:
            raise over_budget(exc) from exc


def over_budget(exc: OverBudget) -> ApiError:
    return ApiError(422, "too_much_work", str(exc), estimate=exc.estimate.as_dict())


def analysed(room_file: RoomFile, *, request: Request | None = None, abandon=None, **kw) -> dict[str, Any]:
    """The analysis, estimated and bounded by the app's runner when there is a request (else computed here).

    ``abandon`` (a threading.Event) set while a heavy analysis runs stops it: the client went away.
    """
    runner = runner_of(request) if request is not None else None
    try:
        return runner.run(room_file, abandon=abandon, **kw) if runner is not None else analyse(room_file, **kw)
    except SceneError as exc:
        raise ApiError(422, "bad_geometry", str(exc)) from exc
    except OverBudget as exc:
        raise over_budget(exc) from exc
    except (AnalysisTimeout, AnalysisMemory) as exc:
        raise ApiError(503, "analysis_stopped", f"Not computed: {exc}") from exc


def render(request: Request, template: str, data: dict[str, Any], fmt: str | None):
    """One data structure per page: rendered by its template, or returned as JSON with ``?format=json``."""
    if fmt == "json":
        return FiniteJSONResponse(data)
    return templates_of(request).TemplateResponse(request, template, {"page": data})
