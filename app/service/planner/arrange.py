"""Where fixtures can hang over a zone: even or edge-weighted rows and columns, straight or staggered, with the
least gap between fixtures and to the walls, inside the room and clear of obstacles."""

from __future__ import annotations

import math

from app.room.layout import rotated_half_extent_m
from app.room.models import CanopyZone, FixtureType, Room

EDGE_MARGIN = 0.35  # edge-weighted arrays put the outer centres at 0.35 of a cell from the zone edge (0.5 even)
POSITION_STEP_M = 0.005  # positions are given to the half centimetre


def half_extent(t: FixtureType, rotation_deg: float) -> tuple[float, float]:
    return rotated_half_extent_m(t.geometry.length_m, t.geometry.width_m, rotation_deg)


def turns(t: FixtureType) -> tuple[float, ...]:
    """0° and 90°, or only 0° for a fixture that is (nearly) the same either way."""
    g = t.geometry
    if g.kind == "point" or abs(g.length_m - g.width_m) <= 0.1 * max(g.length_m, g.width_m):
        return (0.0,)
    return (0.0, 90.0)


def axis(
    start: float,
    extent: float,
    wall: float,
    n: int,
    half: float,
    gap: float,
    edge: bool,
    wall_gaps: tuple[float, float] | None = None,
):
    """n centres along one axis over [start, start + extent], in a room 0..wall; None if they do not fit.

    ``gap`` separates neighbouring fixtures; ``wall_gaps`` (low wall, high wall) default to ``gap`` each.
    """
    g_lo, g_hi = wall_gaps if wall_gaps is not None else (gap, gap)
    lo = _snap(max(start, half + g_lo), math.ceil)
    hi = _snap(min(start + extent, wall - half - g_hi), math.floor)
    if hi < lo - 1e-9:
        return None
    if n == 1:
        return [_snap(min(max(start + extent / 2, lo), hi))]
    margin = (EDGE_MARGIN if edge else 0.5) * extent / n
    a, b = max(start + margin, lo), min(start + extent - margin, hi)
    pitch = _snap(2 * half + gap, math.ceil)
    if (b - a) / (n - 1) >= pitch + POSITION_STEP_M:
        step = (b - a) / (n - 1)
        return [_snap(a + k * step) for k in range(n)]
    # Not at the ideal spacing: at the least pitch, centred, if that still fits.
    if (n - 1) * pitch > hi - lo + 1e-9:
        return None
    a = _snap(min(max(start + extent / 2 - (n - 1) * pitch / 2, lo), hi - (n - 1) * pitch), math.floor)
    a = max(a, lo)
    return [round(a + k * pitch, 4) for k in range(n)]


def _snap(v: float, how=round) -> float:
    return round(how(round(v / POSITION_STEP_M, 6)) * POSITION_STEP_M, 4)


def positions(
    room: Room, zone: CanopyZone, rows: int, cols: int, edge: bool, stagger: bool, hx: float, hy: float, gap: float
):
    """Centres of a rows × cols array over the zone, or None when it cannot hang with the gaps.

    The gap to a wall applies to closed sides; on an open side (a rack) a fixture may reach the room's edge.
    """
    gx, gy = wall_gaps(room, gap)
    xs = axis(zone.x_m, zone.width_m, room.width_m, cols, hx, gap, edge, gx)
    ys = axis(zone.y_m, zone.length_m, room.length_m, rows, hy, gap, edge, gy)
    if xs is None or ys is None:
        return None
    out = []
    hi = _snap(min(zone.x_m + zone.width_m, room.width_m - hx - gx[1]), math.floor)
    for j, y in enumerate(ys):
        shift = 0.5 * (xs[1] - xs[0]) if stagger and cols > 1 and j % 2 == 1 else 0.0
        out += [(_snap(x + shift), y) for x in xs if _snap(x + shift) <= hi + 1e-9]
    return out if _apart(out, hx, hy, gap) else None


def wall_gaps(room: Room, gap: float) -> tuple[tuple[float, float], tuple[float, float]]:
    """((left, right), (front, back)) least gaps to the walls: ``gap`` on closed sides, 0 on open ones."""
    side = {s: (0.0 if room.finish_of(s).kind == "open" else gap) for s in ("left", "right", "front", "back")}
    return (side["left"], side["right"]), (side["front"], side["back"])


def _apart(pos, hx: float, hy: float, gap: float) -> bool:
    """Every two footprints are at least ``gap`` apart along x or along y (gaps checked after rounding)."""
    for a in range(len(pos)):
        for b in range(a + 1, len(pos)):
            dx, dy = abs(pos[a][0] - pos[b][0]), abs(pos[a][1] - pos[b][1])
            if dx < 2 * hx + gap - 1e-6 and dy < 2 * hy + gap - 1e-6:
                return False
    return True


def clear_of_obstacles(room: Room, pos, hx: float, hy: float, height_m: float) -> bool:
    """No footprint at this height is inside an obstacle (a fixture hangs under a shelf, not through it)."""
    for o in room.obstacles:
        if not o.z_m - 1e-6 <= height_m <= o.z_m + o.height_m + 1e-6:
            continue
        for x, y in pos:
            if x + hx > o.x_m and x - hx < o.x_m + o.width_m and y + hy > o.y_m and y - hy < o.y_m + o.length_m:
                return False
    return True
