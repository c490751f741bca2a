"""The one layout rule: which zone a fixture lights, which fixtures light a zone, what covers a zone.

Every part of Leafcast that asks these questions calls this module: the analysis (hours, warnings), the
planner (which fixtures a zone's layout replaces, curves, check-my-setup), validation (the 1 cm rule), the
sheet (one plan per tier) and the browser, which receives :func:`fixture_zones` with each analysis instead
of recomputing it.

The rule, in words:

* A fixture **lights** the highest canopy zone that lies below its emitting face and whose rectangle holds the
  fixture's centre in plan (edges included). A fixture whose centre is over no zone lights none.
* A zone is **covered** by the lowest obstacle whose underside is at or above the canopy and whose footprint
  spans the whole zone (a shelf over a tier), within :data:`COVER_TOLERANCE_M`. Fixtures over a covered zone
  hang below that underside.

The functions take the room model's objects but read only their attributes (no pydantic import), so the
engine's geometric primitive :func:`covers_from_above` can share the same tolerance without importing models.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Protocol

#: A shelf whose footprint falls short of a zone's edge by less than this still covers it [m].
COVER_TOLERANCE_M = 1e-3
#: Least clear height between a fixture's emitting face and the canopy it lights [m].
MIN_FIXTURE_CLEARANCE_M = 0.01


class _Zone(Protocol):
    id: str
    x_m: float
    y_m: float
    width_m: float
    length_m: float
    canopy_height_m: float


class _Fixture(Protocol):
    id: str
    type_id: str
    x_m: float
    y_m: float
    hanging_height_m: float
    rotation_deg: float


def holds_point(zone: _Zone, x_m: float, y_m: float) -> bool:
    """Whether the zone's rectangle holds the point in plan (edges included)."""
    return zone.x_m <= x_m <= zone.x_m + zone.width_m and zone.y_m <= y_m <= zone.y_m + zone.length_m


def zones_under(zones: Iterable[_Zone], fixture: _Fixture) -> list[_Zone]:
    """Every zone whose rectangle holds the fixture's centre, whatever its height."""
    return [z for z in zones if holds_point(z, fixture.x_m, fixture.y_m)]


def zone_lit_by(zones: Iterable[_Zone], fixture: _Fixture) -> _Zone | None:
    """The zone a fixture lights: the highest canopy below its face whose rectangle holds its centre."""
    below = [z for z in zones_under(zones, fixture) if z.canopy_height_m < fixture.hanging_height_m]
    return max(below, key=lambda z: z.canopy_height_m) if below else None


def fixture_zones(zones: Iterable[_Zone], fixtures: Iterable[_Fixture]) -> dict[str, str | None]:
    """Fixture id -> id of the zone it lights (None when it hangs over no zone)."""
    zones = list(zones)
    out: dict[str, str | None] = {}
    for f in fixtures:
        z = zone_lit_by(zones, f)
        out[f.id] = z.id if z is not None else None
    return out


def fixtures_lighting(zones: Iterable[_Zone], fixtures: Iterable[_Fixture], zone_id: str) -> list[_Fixture]:
    """The fixtures that light the zone, in the room's order."""
    zones = list(zones)
    out = []
    for f in fixtures:
        z = zone_lit_by(zones, f)
        if z is not None and z.id == zone_id:
            out.append(f)
    return out


def covers_from_above(
    box_x0_m: float,
    box_y0_m: float,
    box_x1_m: float,
    box_y1_m: float,
    box_bottom_m: float,
    x0_m: float,
    y0_m: float,
    x1_m: float,
    y1_m: float,
    canopy_m: float,
) -> bool:
    """Whether a box spans the rectangle [x0, x1] x [y0, y1] from at or above the canopy height."""
    tol = COVER_TOLERANCE_M
    return (
        box_bottom_m >= canopy_m - 1e-9
        and box_x0_m <= x0_m + tol
        and box_y0_m <= y0_m + tol
        and box_x1_m >= x1_m - tol
        and box_y1_m >= y1_m - tol
    )


def covering_obstacle(obstacles: Iterable, zone: _Zone):
    """The lowest obstacle that covers the whole zone from above (a shelf over a tier), or None."""
    over = [
        o
        for o in obstacles
        if covers_from_above(
            o.x_m,
            o.y_m,
            o.x_m + o.width_m,
            o.y_m + o.length_m,
            o.z_m,
            zone.x_m,
            zone.y_m,
            zone.x_m + zone.width_m,
            zone.y_m + zone.length_m,
            zone.canopy_height_m,
        )
    ]
    return min(over, key=lambda o: o.z_m) if over else None


def zones_among(zones: Iterable[_Zone], obstacles: Iterable, fixture: _Fixture) -> list[_Zone]:
    """Zones whose plants surround the fixture: its centre over the zone, its face below the canopy top and
    above what the plants stand on (the highest box under the centre whose top is at or below the canopy,
    such as a shelf board, else the floor)."""
    obstacles = list(obstacles)
    out = []
    for z in zones_under(zones, fixture):
        if fixture.hanging_height_m >= z.canopy_height_m:
            continue
        tops = [
            o.z_m + o.height_m
            for o in obstacles
            if o.x_m <= fixture.x_m <= o.x_m + o.width_m
            and o.y_m <= fixture.y_m <= o.y_m + o.length_m
            and o.z_m + o.height_m <= z.canopy_height_m + 1e-9
        ]
        if fixture.hanging_height_m > max(tops, default=0.0):
            out.append(z)
    return out


def highest_hanging_m(room, zone: _Zone) -> float:
    """Highest a fixture over the zone can hang: 1 cm under the shelf covering it, or under the ceiling."""
    shelf = covering_obstacle(room.obstacles, zone)
    top = shelf.z_m if shelf is not None else room.height_m
    return min(top, room.height_m) - MIN_FIXTURE_CLEARANCE_M


def rotated_half_extent_m(length_m: float, width_m: float, rotation_deg: float) -> tuple[float, float]:
    """Half sizes along x and y of a rectangle rotated about the vertical (0 deg: length along x)."""
    c, s = abs(math.cos(math.radians(rotation_deg))), abs(math.sin(math.radians(rotation_deg)))
    return 0.5 * (length_m * c + width_m * s), 0.5 * (length_m * s + width_m * c)


def footprint_size_m(geometry) -> tuple[float, float]:
    """Length and width of a fixture's emitting face in plan: a single bar is as wide as its bar."""
    width = geometry.bar_width_m if geometry.kind == "bar" else geometry.width_m
    return geometry.length_m, width


def fixture_extent(fixture: _Fixture, fixture_type) -> tuple[float, float, float, float]:
    """The fixture's rotated footprint in plan, as (x0, y0, x1, y1) [m]."""
    hx, hy = rotated_half_extent_m(*footprint_size_m(fixture_type.geometry), fixture.rotation_deg)
    return fixture.x_m - hx, fixture.y_m - hy, fixture.x_m + hx, fixture.y_m + hy
