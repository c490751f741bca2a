"""Rooms and their variants: duplicate as a variant, rename (the old address redirects), trash and restore,
and a page comparing two rooms side by side."""

from __future__ import annotations

from fastapi import APIRouter, Request
from fastapi.responses import HTMLResponse, RedirectResponse
from pydantic import BaseModel, Field

from app.room.storage import RoomNotFound
from app.web import views
from app.web.deps import analysed, load_room, render, store_of
from app.web.errors import ERRORS, not_found
from app.web.routes.rooms import RoomSummaryOut

router = APIRouter(tags=["rooms"])


class NameIn(BaseModel):
    name: str = Field(min_length=1, max_length=120, pattern=r"\S", description="The room's new name")


class VariantIn(BaseModel):
    name: str | None = Field(default=None, min_length=1, max_length=120, pattern=r"\S")


class MovedOut(BaseModel):
    id: str
    name: str
    revision: int


def renamed_redirect(request: Request, room_id: str, tail: str = "") -> RedirectResponse | None:
    """A permanent redirect to where a renamed room lives now, or None if the id was never renamed."""
    store = store_of(request)
    if store.exists(room_id):
        return None
    new_id = store.renamed_to(room_id)
    if new_id is None:
        return None
    query = f"?{request.url.query}" if request.url.query else ""
    return RedirectResponse(f"/rooms/{new_id}{tail}{query}", status_code=308)


@router.post(
    "/api/rooms/{room_id}/duplicate",
    status_code=201,
    response_model=MovedOut,
    responses=ERRORS,
    summary="Copy a room as a variant",
)
def duplicate_room(request: Request, room_id: str, body: VariantIn | None = None):
    store = store_of(request)
    rf = load_room(store, room_id)
    name = (body.name if body and body.name else f"{rf.room.name} (variant)").strip()[:120]
    new_id, stored = store.create(rf.model_copy(update={"room": rf.room.model_copy(update={"name": name})}))
    return {"id": new_id, "name": stored.room.name, "revision": stored.revision}


@router.post(
    "/api/rooms/{room_id}/rename",
    response_model=MovedOut,
    responses=ERRORS,
    summary="Rename a room; its id follows the name and the old address redirects",
)
def rename_room(request: Request, room_id: str, body: NameIn):
    store = store_of(request)
    load_room(store, room_id)
    new_id, stored = store.rename(room_id, body.name.strip())
    return {"id": new_id, "name": stored.room.name, "revision": stored.revision}


@router.post(
    "/api/rooms/{room_id}/trash",
    response_model=MovedOut,
    responses=ERRORS,
    summary="Move a room to the trash (restorable)",
)
def trash_room(request: Request, room_id: str):
    store = store_of(request)
    rf = load_room(store, room_id)
    store.trash(room_id)
    return {"id": room_id, "name": rf.room.name, "revision": rf.revision}


@router.get("/api/trash", response_model=list[RoomSummaryOut], summary="Rooms in the trash")
def list_trash(request: Request):
    return [s.__dict__ for s in store_of(request).trashed()]


@router.post(
    "/api/trash/{room_id}/restore",
    response_model=MovedOut,
    responses=ERRORS,
    summary="Bring a room back from the trash",
)
def restore_room(request: Request, room_id: str):
    store = store_of(request)
    try:
        new_id = store.restore(room_id)
    except RoomNotFound as exc:
        raise not_found(f"no room '{room_id}' in the trash") from exc
    rf = load_room(store, new_id)
    return {"id": new_id, "name": rf.room.name, "revision": rf.revision}


@router.get("/compare", response_class=HTMLResponse, include_in_schema=False)
def compare_page(request: Request, a: str, b: str, format: str | None = None):
    store = store_of(request)
    rooms = [(rid, load_room(store, rid)) for rid in (a, b)]
    data = views.compare([(rid, rf, analysed(rf)) for rid, rf in rooms])
    return render(request, "compare.html", data, format)
