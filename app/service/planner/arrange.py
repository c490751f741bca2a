"""Where fixtures can hang over a zone: even or edge-weighted rows and columns, straight or staggered, with the
least gap between fixtures and to the closed sides (the walls, or a rack tier's own shelf edges and uprights),
on the room's hanging grid when it has one, and clear of obstacles."""

from __future__ import annotations

import math

from app.room.layout import covering_obstacle, rotated_half_extent_m
from app.room.models import CanopyZone, FixtureType, Room
from app.service import hanging

EDGE_MARGIN = 0.35  # edge-weighted arrays put the outer centres at 0.35 of a cell from the zone edge (0.5 even)
POSITION_STEP_M = 0.005  # positions are given to the half centimetre
EDGE_TOL_M = 0.01  # a shelf edge within 1 cm of a wall is against that wall; an upright within 1 cm is at the edge


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
    n: int,
    half: float,
    gap: float,
    edge: bool,
    span: tuple[float, float],
):
    """n centres along one axis over the zone's [start, start + extent]; None if they do not fit.

    ``gap`` separates neighbouring fixtures; ``span`` is where a footprint may reach along this axis (the walls
    or the shelf's edges, less the gap on closed sides: :func:`spans`).
    """
    lo, hi = centre_range(start, extent, half, span)
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


def centre_range(start: float, extent: float, half: float, span: tuple[float, float]) -> tuple[float, float]:
    """Where a centre may sit: over the zone (so the fixture lights it) with its footprint inside ``span``."""
    return _snap(max(start, span[0] + half), math.ceil), _snap(min(start + extent, span[1] - half), math.floor)


def _snap(v: float, how=round) -> float:
    return round(how(round(v / POSITION_STEP_M, 6)) * POSITION_STEP_M, 4)


def positions(
    room: Room, zone: CanopyZone, rows: int, cols: int, edge: bool, stagger: bool, hx: float, hy: float, gap: float
):
    """Centres of a rows × cols array over the zone, or None when it cannot hang with the gaps.

    The gap to a wall (or, on a rack, to the tier's own shelf edge) applies to closed sides; on an open side a
    fixture may reach the edge. With a hanging grid every centre is moved to the nearest line that keeps it over
    the zone and within the gaps; an array whose fixtures then collide or come closer than the gap is refused.
    """
    sx, sy = spans(room, zone, gap)
    xs = axis(zone.x_m, zone.width_m, cols, hx, gap, edge, sx)
    ys = axis(zone.y_m, zone.length_m, rows, hy, gap, edge, sy)
    if xs is None or ys is None:
        return None
    out = []
    x_lo, x_hi = centre_range(zone.x_m, zone.width_m, hx, sx)
    for j, y in enumerate(ys):
        shift = 0.5 * (xs[1] - xs[0]) if stagger and cols > 1 and j % 2 == 1 else 0.0
        out += [(_snap(x + shift), y) for x in xs if _snap(x + shift) <= x_hi + 1e-9]
    if room.hanging_grid is not None:
        out = to_grid(room, out, (x_lo, x_hi), centre_range(zone.y_m, zone.length_m, hy, sy))
        if out is None:
            return None
    return out if _apart(out, hx, hy, gap) else None


def to_grid(room: Room, pos, x_range: tuple[float, float], y_range: tuple[float, float]):
    """Each centre on the hanging grid's nearest line within the allowed ranges, or None if one has no line."""
    g = room.hanging_grid
    out = []
    for x, y in pos:
        gx = hanging.snap_m(x, g.origin_x_m, g.pitch_x_m, *x_range)
        gy = hanging.snap_m(y, g.origin_y_m, g.pitch_y_m, *y_range)
        if gx is None or gy is None:
            return None
        out.append((gx, gy))
    return out


def spans(room: Room, zone: CanopyZone, gap: float) -> tuple[tuple[float, float], tuple[float, float]]:
    """Where footprints over the zone may reach, ((x0, x1), (y0, y1)), the gap taken off on closed sides.

    A zone under a shelf (a rack's tier, :func:`app.room.layout.covering_obstacle`) is bounded by that shelf's
    edges, since its fixtures hang under it; any other zone by the room's walls. A side on a room wall takes
    the wall's finish (open: no gap); a shelf edge inside the room is closed only where an upright or side panel
    (an obstacle along that edge, beside the tier) stands, and otherwise open.
    """
    shelf = covering_obstacle(room.obstacles, zone)
    if shelf is None:
        box = (0.0, 0.0, room.width_m, room.length_m)
    else:
        box = (
            max(0.0, shelf.x_m),
            max(0.0, shelf.y_m),
            min(room.width_m, shelf.x_m + shelf.width_m),
            min(room.length_m, shelf.y_m + shelf.length_m),
        )
    g = {s: gap if side_closed(room, zone, shelf, box, s) else 0.0 for s in ("left", "right", "front", "back")}
    return (box[0] + g["left"], box[2] - g["right"]), (box[1] + g["front"], box[3] - g["back"])


def side_closed(room: Room, zone: CanopyZone, shelf, box: tuple[float, float, float, float], side: str) -> bool:
    """Whether one side of the space the zone's fixtures hang in is closed (a wall, an upright, a panel)."""
    x0, y0, x1, y1 = box
    at_wall = {
        "left": x0 <= EDGE_TOL_M,
        "front": y0 <= EDGE_TOL_M,
        "right": x1 >= room.width_m - EDGE_TOL_M,
        "back": y1 >= room.length_m - EDGE_TOL_M,
    }[side]
    if at_wall:
        return room.finish_of(side).kind != "open"
    top = shelf.z_m
    for o in room.obstacles:
        if o is shelf or o.z_m >= top - 1e-9 or o.z_m + o.height_m <= zone.canopy_height_m + 1e-9:
            continue  # not beside the tier (above its shelf, or below its canopy)
        ox0, oy0, ox1, oy1 = o.x_m, o.y_m, o.x_m + o.width_m, o.y_m + o.length_m
        if side in ("left", "right"):
            edge = x0 if side == "left" else x1
            if ox0 <= edge + EDGE_TOL_M and ox1 >= edge - EDGE_TOL_M and oy1 > y0 and oy0 < y1:
                return True
        else:
            edge = y0 if side == "front" else y1
            if oy0 <= edge + EDGE_TOL_M and oy1 >= edge - EDGE_TOL_M and ox1 > x0 and ox0 < x1:
                return True
    return False


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
