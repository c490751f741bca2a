"""Rooms: list, create, import, read, save (revision-checked), delete, download."""

from __future__ import annotations

from fastapi import APIRouter, Request
from fastapi.responses import Response
from pydantic import BaseModel
from starlette.concurrency import run_in_threadpool

from app.room.roomfile import dump_room_file, to_json_bytes
from app.room.storage import RoomNotFound, StaleRevision
from app.web.bodies import ROOM_BODY, ROOM_RESPONSE, room_from_body
from app.web.deps import load_room, store_of
from app.web.errors import ERRORS, not_found, stale_revision
from app.web.json_edge import FiniteJSONResponse

router = APIRouter(prefix="/api/rooms", tags=["rooms"])


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


@router.get("", response_model=list[RoomSummaryOut])
def list_rooms(request: Request):
    return [s.__dict__ for s in store_of(request).list()]


@router.post(
    "",
    status_code=201,
    response_model=SavedOut,
    responses=ERRORS,
    openapi_extra=ROOM_BODY,
    summary="Create a room from a room file",
)
async def create_room(request: Request):
    rf = await room_from_body(request)
    room_id, stored = await run_in_threadpool(store_of(request).create, rf)
    return {"id": room_id, "revision": stored.revision, "name": stored.room.name}


@router.post(
    "/import",
    status_code=201,
    response_model=SavedOut,
    responses=ERRORS,
    openapi_extra=ROOM_BODY,
    summary="Import a room file; a colliding name gets a new one",
)
async def import_room(request: Request):
    rf = await room_from_body(request)
    room_id, stored = await run_in_threadpool(_import, store_of(request), rf)
    return {"id": room_id, "revision": stored.revision, "name": stored.room.name}


def _import(store, rf):
    names = {s.name for s in store.list()}
    name, n = rf.room.name, 2
    while name in names:
        name, n = f"{rf.room.name} ({n})", n + 1
    rf = rf.model_copy(update={"room": rf.room.model_copy(update={"name": name[:120]})})
    return store.create(rf)


@router.get("/{room_id}", response_model=None, responses={**ERRORS, **ROOM_RESPONSE}, summary="Read a room file")
def read_room(request: Request, room_id: str) -> FiniteJSONResponse:
    return FiniteJSONResponse(dump_room_file(load_room(store_of(request), room_id)))


@router.put(
    "/{room_id}",
    response_model=SavedOut,
    responses=ERRORS,
    openapi_extra=ROOM_BODY,
    summary="Save a room; refused with 409 if its revision is stale",
)
async def save_room(room_id: str, request: Request):
    store = store_of(request)
    await run_in_threadpool(load_room, store, room_id)
    rf = await room_from_body(request)
    try:
        stored = await run_in_threadpool(store.save, room_id, rf)
    except RoomNotFound as exc:  # deleted while the body was arriving
        raise not_found(f"room '{room_id[:80]}' was deleted while this save was arriving; nothing was saved") from exc
    except StaleRevision as exc:
        raise stale_revision(exc) from exc
    return {"id": room_id, "revision": stored.revision, "name": stored.room.name}


@router.post(
    "/{room_id}/restore-previous",
    response_model=SavedOut,
    responses=ERRORS,
    summary="Make the previous saved revision current again (as a new revision)",
)
def restore_previous(request: Request, room_id: str):
    try:
        stored = store_of(request).restore_previous(room_id)
    except RoomNotFound as exc:
        raise not_found(f"room '{room_id[:80]}' has no previous revision to restore") from exc
    return {"id": room_id, "revision": stored.revision, "name": stored.room.name}


@router.delete("/{room_id}", status_code=204, responses=ERRORS)
def delete_room(request: Request, room_id: str):
    try:
        store_of(request).delete(room_id)
    except RoomNotFound as exc:
        raise not_found(f"no room with id '{room_id[:80]}'") from exc
    return Response(status_code=204)


@router.get("/{room_id}/file", responses={**ERRORS, **ROOM_RESPONSE}, summary="Download the room file")
def export_room(request: Request, room_id: str):
    rf = load_room(store_of(request), room_id)
    return Response(
        to_json_bytes(dump_room_file(rf)),
        media_type="application/json",
        headers={"Content-Disposition": f'attachment; filename="{room_id}.leafcast.json"'},
    )
