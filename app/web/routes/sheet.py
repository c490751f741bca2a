"""The layout sheet's plan for CAD: ``GET /api/rooms/{room_id}/plan.dxf`` (every tier, or ``?tier=n``)."""

from __future__ import annotations

import re

from fastapi import APIRouter, Query, Request
from fastapi.responses import Response

from app.room.roomfile import Problem
from app.service.dxf_export import plan_dxf, tier_count
from app.web.deps import load_room, store_of
from app.web.errors import ERRORS, ApiError

router = APIRouter(tags=["sheet"])


def dxf_filename(room_name: str, tier: int | None) -> str:
    stem = re.sub(r"[^A-Za-z0-9]+", "-", room_name).strip("-").lower() or "room"
    return f"{stem}-plan" + (f"-tier-{tier}" if tier else "") + ".dxf"


@router.get(
    "/api/rooms/{room_id}/plan.dxf",
    responses={
        **ERRORS,
        200: {
            "content": {"application/dxf": {"schema": {"type": "string"}}},
            "description": "A DXF drawing (AutoCAD R2010).",
        },
    },
    response_class=Response,
    summary="The sheet's dimensioned plan as DXF: one layer per tier and per circuit, in the room's units",
)
def plan_as_dxf(
    request: Request, room_id: str, tier: int | None = Query(default=None, ge=1, le=1000, description="1 = lowest tier")
) -> Response:
    rf = load_room(store_of(request), room_id)
    n = tier_count(rf.room)
    if tier is not None and tier > n:
        raise ApiError(422, "bad_query", f"tier: this room has {n} tier(s)", [Problem("tier", f"must be 1-{n}")])
    body = plan_dxf(rf.room, tier)
    name = dxf_filename(rf.room.name, tier)
    return Response(
        body, media_type="application/dxf", headers={"Content-Disposition": f'attachment; filename="{name}"'}
    )
