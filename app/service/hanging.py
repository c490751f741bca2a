"""The room's hanging grid (rails or hook points): its lines, a fixture centre snapped onto them, and the grid
in words for the proposals and the printed sheet.

A line along an axis sits at ``origin + k × pitch`` for every whole k that falls inside the room; an axis without
a pitch is free (a rail runs along it).
"""

from __future__ import annotations

import math

from app.room.models import Room
from app.room.units import format_length

MAX_LINES_LISTED = 12  # the sheet lists at most this many lines per axis, then says "every ... from ..."


def line_range(origin_m: float, pitch_m: float, lo_m: float, hi_m: float) -> tuple[int, int]:
    """(first k, last k) of the lines ``origin + k × pitch`` in [lo, hi]; empty when first > last."""
    return math.ceil(round((lo_m - origin_m) / pitch_m, 9)), math.floor(round((hi_m - origin_m) / pitch_m, 9))


def lines_m(origin_m: float, pitch_m: float, lo_m: float, hi_m: float, limit: int = MAX_LINES_LISTED) -> list[float]:
    """The lines in [lo, hi] (ends included), rounded to 0.1 mm: at most ``limit`` of them, from the first."""
    k0, k1 = line_range(origin_m, pitch_m, lo_m, hi_m)
    return [round(origin_m + k * pitch_m, 4) for k in range(k0, min(k1, k0 + limit - 1) + 1)]


def snap_m(value_m: float, origin_m: float, pitch_m: float | None, lo_m: float, hi_m: float) -> float | None:
    """The line nearest ``value_m`` within [lo, hi] (the value itself on a free axis), or None if no line is there."""
    if pitch_m is None:
        return value_m
    k = round((value_m - origin_m) / pitch_m)
    near = sorted((origin_m + j * pitch_m for j in (k - 1, k, k + 1)), key=lambda v: (abs(v - value_m), v))
    for v in near:
        if lo_m - 1e-9 <= v <= hi_m + 1e-9:
            return round(v, 4)
    return None


def _axis_words(origin_m: float, pitch_m: float, wall_m: float, wall: str, units: str) -> str:
    k0, k1 = line_range(origin_m, pitch_m, 0.0, wall_m)
    count = k1 - k0 + 1
    if count <= 0:
        return f"no line inside the room from the {wall} wall"
    if count > MAX_LINES_LISTED:
        first, last = (round(origin_m + k * pitch_m, 4) for k in (k0, k1))
        return (
            f"every {format_length(pitch_m, units, fine=True)} from the {wall} wall, first at "
            f"{format_length(first, units, fine=True)}, last at {format_length(last, units, fine=True)} ({count:,} lines)"
        )
    at = lines_m(origin_m, pitch_m, 0.0, wall_m)
    return f"at {', '.join(format_length(v, units, fine=True) for v in at)} from the {wall} wall"


def grid_words(room: Room, units: str | None = None) -> str | None:
    """The grid as an installer reads it: where the rails or hook lines are, measured from the walls."""
    g = room.hanging_grid
    if g is None:
        return None
    u = units or room.display_units
    name = g.label or ("Hook points" if g.pitch_x_m and g.pitch_y_m else "Rails")
    parts = []
    if g.pitch_y_m is not None:
        lead = "rails along x" if g.pitch_x_m is None else "hook rows"
        parts.append(f"{lead} {_axis_words(g.origin_y_m, g.pitch_y_m, room.length_m, 'front', u)}")
    if g.pitch_x_m is not None:
        lead = "rails along y" if g.pitch_y_m is None else "hook columns"
        parts.append(f"{lead} {_axis_words(g.origin_x_m, g.pitch_x_m, room.width_m, 'left', u)}")
    return f"{name}: {'; '.join(parts)}. Fixture centres hang on these lines."
