"""What every router needs from the running app: the store, the templates, a room by id, its analysis."""

from __future__ import annotations

from typing import Any

from fastapi import Request
from fastapi.responses import JSONResponse
from fastapi.templating import Jinja2Templates

from app.engine.compute import SceneError
from app.room.models import RoomFile
from app.room.roomfile import RoomFileError
from app.room.storage import RoomNotFound, RoomStore
from app.service.analysis import analyse
from app.web.errors import ApiError, not_found, room_error


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


def analysed(room_file: RoomFile, **kw) -> dict[str, Any]:
    try:
        return analyse(room_file, **kw)
    except SceneError as exc:
        raise ApiError(422, "bad_geometry", str(exc)) from exc


def render(request: Request, template: str, data: dict[str, Any], fmt: str | None):
    """One data structure per page: rendered by its template, or returned as JSON with ``?format=json``."""
    if fmt == "json":
        return JSONResponse(data)
    return templates_of(request).TemplateResponse(request, template, {"page": data})
