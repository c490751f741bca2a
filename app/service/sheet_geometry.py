"""What the sheet's plans and the DXF export draw, in room coordinates (metres, y from the front wall).

One source for both drawings: the tiers (one plan per canopy level), each fixture's outline and bars at
real size, its hanging points, and the chained dimensions to the fixture centres.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from app.room.layout import covering_obstacle, zone_lit_by
from app.room.models import CanopyZone, Fixture, FixtureType, Obstacle, Room

# Default hanging points when the fixture type records none: near the ends of a bar, near the corners of a
# panel or bar array, inset from the edge by this much (common practice, no source).
HANGING_INSET_M = 0.05
DEDUPE_M = 0.001  # fixture centres closer than 1 mm share one dimension tick


@dataclass
class Tier:
    """One plan of the sheet: zones that lie side by side at one level, and the fixtures that light them."""

    index: int
    zones: list[CanopyZone]
    fixtures: list[Fixture]
    stacked: bool  # more than one tier in the room (a rack)
    shelf_below: Obstacle | None = None  # the shelf the canopy stands on
    shelf_above: Obstacle | None = None  # the shelf the fixtures hang under
    unlit_fixtures: list[Fixture] = field(default_factory=list)

    @property
    def key(self) -> str:
        return f"tier-{self.index + 1}"

    @property
    def title(self) -> str:
        names = ", ".join(z.name for z in self.zones)
        return f"Tier {self.index + 1}: {names}" if self.stacked else names


def _overlap(a, b) -> bool:
    """Footprints (x, y, w, l) overlap with positive area."""
    return (
        a.x_m < b.x_m + b.width_m - 1e-9
        and b.x_m < a.x_m + a.width_m - 1e-9
        and a.y_m < b.y_m + b.length_m - 1e-9
        and b.y_m < a.y_m + a.length_m - 1e-9
    )


def lit_zone(room: Room, fixture: Fixture) -> CanopyZone | None:
    """The zone a fixture lights (the one layout rule, :mod:`app.room.layout`)."""
    return zone_lit_by(room.zones, fixture)


def tiers(room: Room) -> list[Tier]:
    """Zones grouped in levels, lowest first: a zone joins the first level where it overlaps no other zone."""
    levels: list[list[CanopyZone]] = []
    for z in sorted(room.zones, key=lambda z: z.canopy_height_m):
        for level in levels:
            if not any(_overlap(z, o) for o in level):
                level.append(z)
                break
        else:
            levels.append([z])
    level_of = {z.id: i for i, level in enumerate(levels) for z in level}
    out = [Tier(i, level, [], len(levels) > 1) for i, level in enumerate(levels)]
    for f in room.fixtures:
        z = lit_zone(room, f)
        if z is None:
            out[0].fixtures.append(f)
            out[0].unlit_fixtures.append(f)
        else:
            out[level_of[z.id]].fixtures.append(f)
    for t in out:
        t.shelf_below, t.shelf_above = _shelves(room, t)
    return out


def _shelves(room: Room, tier: Tier) -> tuple[Obstacle | None, Obstacle | None]:
    """The shelf a tier's canopy stands on (highest top at or under it), and the one covering it (layout rule)."""
    canopy = min(z.canopy_height_m for z in tier.zones)
    over = [o for o in room.obstacles if any(_overlap(o, z) for z in tier.zones)]
    below = [o for o in over if o.z_m + o.height_m <= canopy + 1e-9]
    covers = [c for c in (covering_obstacle(room.obstacles, z) for z in tier.zones) if c is not None]
    return (
        max(below, key=lambda o: o.z_m + o.height_m) if below else None,
        min(covers, key=lambda o: o.z_m) if covers else None,
    )


def _rotate(u: float, v: float, deg: float) -> tuple[float, float]:
    """Counter-clockwise about the vertical, as the room file defines rotation_deg."""
    c, s = math.cos(math.radians(deg)), math.sin(math.radians(deg))
    return u * c - v * s, u * s + v * c


def _to_room(f: Fixture, pts: list[tuple[float, float]]) -> list[tuple[float, float]]:
    out = []
    for u, v in pts:
        dx, dy = _rotate(u, v, f.rotation_deg)
        out.append((f.x_m + dx, f.y_m + dy))
    return out


def _rect(u0: float, v0: float, u1: float, v1: float) -> list[tuple[float, float]]:
    return [(u0, v0), (u1, v0), (u1, v1), (u0, v1)]


def body_size_m(t: FixtureType) -> tuple[float, float]:
    """Length (local x) and width (local y) of the emitting part as drawn; a bar is as wide as its bar."""
    g = t.geometry
    if g.kind == "bar":
        return g.length_m, g.bar_width_m
    if g.kind == "point":
        return 0.0, 0.0
    return g.length_m, g.width_m


def bars_local(t: FixtureType) -> list[list[tuple[float, float]]]:
    """Each bar of a bar array (or the one bar) as a rectangle in the fixture's frame."""
    g = t.geometry
    if g.kind == "bar":
        return [_rect(-g.length_m / 2, -g.bar_width_m / 2, g.length_m / 2, g.bar_width_m / 2)]
    if g.kind != "bar_array":
        return []
    pitch = (g.width_m - g.bar_width_m) / (g.bar_count - 1)
    out = []
    for k in range(g.bar_count):
        v = -g.width_m / 2 + g.bar_width_m / 2 + k * pitch
        out.append(_rect(-g.length_m / 2, v - g.bar_width_m / 2, g.length_m / 2, v + g.bar_width_m / 2))
    return out


def hanging_points_local(t: FixtureType) -> list[tuple[float, float]]:
    """Recorded points, else two near the ends of a bar, four near the corners of a panel or array, one for a point."""
    if t.hanging_points_m:
        return [(float(u), float(v)) for u, v in t.hanging_points_m]
    L, W = body_size_m(t)
    iu = min(HANGING_INSET_M, L / 4)
    if t.geometry.kind == "point":
        return [(0.0, 0.0)]
    if t.geometry.kind == "bar":
        return [(-L / 2 + iu, 0.0), (L / 2 - iu, 0.0)]
    iv = min(HANGING_INSET_M, W / 4)
    return [(-L / 2 + iu, -W / 2 + iv), (L / 2 - iu, -W / 2 + iv), (L / 2 - iu, W / 2 - iv), (-L / 2 + iu, W / 2 - iv)]


@dataclass
class FixtureShape:
    fixture: Fixture
    type: FixtureType
    outline: list[tuple[float, float]]  # room metres, four corners (empty for a point source)
    bars: list[list[tuple[float, float]]]
    hanging: list[tuple[float, float]]

    @property
    def extent(self) -> tuple[float, float, float, float]:
        """Axis-aligned (x0, y0, x1, y1) of the rotated outline [m]."""
        pts = self.outline or [(self.fixture.x_m, self.fixture.y_m)]
        xs, ys = [p[0] for p in pts], [p[1] for p in pts]
        return min(xs), min(ys), max(xs), max(ys)


def fixture_shape(room: Room, f: Fixture) -> FixtureShape:
    t = next(t for t in room.fixture_types if t.id == f.type_id)
    L, W = body_size_m(t)
    outline = _to_room(f, _rect(-L / 2, -W / 2, L / 2, W / 2)) if L > 0 else []
    return FixtureShape(f, t, outline, [_to_room(f, b) for b in bars_local(t)], _to_room(f, hanging_points_local(t)))


def chain(positions: list[float], wall_m: float) -> list[tuple[float, float]]:
    """Chained dimension segments from the wall at 0 through each distinct centre to the far wall: (start, end)."""
    stops = [0.0]
    for p in sorted(positions):
        if p - stops[-1] > DEDUPE_M:
            stops.append(p)
    if wall_m - stops[-1] > DEDUPE_M:
        stops.append(wall_m)
    return list(zip(stops[:-1], stops[1:], strict=True))


DEFAULT_ENTRY_WIDTH_M = 0.8  # a common interior door leaf (common practice, no source)


def entry_span(room: Room) -> tuple[str, float, float]:
    """The entry's wall and where along it the opening runs, (side, start, end) [m] from the wall's left/front end."""
    e = room.entry
    wall = room.width_m if e.side in ("front", "back") else room.length_m
    width = min(e.width_m if e.width_m is not None else min(DEFAULT_ENTRY_WIDTH_M, wall / 2), wall)
    centre = e.offset_m if e.offset_m is not None else wall / 2
    centre = min(max(centre, width / 2), wall - width / 2)
    return e.side, centre - width / 2, centre + width / 2
