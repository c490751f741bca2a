"""Page data: one dictionary per page, rendered by a template or returned as JSON."""

from __future__ import annotations

import datetime as dt
import math
from typing import Any

from app import __version__
from app.engine.compute import SceneError
from app.room.library import crop_library, crops_for, fixture_library
from app.room.models import WALL_FINISHES, RoomFile
from app.room.roomfile import dump_room_file
from app.room.storage import RoomStore
from app.room.units import format_length
from app.service import sheet_data
from app.service.colours import colour_scale
from app.service.hanging import grid_words
from app.service.meter import sheet_summary as meter_sheet_summary
from app.service.verdict import allowance_info


def room_list(store: RoomStore) -> dict[str, Any]:
    """The room list, and what the new-room dialog offers (crops with their stages, library fixture types)."""
    return {
        "title": "Rooms",
        "rooms": [s.__dict__ for s in store.list()],
        "crops": [
            {"id": c.id, "name": c.name, "daylength": c.daylength, "stages": list(c.stages)}
            for c in crop_library().values()
        ],
        "fixture_library": [t.model_dump(mode="json") for t in fixture_library().values()],
        "version": __version__,
    }


def editor(room_id: str, room_file: RoomFile, analysis: dict[str, Any]) -> dict[str, Any]:
    return {
        "title": room_file.room.name,
        "room_id": room_id,
        "room_file": dump_room_file(room_file),
        "analysis": analysis,
        "fixture_library": [t.model_dump(mode="json") for t in fixture_library().values()],
        "crops": {cid: c.model_dump(mode="json") for cid, c in crops_for(room_file).items()},
        "wall_finishes": {k: v.model_dump(mode="json") for k, v in WALL_FINISHES.items()},
        "colour_scale": colour_scale(),
        "version": __version__,
    }


def cycle_tables(room_file: RoomFile) -> list[dict[str, Any]]:
    """Each zone's grow cycle as a table for the sheet (a zone whose cycle cannot be computed says why)."""
    from app.service.cycle import cycle_report, schedule_table

    out = []
    for z in room_file.room.zones:
        if getattr(z, "cycle", None) is None:
            continue
        try:
            out.append(schedule_table(cycle_report(room_file, z), room_file.room.display_units))
        except (SceneError, ValueError) as exc:
            out.append({"title": f"{z.name}: grow cycle", "problem": str(exc), "columns": [], "rows": []})
    return out


def sheet(room_id: str, room_file: RoomFile, analysis: dict[str, Any], paper: str) -> dict[str, Any]:
    room = room_file.room
    u = room.display_units
    layout, tier_list = sheet_data.tier_sections(room, analysis)
    return {
        "title": f"Layout sheet: {room.name}",
        "room_id": room_id,
        "paper": "a4" if paper.lower() == "a4" else "letter",
        "date": dt.date.today().isoformat(),
        "revision": room_file.revision,
        "units": u,
        "version": __version__,
        "room": {
            "name": room.name,
            "size": f"{format_length(room.width_m, u)} × {format_length(room.length_m, u)}, ceiling "
            f"{format_length(room.height_m, u)}",
            "walls": sheet_data.walls_text(room),
            "entry": f"{room.entry.label}, {room.entry.side} wall",
            "voltage": f"{room.schedule.supply_voltage_v:g} V",
            "hanging_grid": grid_words(room, u),
        },
        "definitions": sheet_data.DEFINITIONS,
        "tier_layout": layout,
        "tiers": tier_list,
        "colour_scale": sheet_data.colour_legend(analysis),
        "fixtures": sheet_data.fixtures_to_hang(room),
        "bill_of_materials": sheet_data.bill_of_materials(room),
        "circuits": sheet_data.circuit_loads(room, analysis),
        "zones": sheet_data.zone_rows(room, analysis),
        "energy": sheet_data.energy_rows(analysis),
        "warnings": sheet_data.sheet_warnings(analysis, u),
        "cautions": analysis["cautions"],
        "dxf_url": f"/api/rooms/{room_id}/plan.dxf",
        "output_basis": analysis.get("output_basis"),
        "meter": meter_sheet_summary(room_file),
        "schedules": cycle_tables(room_file),
        "zones_by_id": {z.id: {"name": z.name} for z in room.zones},
    }


def new_fixture(store: RoomStore) -> dict[str, Any]:
    return {"title": "New fixture type", "rooms": [r.__dict__ for r in store.list()], "version": __version__}


def planner(room_id: str, room_file: RoomFile) -> dict[str, Any]:
    room = room_file.room
    seen, types = set(), []
    for t in [*room.fixture_types, *fixture_library().values()]:
        if t.id not in seen:
            seen.add(t.id)
            types.append(
                {
                    "id": t.id,
                    "name": t.name,
                    "ppf_umol_s": t.ppf_umol_s,
                    "power_w": t.power_w,
                    "price": t.price,
                    "in_room": any(f.type_id == t.id for f in room.fixtures),
                }
            )
    return {
        "title": f"Planner: {room.name}",
        "room_id": room_id,
        "room_file": dump_room_file(room_file),
        "fixture_types": types,
        "zones": [{"id": z.id, "name": z.name} for z in room.zones],
        "verdict": allowance_info(room),
        "currency": room.schedule.currency,
        "version": __version__,
    }


# Step of the compare page's contour lines and range rounding: multiples of 5, 10, 25, 50 or 100 µmol m⁻² s⁻¹.
_PPFD_STEPS = (5, 10, 25, 50, 100, 250, 500)


def compare(rooms: list[tuple[str, RoomFile, dict[str, Any]]]) -> dict[str, Any]:
    """Two rooms (or variants) side by side: per-zone figures, energy, cost, heat; both maps on one colour range."""
    top = max((z["target"]["ppfd_stress"] for _, _, a in rooms for z in a["zones"]), default=1000.0)
    step = next((s for s in _PPFD_STEPS if top / s <= 8), _PPFD_STEPS[-1])
    columns = []
    for room_id, rf, a in rooms:
        columns.append(
            {
                "id": room_id,
                "name": rf.room.name,
                "revision": rf.revision,
                "units": rf.room.display_units,
                "zones": [
                    {
                        "name": z["name"],
                        "crop": f"{z['crop_name']}, {z['stage']}",
                        "ppfd": z["ppfd"],
                        "dli": z["dli"],
                        "target": z["target"],
                        "share_in_band": z["share_in_band"],
                        "dark_m2": z["dark"]["area_m2"],
                        "hot_m2": z["hot"]["area_m2"],
                        "grid": {k: z["grid"][k] for k in ("x_m", "y_m", "ppfd")} if z.get("grid") else None,
                    }
                    for z in a["zones"]
                ],
                "energy": a["energy"],
                "heat": a["heat"],
            }
        )
    return {
        "title": f"Compare: {columns[0]['name']} and {columns[1]['name']}",
        "rooms": columns,
        "range": {"zmin": 0, "zmax": step * math.ceil(top / step), "step": step},
        "colour_scale": colour_scale(),
        "version": __version__,
    }
