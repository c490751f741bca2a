"""Footprints of fixtures for the editor's drag preview (see :mod:`app.service.footprints`)."""

from __future__ import annotations

from fastapi import APIRouter, Query, Request
from starlette.concurrency import run_in_threadpool

from app.service.footprints import footprints
from app.service.results_library import Footprint
from app.web.bodies import ROOM_BODY, room_from_body
from app.web.errors import ERRORS

router = APIRouter(tags=["analysis"])


@router.post(
    "/api/footprints",
    responses=ERRORS,
    openapi_extra=ROOM_BODY,
    summary="Open-air direct PPFD of fixtures around their centres, for composing a drag preview",
)
async def fixture_footprints(
    request: Request, fixture: list[str] = Query(default=[], description="fixture ids", max_length=50)
) -> list[Footprint]:
    rf = await room_from_body(request)
    return await run_in_threadpool(footprints, rf.room, fixture)
