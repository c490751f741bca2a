"""Checks that need the whole room file: unique ids; the entry, the hanging grid's origin, zones, obstacles and
fixtures inside the room and below the ceiling; known crops, stages, fixture types and circuits; fixtures clear of
canopies and obstacles; readings inside their zone; the year plan; the canopy grid within its limit. Every problem
is returned with its field path."""

from __future__ import annotations

import math
from collections import Counter

from app.room import layout, limits
from app.room.library import crops_for
from app.room.models import Fixture, Room, RoomFile
from app.room.problems import Problem
from app.room.year_checks import year_problems

_EDGE_TOLERANCE_M = 0.001  # a fixture's edge may touch a wall


def consistency_problems(room_file: RoomFile) -> list[Problem]:
    """Checks that need the whole room. Returns every problem found."""
    room = room_file.room
    circuits = [c.name for c in room.circuits]
    p: list[Problem] = []
    p += _identity_problems(room, circuits)
    p += _entry_problems(room)
    p += _hanging_grid_problems(room)
    p += _zone_problems(room_file)
    p += _obstacle_problems(room)
    p += _fixture_problems(room, circuits)
    p += reading_problems(room)
    p += [Problem(field, reason) for field, reason in year_problems(room_file)]
    p += _grid_size_problems(room)
    return p


def grid_point_count(room: Room) -> int:
    s = room.grid_spacing_m
    return sum((math.floor(z.width_m / s) + 1) * (math.floor(z.length_m / s) + 1) for z in room.zones)


def _duplicates(prefix: str, ids: list[str]) -> list[Problem]:
    counts = Counter(ids)
    return [
        Problem(f"{prefix}[{i}].id", f"duplicate id '{v}'")
        for i, v in enumerate(ids)
        if counts[v] > 1 and ids.index(v) != i
    ]


def _identity_problems(room: Room, circuits: list[str]) -> list[Problem]:
    """Ids and circuit names are unique; each open side is listed once."""
    p: list[Problem] = []
    p += _duplicates("room.zones", [z.id for z in room.zones])
    p += _duplicates("room.fixtures", [f.id for f in room.fixtures])
    p += _duplicates("room.fixture_types", [t.id for t in room.fixture_types])
    p += _duplicates("room.obstacles", [o.id for o in room.obstacles])
    for i, c in enumerate(circuits):
        if circuits.index(c) != i:
            p.append(Problem(f"room.circuits[{i}].name", f"duplicate circuit name '{c}'"))
    if len(set(room.open_sides)) != len(room.open_sides):
        p.append(Problem("room.open_sides", "each side may be listed once"))
    return p


def _entry_problems(room: Room) -> list[Problem]:
    """The entry must fit on its wall."""
    e = room.entry
    wall = room.width_m if e.side in ("front", "back") else room.length_m
    out = []
    if e.width_m is not None and e.width_m > wall + _EDGE_TOLERANCE_M:
        out.append(Problem("room.entry.width_m", f"{e.width_m:g} m is wider than the {e.side} wall ({wall:g} m)"))
    if e.offset_m is not None and e.offset_m > wall + _EDGE_TOLERANCE_M:
        out.append(
            Problem("room.entry.offset_m", f"{e.offset_m:g} m is past the end of the {e.side} wall ({wall:g} m)")
        )
    return out


def _hanging_grid_problems(room: Room) -> list[Problem]:
    """The hanging grid's origin must lie inside the room."""
    g = room.hanging_grid
    if g is None:
        return []
    out = []
    for name, value, side, wall in (
        ("origin_x_m", g.origin_x_m, "width", room.width_m),
        ("origin_y_m", g.origin_y_m, "length", room.length_m),
    ):
        if value > wall + _EDGE_TOLERANCE_M:
            out.append(
                Problem(f"room.hanging_grid.{name}", f"{value:g} m is outside the room (its {side} is {wall:g} m)")
            )
    return out


def _zone_problems(room_file: RoomFile) -> list[Problem]:
    """Zones lie inside the room, their canopy below the ceiling, with a known crop and stage."""
    room = room_file.room
    W, L, H = room.width_m, room.length_m, room.height_m
    tol = _EDGE_TOLERANCE_M
    crops = crops_for(room_file)
    p: list[Problem] = []
    for i, z in enumerate(room.zones):
        at = f"room.zones[{i}]"
        if z.x_m + z.width_m > W + tol or z.y_m + z.length_m > L + tol:
            p.append(Problem(at, f"zone '{z.id}' reaches outside the room ({W:g} x {L:g} m)"))
        if z.canopy_height_m >= H:
            p.append(
                Problem(
                    f"{at}.canopy_height_m", f"canopy at {z.canopy_height_m:g} m is not below the ceiling ({H:g} m)"
                )
            )
        crop = crops.get(z.crop_id)
        if crop is None:
            p.append(
                Problem(f"{at}.crop_id", f"unknown crop '{z.crop_id}' (not in the library or the file's custom crops)")
            )
        elif z.stage not in crop.stages:
            p.append(
                Problem(f"{at}.stage", f"crop '{z.crop_id}' has no '{z.stage}' stage; it has {sorted(crop.stages)}")
            )
    return p


def _obstacle_problems(room: Room) -> list[Problem]:
    """Obstacles lie inside the room."""
    W, L, H = room.width_m, room.length_m, room.height_m
    tol = _EDGE_TOLERANCE_M
    p: list[Problem] = []
    for i, o in enumerate(room.obstacles):
        at = f"room.obstacles[{i}]"
        if o.x_m + o.width_m > W + tol or o.y_m + o.length_m > L + tol or o.z_m + o.height_m > H + tol:
            p.append(Problem(at, f"obstacle '{o.id}' reaches outside the room"))
    return p


def _fixture_problems(room: Room, circuits: list[str]) -> list[Problem]:
    """Fixtures have an embedded type and a known circuit, lie inside the room below the ceiling, hang clear of
    the canopies under them and outside every obstacle."""
    W, L, H = room.width_m, room.length_m, room.height_m
    tol = _EDGE_TOLERANCE_M
    types = {t.id: t for t in room.fixture_types}
    p: list[Problem] = []
    for i, f in enumerate(room.fixtures):
        at = f"room.fixtures[{i}]"
        t = types.get(f.type_id)
        if t is None:
            p.append(
                Problem(
                    f"{at}.type_id", f"unknown fixture type '{f.type_id}': the file must embed it in room.fixture_types"
                )
            )
            continue
        x0, y0, x1, y1 = layout.fixture_extent(f, t)
        if x0 < -tol or x1 > W + tol or y0 < -tol or y1 > L + tol:
            p.append(Problem(at, f"fixture '{f.id}' is outside the room: its footprint reaches beyond the walls"))
        if f.hanging_height_m > H + tol:
            p.append(Problem(f"{at}.hanging_height_m", f"{f.hanging_height_m:g} m is above the ceiling ({H:g} m)"))
        if f.circuit not in circuits:
            p.append(Problem(f"{at}.circuit", f"unknown circuit '{f.circuit}'; the room has {circuits}"))
        p += _canopy_clearance_problems(room, f, at)
        for o in room.obstacles:
            if (
                o.x_m < f.x_m < o.x_m + o.width_m
                and o.y_m < f.y_m < o.y_m + o.length_m
                and o.z_m < f.hanging_height_m < o.z_m + o.height_m
            ):
                p.append(Problem(at, f"fixture '{f.id}' is inside obstacle '{o.id}'"))
    return p


def _canopy_clearance_problems(room: Room, f: Fixture, at: str) -> list[Problem]:
    """A fixture hangs at least MIN_FIXTURE_CLEARANCE_M above the canopy it lights and never in a canopy."""
    p: list[Problem] = []
    lit = layout.zone_lit_by(room.zones, f)
    if lit is not None and f.hanging_height_m < lit.canopy_height_m + layout.MIN_FIXTURE_CLEARANCE_M:
        p.append(
            Problem(f"{at}.hanging_height_m", f"fixture '{f.id}' is less than 1 cm above the canopy of '{lit.id}'")
        )
    for z in layout.zones_under(room.zones, f):
        if abs(f.hanging_height_m - z.canopy_height_m) < 1e-9:
            p.append(Problem(f"{at}.hanging_height_m", f"fixture '{f.id}' sits in the canopy of '{z.id}'"))
    return p


def _grid_size_problems(room: Room) -> list[Problem]:
    points = grid_point_count(room)
    if points > limits.MAX_GRID_POINTS:
        return [
            Problem(
                "room.grid_spacing_m",
                f"the canopy grid would have {points:,} points; the limit is "
                f"{limits.MAX_GRID_POINTS:,}: use a coarser spacing",
            )
        ]
    return []


def reading_problems(room: Room) -> list[Problem]:
    """Readings name a zone of the room and lie inside it (a grid must fit, every point too)."""
    p = _duplicates("room.readings", [r.id for r in room.readings])
    zones = {z.id: z for z in room.zones}
    tol = _EDGE_TOLERANCE_M
    for i, r in enumerate(room.readings):
        at = f"room.readings[{i}]"
        z = zones.get(r.zone_id)
        if z is None:
            p.append(
                Problem(
                    f"{at}.zone_id",
                    f"unknown zone '{r.zone_id}'; the room has {sorted(zones)} "
                    f"(delete reading set '{r.id}' on the meter page, or keep the zone)",
                )
            )
            continue
        x0, x1, y0, y1 = z.x_m - tol, z.x_m + z.width_m + tol, z.y_m - tol, z.y_m + z.length_m + tol
        if r.grid is not None:
            g = r.grid
            rows, cols = len(g.values), len(g.values[0])
            far_x = g.origin_x_m + (cols - 1) * g.spacing_x_m
            far_y = g.origin_y_m + (rows - 1) * g.spacing_y_m
            if not (x0 <= g.origin_x_m and far_x <= x1 and y0 <= g.origin_y_m and far_y <= y1):
                p.append(
                    Problem(
                        f"{at}.grid",
                        f"the grid of {rows} rows x {cols} columns does not fit zone '{z.id}': it spans "
                        f"x {g.origin_x_m:.3g}-{far_x:.3g} m, y {g.origin_y_m:.3g}-{far_y:.3g} m, the zone "
                        f"x {z.x_m:.3g}-{z.x_m + z.width_m:.3g} m, y {z.y_m:.3g}-{z.y_m + z.length_m:.3g} m "
                        f"(fix reading set '{r.id}' on the meter page, or move the zone back)",
                    )
                )
            if all(v is None for row in g.values for v in row):
                p.append(Problem(f"{at}.grid.values", "the grid holds no reading"))
        for j, pt in enumerate(r.points):
            if not (x0 <= pt.x_m <= x1 and y0 <= pt.y_m <= y1):
                p.append(
                    Problem(
                        f"{at}.points[{j}]",
                        f"reading at ({pt.x_m:.3g}, {pt.y_m:.3g}) m is outside zone '{z.id}' "
                        f"(x {z.x_m:.3g}-{z.x_m + z.width_m:.3g} m, y {z.y_m:.3g}-{z.y_m + z.length_m:.3g} m; "
                        f"fix reading set '{r.id}' on the meter page, or move the zone back)",
                    )
                )
    return p
