"""Page data: one dictionary per page, rendered by a template or returned as JSON."""

from __future__ import annotations

import datetime as dt
from typing import Any

from app import __version__
from app.room.layout import zone_lit_by
from app.room.library import crop_library, crops_for, fixture_library
from app.room.models import WALL_FINISHES, RoomFile
from app.room.roomfile import dump_room_file
from app.room.storage import RoomStore
from app.service.colours import colour_scale
from app.service.drawings import heatmap_svg, plan_svg


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


def sheet(room_id: str, room_file: RoomFile, analysis: dict[str, Any], paper: str) -> dict[str, Any]:
    room = room_file.room
    zones = {z.id: z for z in room.zones}
    fixtures = []
    types = {t.id: t for t in room.fixture_types}
    for f in room.fixtures:
        top = zone_lit_by(room.zones, f)
        fixtures.append(
            {
                "id": f.id,
                "type_name": types[f.type_id].name,
                "x_m": f.x_m,
                "y_m": f.y_m,
                "from_left_m": f.x_m,
                "from_front_m": f.y_m,
                "rotation_deg": f.rotation_deg,
                "hanging_height_m": f.hanging_height_m,
                "above_canopy_m": f.hanging_height_m - top.canopy_height_m if top else None,
                "zone_id": top.id if top else None,
                "dimming_pct": f.dimming_pct,
                "circuit": f.circuit,
                "on": f.on,
            }
        )
    schedule: dict[str, dict[str, Any]] = {}
    for f in room.fixtures:
        t = types[f.type_id]
        row = schedule.setdefault(
            t.id,
            {
                "type_name": t.name,
                "count": 0,
                "ppf_umol_s": t.ppf_umol_s,
                "power_w": t.power_w,
                "weight_kg": t.weight_kg,
                "dimming": set(),
                "circuits": set(),
                "ids": [],
            },
        )
        row["count"] += 1
        row["dimming"].add(f"{f.dimming_pct:g} %")
        row["circuits"].add(f.circuit)
        row["ids"].append(f.id)
    bom = [
        {**r, "dimming": ", ".join(sorted(r["dimming"])), "circuits": ", ".join(sorted(r["circuits"]))}
        for r in schedule.values()
    ]
    return {
        "title": f"Layout sheet: {room.name}",
        "room_id": room_id,
        "paper": "a4" if paper.lower() == "a4" else "letter",
        "date": dt.date.today().isoformat(),
        "revision": room_file.revision,
        "units": room.display_units,
        "version": __version__,
        "room_file": dump_room_file(room_file),
        "fixtures": fixtures,
        "bill_of_materials": bom,
        "zones_by_id": {k: {"name": v.name} for k, v in zones.items()},
        "analysis": analysis,
        "drawings": {
            "plan": plan_svg(room, analysis),
            "heatmaps": {z["id"]: heatmap_svg(z, room.display_units) for z in analysis["zones"]},
        },
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
                    "in_room": any(f.type_id == t.id for f in room.fixtures),
                }
            )
    return {
        "title": f"Planner: {room.name}",
        "room_id": room_id,
        "room_file": dump_room_file(room_file),
        "fixture_types": types,
        "zones": [{"id": z.id, "name": z.name} for z in room.zones],
        "version": __version__,
    }
