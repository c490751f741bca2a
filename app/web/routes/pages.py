"""HTML pages (each also answers ``?format=json`` with the data it was drawn from) and plotly.js."""

from __future__ import annotations

from importlib import resources

from fastapi import APIRouter, Request
from fastapi.responses import FileResponse, HTMLResponse

from app.web import views
from app.web.deps import analysed, load_room, render, store_of
from app.web.routes.variants import renamed_redirect

router = APIRouter(include_in_schema=False)


@router.get("/", response_class=HTMLResponse)
def room_list_page(request: Request, format: str | None = None):
    return render(request, "rooms.html", views.room_list(store_of(request)), format)


@router.get("/rooms/{room_id}", response_class=HTMLResponse)
def editor_page(request: Request, room_id: str, format: str | None = None):
    if moved := renamed_redirect(request, room_id):
        return moved
    rf = load_room(store_of(request), room_id)
    return render(request, "editor.html", views.editor(room_id, rf, analysed(rf, request=request)), format)


@router.get("/rooms/{room_id}/sheet", response_class=HTMLResponse)
def sheet_page(request: Request, room_id: str, format: str | None = None, paper: str = "letter"):
    rf = load_room(store_of(request), room_id)
    return render(request, "sheet.html", views.sheet(room_id, rf, analysed(rf, request=request), paper), format)


@router.get("/rooms/{room_id}/plan", response_class=HTMLResponse)
def plan_page(request: Request, room_id: str, format: str | None = None):
    if moved := renamed_redirect(request, room_id, "/plan"):
        return moved
    rf = load_room(store_of(request), room_id)
    return render(request, "plan.html", views.planner(room_id, rf), format)


@router.get("/fixtures/new", response_class=HTMLResponse)
def new_fixture_page(request: Request, format: str | None = None):
    return render(request, "fixture_new.html", views.new_fixture(store_of(request)), format)


@router.get("/static-lib/plotly.min.js")
def plotly_js():
    path = resources.files("plotly").joinpath("package_data", "plotly.min.js")
    return FileResponse(
        str(path), media_type="application/javascript", headers={"Cache-Control": "public, max-age=86400"}
    )
