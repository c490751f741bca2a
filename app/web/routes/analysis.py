"""Analysis: a room's maps, figures and warnings; a posted room analysed without saving; grid and map exports."""

from __future__ import annotations

import asyncio
import threading
from typing import Any

from fastapi import APIRouter, Query, Request
from fastapi.responses import Response
from starlette.concurrency import run_in_threadpool

from app.room.roomfile import Problem
from app.service.analysis import Region
from app.service.drawings import heatmap_svg
from app.service.exports import grid_csv
from app.service.results import Analysis
from app.web.bodies import ROOM_BODY, room_from_body
from app.web.deps import analysed, load_room, store_of
from app.web.errors import ERRORS, ApiError, not_found

router = APIRouter(tags=["analysis"])
DISCONNECT_POLL_S = 0.5  # how often a running posted analysis checks that its client is still there


@router.get(
    "/api/rooms/{room_id}/analysis",
    response_model=Analysis,
    response_model_exclude_unset=True,
    responses=ERRORS,
    summary="PPFD/DLI maps, coverage, energy, circuits and warnings",
)
def room_analysis(request: Request, room_id: str, budget: bool = False, grids: bool = True):
    return analysed(load_room(store_of(request), room_id), request=request, with_budget=budget, include_grids=grids)


@router.post(
    "/api/analyze",
    response_model=Analysis,
    response_model_exclude_unset=True,
    responses=ERRORS,
    openapi_extra=ROOM_BODY,
    summary="Analyse a posted room file without saving it (live editing)",
)
async def analyze_posted(
    request: Request,
    budget: bool = False,
    region: list[str] = Query(default=[], description="name,x_m,y_m,width_m,length_m"),
):
    rf = await room_from_body(request)
    regions = parse_regions(region)
    # CPU-bound: off the event loop, so other requests keep answering; stopped if the client goes away.
    abandon = threading.Event()
    work = asyncio.ensure_future(
        run_in_threadpool(analysed, rf, request=request, abandon=abandon, with_budget=budget, regions=regions)
    )
    while not work.done():
        await asyncio.wait({work}, timeout=DISCONNECT_POLL_S)
        if not work.done() and await request.is_disconnected():
            abandon.set()
    return await work


def _zone_of(result: dict[str, Any], room_id: str, zone_id: str) -> dict[str, Any]:
    zone = next((z for z in result["zones"] if z["id"] == zone_id), None)
    if zone is None:
        raise not_found(f"no zone '{zone_id}' in room '{room_id}'")
    return zone


class CSVResponse(Response):
    media_type = "text/csv"


class SVGResponse(Response):
    media_type = "image/svg+xml"


TEXT = {"schema": {"type": "string"}}


@router.get(
    "/api/rooms/{room_id}/zones/{zone_id}/grid.csv",
    response_class=CSVResponse,
    responses={
        **ERRORS,
        200: {
            "description": "zone_id, x_m, y_m, PPFD and DLI of every grid point (long format)",
            "content": {"text/csv": TEXT},
        },
    },
    summary="A zone's PPFD and DLI grid as CSV",
)
def zone_csv(request: Request, room_id: str, zone_id: str) -> CSVResponse:
    zone = _zone_of(analysed(load_room(store_of(request), room_id), request=request), room_id, zone_id)
    return CSVResponse(
        grid_csv(zone),
        headers={"Content-Disposition": f'attachment; filename="{room_id}-{zone_id}.csv"'},
    )


@router.get(
    "/api/rooms/{room_id}/zones/{zone_id}/map.svg",
    response_class=SVGResponse,
    responses={**ERRORS, 200: {"description": "The zone's PPFD or DLI heatmap", "content": {"image/svg+xml": TEXT}}},
    summary="A zone's heatmap as SVG",
)
def zone_svg(
    request: Request, room_id: str, zone_id: str, quantity: str = Query("ppfd", pattern="^(ppfd|dli)$")
) -> SVGResponse:
    rf = load_room(store_of(request), room_id)
    zone = _zone_of(analysed(rf, request=request), room_id, zone_id)
    return SVGResponse(
        heatmap_svg(zone, rf.room.display_units, quantity),
        headers={"Content-Disposition": f'attachment; filename="{room_id}-{zone_id}-{quantity}.svg"'},
    )


def parse_regions(specs: list[str]) -> tuple[Region, ...]:
    """Drawn areas from ``name,x_m,y_m,width_m,length_m`` strings, each refused with its index and the reason."""
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
