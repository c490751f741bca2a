"""Cautions about how the fixtures are hung: fixtures that touch or overlap at one height, a fixture against a
closed wall, a fixture resting on or in an obstacle. They reach the editor and the printed sheet with the other
warnings (one rule, computed here only).

Thresholds are Leafcast's own (common practice, no source): closer than 5 mm counts as touching, fixtures within
5 cm of height can collide.
"""

from __future__ import annotations

from typing import Any

from app.room import layout
from app.room.models import Room
from app.room.units import format_length
from app.service.notices import warn

TOUCH_GAP_M = 0.005
SAME_LEVEL_M = 0.05


def _gap_m(a: tuple[float, float, float, float], b: tuple[float, float, float, float]) -> float:
    """Separation of two plan rectangles (x0, y0, x1, y1), negative when they overlap."""
    return max(a[0] - b[2], b[0] - a[2], a[1] - b[3], b[1] - a[3])


def _wall_gap_m(room: Room, ext: tuple[float, float, float, float]) -> float:
    """Distance from the footprint to the nearest closed (not open) wall."""
    gaps = {"left": ext[0], "front": ext[1], "right": room.width_m - ext[2], "back": room.length_m - ext[3]}
    closed = [g for side, g in gaps.items() if room.finish_of(side).kind != "open"]
    return min(closed, default=float("inf"))


def layout_cautions(room: Room) -> list[dict[str, Any]]:
    types = {t.id: t for t in room.fixture_types}
    fixtures = [f for f in room.fixtures if f.type_id in types]
    ext = {f.id: layout.fixture_extent(f, types[f.type_id]) for f in fixtures}
    fine = {"fine": True}
    out: list[dict[str, Any]] = []
    for i, a in enumerate(fixtures):
        for b in fixtures[i + 1 :]:
            if abs(a.hanging_height_m - b.hanging_height_m) > SAME_LEVEL_M:
                continue
            g = _gap_m(ext[a.id], ext[b.id])
            if g < TOUCH_GAP_M:
                ea, eb = ext[a.id], ext[b.id]
                out.append(
                    warn(
                        "fixtures_touch",
                        "warning",
                        f"Fixtures {a.id} and {b.id} {'overlap' if g < 0 else 'touch'} at the same height.",
                        "Move one of them apart: fixtures cannot share the same space, and drivers need air "
                        "around them.",
                        fixture=b.id,
                        where=[min(ea[0], eb[0]), min(ea[1], eb[1]), max(ea[2], eb[2]), max(ea[3], eb[3])],
                    )
                )
        if _wall_gap_m(room, ext[a.id]) < TOUCH_GAP_M:
            out.append(
                warn(
                    "fixture_touches_wall",
                    "info",
                    f"Fixture {a.id} touches a wall (closer than {format_length(TOUCH_GAP_M, room.display_units, **fine)}).",
                    "Leave a gap for air and for hanging hardware; check the fixture's instructions for clearances.",
                    fixture=a.id,
                    where=list(ext[a.id]),
                )
            )
        for o in room.obstacles:
            ob = (o.x_m, o.y_m, o.x_m + o.width_m, o.y_m + o.length_m)
            vertical = max(o.z_m - a.hanging_height_m, a.hanging_height_m - (o.z_m + o.height_m))
            if _gap_m(ext[a.id], ob) < 0 and vertical < TOUCH_GAP_M:
                out.append(
                    warn(
                        "fixture_touches_obstacle",
                        "warning",
                        f"Fixture {a.id} touches {o.name} "
                        f"({format_length(max(vertical, 0.0), room.display_units, **fine)} apart).",
                        "Hang it lower or move it: a fixture needs air around its driver and must not rest on a shelf.",
                        fixture=a.id,
                        where=list(ext[a.id]),
                    )
                )
    return out
