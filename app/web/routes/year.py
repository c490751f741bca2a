"""Over the cycle and the year: a zone's grow cycle by week, greenhouse months, tariff placement and payback."""

from __future__ import annotations

from fastapi import APIRouter, Request
from fastapi.responses import HTMLResponse

from app.service.results_year import YearView
from app.service.year import year_view
from app.web.deps import load_room, render, store_of
from app.web.errors import ERRORS

router = APIRouter()


@router.get("/rooms/{room_id}/year", response_class=HTMLResponse, include_in_schema=False)
def year_page(request: Request, room_id: str, format: str | None = None):
    rf = load_room(store_of(request), room_id)
    return render(request, "year.html", year_view(room_id, rf), format)


@router.get(
    "/api/rooms/{room_id}/year",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["year"],
    summary="Grow cycle by week, greenhouse months, tariff placement and payback of a room",
)
def year_data(request: Request, room_id: str) -> YearView:
    return year_view(room_id, load_room(store_of(request), room_id))
