"""Meter readings, maintained output and the fixture card: the meter page and its API."""

from __future__ import annotations

from typing import Any, Literal

from fastapi import APIRouter, Query, Request
from fastapi.responses import HTMLResponse
from pydantic import Field

from app import __version__
from app.engine.readings import OUTLIER_FACTOR
from app.room.library import fixture_library
from app.room.models import OutputAge, OutputMaintenance, ReadingSet, RoomFile
from app.room.roomfile import RoomFileError, dump_room_file
from app.room.storage import StaleRevision
from app.service import core_areas, meter
from app.service.maintained import output_basis
from app.service.meter_edits import delete_reading_set, lux_factor_presets, put_reading_set, set_output_age
from app.service.results_meter import AppliedFit, FixtureCard, ReadingsComparison, SavedRoomChange, ZoneSquares
from app.web.bodies import ApiIn
from app.web.deps import load_room, render, store_of
from app.web.errors import ERRORS, ApiError, not_found, room_error, stale_revision

router = APIRouter()

FitKind = Literal["room", "type"]


class ReadingSetIn(ApiIn):
    revision: int = Field(ge=0, description="Revision of the room this change is based on")
    reading_set: ReadingSet


class ApplyIn(ApiIn):
    revision: int = Field(ge=0)
    fit: FitKind = "room"


class OutputAgeIn(ApiIn):
    revision: int = Field(ge=0)
    output_age: OutputAge
    maintenance: dict[str, OutputMaintenance | None] = Field(
        default_factory=dict, max_length=200, description="Fixture type id -> maintenance (null clears it)"
    )


def _save(request: Request, room_id: str, change) -> dict[str, Any]:
    """Apply ``change`` (room file -> room file, validated whole) and save it, refusing a stale revision."""
    store = store_of(request)
    current = load_room(store, room_id)
    try:
        new = change(current)
    except RoomFileError as exc:
        raise room_error(exc) from exc
    try:
        stored = store.save(room_id, new)
    except StaleRevision as exc:
        raise stale_revision(exc) from exc
    return {
        "id": room_id,
        "revision": stored.revision,
        "room_file": dump_room_file(stored),
        "output_basis": output_basis(stored.room),
    }


def meter_page_data(room_id: str, room_file: RoomFile) -> dict[str, Any]:
    """The meter page: the room, its zones, the types to make a card of, lux factors and the output basis."""
    room = room_file.room
    seen, types = set(), []
    for t in [*room.fixture_types, *fixture_library().values()]:
        if t.id not in seen:
            seen.add(t.id)
            types.append({"id": t.id, "name": t.name, "in_room": any(f.type_id == t.id for f in room.fixtures)})
    return {
        "title": f"Meter: {room.name}",
        "room_id": room_id,
        "room_file": dump_room_file(room_file),
        "units": room.display_units,
        "zones": [{"id": z.id, "name": z.name} for z in room.zones],
        "fixture_types": types,
        "lux_presets": lux_factor_presets(),
        "output_basis": output_basis(room),
        "default_threshold": core_areas.DEFAULT_THRESHOLD_UMOL,
        "version": __version__,
    }


@router.get("/rooms/{room_id}/meter", response_class=HTMLResponse, include_in_schema=False)
def meter_page(request: Request, room_id: str, format: str | None = None):
    rf = load_room(store_of(request), room_id)
    return render(request, "meter.html", meter_page_data(room_id, rf), format)


@router.post(
    "/api/rooms/{room_id}/readings",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["meter"],
    summary="Add or replace a reading set",
)
def save_readings(request: Request, room_id: str, body: ReadingSetIn) -> SavedRoomChange:
    doc = body.reading_set.model_dump(mode="json")
    return _save(request, room_id, lambda rf: put_reading_set(rf, body.revision, doc))


@router.delete(
    "/api/rooms/{room_id}/readings/{set_id}",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["meter"],
    summary="Delete a reading set",
)
def delete_readings(request: Request, room_id: str, set_id: str, revision: int = Query(ge=0)) -> SavedRoomChange:
    def change(rf: RoomFile) -> RoomFile:
        try:
            return delete_reading_set(rf, revision, set_id)
        except KeyError as exc:
            raise not_found(f"no reading set '{set_id}' in this room") from exc

    return _save(request, room_id, change)


@router.get(
    "/api/rooms/{room_id}/readings/{set_id}/compare",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["meter"],
    summary="Readings against the model: residuals, RMS, worst point, outliers, fitted output factor",
)
def compare_readings(
    request: Request,
    room_id: str,
    set_id: str,
    fit: FitKind = "room",
    outlier_factor: float = Query(OUTLIER_FACTOR, gt=1, le=10),
) -> ReadingsComparison:
    rf = load_room(store_of(request), room_id)
    try:
        return meter.compare(rf, set_id, fit, outlier_factor)
    except meter.MeterError as exc:
        status = 404 if exc.field == "reading_set_id" else 422
        raise ApiError(status, "meter", str(exc)) from exc


@router.post(
    "/api/rooms/{room_id}/readings/{set_id}/apply",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["meter"],
    summary="Scale the fitted fixture types' PPF by their factor (a revision-checked save)",
)
def apply_fit(request: Request, room_id: str, set_id: str, body: ApplyIn) -> AppliedFit:
    changed: list[dict] = []

    def change(rf: RoomFile) -> RoomFile:
        try:
            new, ch = meter.apply_factors(rf.model_copy(update={"revision": body.revision}), set_id, body.fit)
        except meter.MeterError as exc:
            raise ApiError(404 if exc.field == "reading_set_id" else 422, "meter", str(exc)) from exc
        changed.extend(ch)
        return new

    out = _save(request, room_id, change)
    out["changed"] = changed
    return out


@router.post(
    "/api/rooms/{room_id}/output-age",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["meter"],
    summary="The fixtures' hours in service, dirt factor, shown age and each type's output maintenance",
)
def save_output_age(request: Request, room_id: str, body: OutputAgeIn) -> SavedRoomChange:
    age = body.output_age.model_dump(mode="json")
    maint = {k: (v.model_dump(mode="json") if v is not None else None) for k, v in body.maintenance.items()}

    def change(rf: RoomFile) -> RoomFile:
        try:
            return set_output_age(rf, body.revision, age, maint)
        except KeyError as exc:
            raise ApiError(
                422, "unknown_fixture_type", f"maintenance: no fixture type '{exc.args[0]}' in this room"
            ) from exc

    return _save(request, room_id, change)


@router.get(
    "/api/fixture-card",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["meter"],
    summary="Averages over nested squares under one fixture in open air",
)
def fixture_card(
    request: Request,
    type_id: str = Query(max_length=40),
    height_m: float = Query(gt=0.02, le=5, description="Height of the emitting face above the canopy [m]"),
    room_id: str | None = Query(default=None, max_length=60, description="Look the type up in this room first"),
    threshold_umol: float = Query(core_areas.DEFAULT_THRESHOLD_UMOL, gt=0, le=3000),
    dimming_pct: float = Query(100.0, ge=10, le=100),
    units: Literal["imperial", "metric"] | None = None,
) -> FixtureCard:
    types = dict(fixture_library())
    display = units or "imperial"
    if room_id:
        rf = load_room(store_of(request), room_id)
        types.update({t.id: t for t in rf.room.fixture_types})
        display = units or rf.room.display_units
    t = types.get(type_id)
    if t is None:
        raise not_found(f"no fixture type '{type_id}' in the library{' or the room' if room_id else ''}")
    return core_areas.fixture_card(t, height_m, display, threshold_umol, dimming_pct)


@router.get(
    "/api/rooms/{room_id}/zones/{zone_id}/squares",
    response_model_exclude_unset=True,
    responses=ERRORS,
    tags=["meter"],
    summary="Averages over nested squares centred at a spot of a zone's canopy map",
)
def zone_squares(
    request: Request,
    room_id: str,
    zone_id: str,
    x_m: float = Query(ge=0, le=300),
    y_m: float = Query(ge=0, le=300),
    threshold_umol: float = Query(core_areas.DEFAULT_THRESHOLD_UMOL, gt=0, le=3000),
) -> ZoneSquares:
    rf = load_room(store_of(request), room_id)
    room = rf.room
    zones = [z.id for z in room.zones]
    if zone_id not in zones:
        raise not_found(f"no zone '{zone_id}' in this room; it has {zones}")
    z = room.zones[zones.index(zone_id)]
    if not (z.x_m <= x_m <= z.x_m + z.width_m and z.y_m <= y_m <= z.y_m + z.length_m):
        raise ApiError(422, "outside_zone", f"x_m, y_m: ({x_m:g}, {y_m:g}) m is outside zone '{zone_id}'")
    lights = meter.zone_light(rf, zone_id)
    rows = core_areas.zone_squares(lights.grid, lights.ppfd.astype(float), x_m, y_m, room.display_units, threshold_umol)
    basis = output_basis(room)
    return {
        "zone_id": zone_id,
        "x_m": x_m,
        "y_m": y_m,
        "threshold_umol": threshold_umol,
        "squares": rows,
        "basis": f"the room's canopy map, {basis['words']}; squares clipped to the zone",
    }
