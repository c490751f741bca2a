"""Whole-room checks of the cycle, greenhouse and payback fields (each problem with its field path)."""

from __future__ import annotations

from app.room import layout
from app.room.library import crops_for, fixture_library
from app.room.models import CanopyZone, Room, RoomFile

MIN_CLEARANCE_M = 0.01  # the same 1 cm the fixture checks use


def hung_over(room: Room, zone: CanopyZone) -> list:
    """Fixtures that light this zone (the room's one layout rule), the ones its cycle moves."""
    return layout.fixtures_lighting(room.zones, room.fixtures, zone.id)


def _cycle_problems(room_file: RoomFile, i: int, zone: CanopyZone) -> list[tuple[str, str]]:
    room = room_file.room
    crop = crops_for(room_file).get(zone.crop_id)
    over = hung_over(room, zone)
    lowest_hung = min((f.hanging_height_m for f in over), default=None)
    out = []
    steps = zone.cycle.steps
    for k, s in enumerate(steps):
        at = f"room.zones[{i}].cycle.steps[{k}]"
        if crop is not None and s.stage not in crop.stages:
            out.append((f"{at}.stage", f"crop '{crop.id}' has no '{s.stage}' stage; it has {sorted(crop.stages)}"))
        canopy = zone.canopy_height_m if s.canopy_height_m is None else s.canopy_height_m
        if canopy >= room.height_m:
            out.append((f"{at}.canopy_height_m", f"canopy at {canopy:g} m is not below the ceiling"))
        if s.fixture_height_m is not None:
            if s.fixture_height_m > room.height_m:
                out.append((f"{at}.fixture_height_m", f"{s.fixture_height_m:g} m is above the ceiling"))
            if s.fixture_height_m < canopy + MIN_CLEARANCE_M:
                out.append((f"{at}.fixture_height_m", f"fixtures at {s.fixture_height_m:g} m would be in the canopy"))
        elif lowest_hung is not None and lowest_hung < canopy + MIN_CLEARANCE_M:
            out.append(
                (
                    f"{at}.canopy_height_m",
                    f"the canopy at {canopy:g} m reaches the fixtures hung at {lowest_hung:g} m: "
                    "set a fixture height for this step",
                )
            )
        if s.ramp and k + 1 < len(steps):
            nxt = steps[k + 1]
            for name in ("canopy_height_m", "fixture_height_m", "dimming_pct"):
                if (getattr(s, name) is None) != (getattr(nxt, name) is None):
                    out.append((f"{at}.{name}", "a ramp needs a value at both ends (this step and the next)"))
    return out


def year_problems(room_file: RoomFile) -> list[tuple[str, str]]:
    """(field path, reason) for each problem in the optional cycle, greenhouse and payback fields."""
    room = room_file.room
    out = []
    for i, z in enumerate(room.zones):
        if z.cycle is not None:
            out += _cycle_problems(room_file, i, z)
        if z.greenhouse is not None and z.greenhouse.glazing == "custom" and z.greenhouse.transmission is None:
            out.append((f"room.zones[{i}].greenhouse.transmission", "a custom glazing needs its transmission"))
    plan = room.payback
    if plan is not None:
        types = {t.id for t in room.fixture_types}
        if plan.variant_type_id not in types and plan.variant_type_id not in fixture_library():
            out.append(("room.payback.variant_type_id", f"unknown fixture type '{plan.variant_type_id}'"))
        if plan.replace_type_id is not None and plan.replace_type_id not in types:
            out.append(("room.payback.replace_type_id", f"the room has no fixture type '{plan.replace_type_id}'"))
    return out
