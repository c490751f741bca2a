"""A proposal as a room file: each planned zone's fixtures replaced by its layout, named like the room's own,
spread over the circuits so that each stays within its continuous limit at full output."""

from __future__ import annotations

import re
from collections import Counter

from app.engine import electrical as elec
from app.room import layout
from app.room.library import fixture_library
from app.room.models import Fixture, FixtureType, Room, RoomFile
from app.service.planner.options import ZoneLayout


class CircuitsFull(ValueError):
    """No circuit can take another fixture at full output."""


def name_prefix(room: Room) -> str:
    """The letters the room's own fixtures start with (F for F1, F2), or F."""
    heads = Counter(m.group(1) for f in room.fixtures if (m := re.fullmatch(r"([A-Za-z]+)(\d+)", f.id)))
    return heads.most_common(1)[0][0] if heads else "F"


def next_names(room: Room, n: int) -> list[str]:
    """n short names continuing the room's numbering: F3, F4, ... after F1 and F2."""
    prefix = name_prefix(room)
    used = {f.id for f in room.fixtures}
    numbers = [int(m.group(1)) for f in room.fixtures if (m := re.fullmatch(re.escape(prefix) + r"(\d+)", f.id))]
    k = max(numbers, default=0)
    out = []
    while len(out) < n:
        k += 1
        if f"{prefix}{k}" not in used:
            out.append(f"{prefix}{k}")
    return out


def full_load_w(room: Room, fixtures: list[Fixture], types: dict[str, FixtureType]) -> dict[str, float]:
    """Each circuit's load with every fixture at 100 %: what the dimmer can reach, so what the breaker must carry."""
    load = {c.name: 0.0 for c in room.circuits}
    for f in fixtures:
        if f.on:
            load[f.circuit] = load.get(f.circuit, 0.0) + types[f.type_id].power_w
    return load


def apply_layouts(rf: RoomFile, layouts: list[ZoneLayout]) -> RoomFile:
    """The room with each planned zone's fixtures replaced by its layout (raises CircuitsFull)."""
    room = rf.room
    zones = {z.id: z for z in room.zones}
    lib = fixture_library()
    types = {t.id: t for t in room.fixture_types}
    planned = {lay.zone_id for lay in layouts}
    lit = layout.fixture_zones(room.zones, room.fixtures)
    keep = [f for f in room.fixtures if lit[f.id] not in planned]
    limits = {
        c.name: float(elec.continuous_limit_a(c.breaker_a)) * room.schedule.supply_voltage_v for c in room.circuits
    }
    load = full_load_w(room, keep, types)
    names = iter(next_names(room, sum(lay.count for lay in layouts)))
    fixtures = list(keep)
    for lay in layouts:
        t = types.get(lay.type_id) or lib[lay.type_id]
        types[t.id] = t
        z = zones[lay.zone_id]
        for x, y in lay.positions:
            circuit = next((c for c in limits if load[c] + t.power_w <= limits[c] + 1e-9), None)
            if circuit is None:
                raise CircuitsFull(
                    f"the circuits cannot carry another {t.name} at full output ({t.power_w:g} W): "
                    "an electrician would need to add a circuit"
                )
            load[circuit] += t.power_w
            fixtures.append(
                Fixture(
                    id=next(names),
                    type_id=t.id,
                    x_m=x,
                    y_m=y,
                    hanging_height_m=round(z.canopy_height_m + lay.above_canopy_m, 4),
                    rotation_deg=lay.rotation_deg,
                    dimming_pct=round(100 * lay.dimming, 1),
                    circuit=circuit,
                )
            )
    used = {f.type_id for f in fixtures} | {t.id for t in room.fixture_types}
    new_room = room.model_copy(
        update={"fixtures": fixtures, "fixture_types": [t for tid, t in types.items() if tid in used]}
    )
    return rf.model_copy(update={"room": new_room})
