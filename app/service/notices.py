"""The notices an analysis carries: warnings with their place and fix, photoperiod rules, and the cautions.

Zone figures are computed in :mod:`app.service.zone_result`; the rules that turn them and the room into words live
here, each with its source or its mark as Leafcast's own default.
"""

from __future__ import annotations

from typing import Any

from app.room import layout
from app.room.models import CanopyZone, Crop, Room
from app.room.units import format_length
from app.service.hanging import snap_m

DEFAULT_MIN_DARK_H = 4.0  # common practice, no source (4-6 h for most crops)
SHORT_DAY_NIGHT_H = 12.0  # Purdue HO-253 (Currey, Lopez & Runkle): at least 12 h uninterrupted dark
LONG_DAY_NIGHT_H = 10.0  # Purdue HO-253: many long-day crops flower when nights are under about 10 h

CAUTIONS = [
    "These figures are planning estimates from a model, not measurements: check the canopy with a quantum sensor.",
    "Electrical work must follow local codes and be done by a licensed electrician; circuit figures here "
    "use the 80 % continuous-load rule only as a planning check.",
    "Lights make heat: every watt drawn ends up as heat in the room, so size cooling and ventilation for it.",
    "Hang fixtures from hardware and anchors rated for their weight, with a safety margin; never hang from cords.",
    "Do not look into high-intensity lights; wear eye protection rated for the light when working close to them.",
    "Keep water away from drivers, plugs and connectors; use drip loops and protected outlets near irrigation.",
]


def warn(
    code: str,
    severity: str,
    message: str,
    fix: str,
    zone: str | None = None,
    fixture: str | None = None,
    where: list[float] | None = None,
) -> dict[str, Any]:
    return {
        "code": code,
        "severity": severity,
        "message": message,
        "fix": fix,
        "zone_id": zone,
        "fixture_id": fixture,
        "where": where,
    }


def nearest_fixture(room: Room, x: float, y: float) -> str | None:
    on = [f for f in room.fixtures if f.on]
    if not on:
        return None
    return min(on, key=lambda f: (f.x_m - x) ** 2 + (f.y_m - y) ** 2).id


def photoperiod_warnings(zone: CanopyZone, crop: Crop, hours: float) -> list[dict[str, Any]]:
    out = []
    dark = 24.0 - hours
    need_dark = crop.min_dark_h
    if hours >= 24.0 and crop.continuous_light_injury:
        out.append(
            warn(
                "continuous_light",
                "error",
                f"{crop.name} is injured by continuous light (leaf chlorosis and necrosis).",
                f"Give it a dark period of at least {max(need_dark, DEFAULT_MIN_DARK_H):g} h "
                f"(photoperiod {24 - max(need_dark, DEFAULT_MIN_DARK_H):g} h or less).",
                zone.id,
            )
        )
    elif dark < need_dark:
        out.append(
            warn(
                "short_dark_period",
                "warning",
                f"A {hours:g} h photoperiod leaves {dark:g} h of dark; {crop.name} needs at least {need_dark:g} h.",
                f"Shorten the photoperiod to {24 - need_dark:g} h or less.",
                zone.id,
            )
        )
    if crop.daylength == "short_day" and zone.stage == "flowering" and dark < SHORT_DAY_NIGHT_H:
        out.append(
            warn(
                "short_day_night",
                "warning",
                f"{crop.name} is a short-day crop: in flowering it needs long nights of at least "
                f"{SHORT_DAY_NIGHT_H:g} h uninterrupted dark; this schedule gives {dark:g} h.",
                f"Set the photoperiod to {24 - SHORT_DAY_NIGHT_H:g} h or less and keep the dark period light-tight.",
                zone.id,
            )
        )
    if crop.daylength == "long_day" and zone.stage == "flowering" and dark > LONG_DAY_NIGHT_H:
        out.append(
            warn(
                "long_day_night",
                "info",
                f"{crop.name} is a long-day crop: nights longer than about {LONG_DAY_NIGHT_H:g} h "
                f"({dark:g} h now) may delay flowering.",
                f"Lengthen the photoperiod to {24 - LONG_DAY_NIGHT_H:g} h or more.",
                zone.id,
            )
        )
    return out


def room_warnings(room: Room, basis: dict[str, Any]) -> list[dict[str, Any]]:
    """Warnings about the room as a whole: fixtures over no canopy, output projected past its data."""
    warnings: list[dict[str, Any]] = []
    for f in room.fixtures:
        if f.on and layout.zone_lit_by(room.zones, f) is None:
            warnings.append(
                warn(
                    "fixture_off_canopy",
                    "info",
                    f"Fixture {f.id} does not hang over any canopy zone.",
                    "Move it over a bench, or switch it off.",
                    fixture=f.id,
                    where=[f.x_m, f.y_m, f.x_m, f.y_m],
                )
            )

    from app.service.layout_cautions import layout_cautions  # it builds its warnings with warn() from here

    warnings += off_grid_warnings(room) + among_plants_warnings(room) + layout_cautions(room)

    for b in basis["types"]:
        if b["beyond_limit"]:
            warnings.append(
                warn(
                    "maintenance_beyond_projection",
                    "info",
                    f"{b['name']}: {b['age_h']:,.0f} h is beyond the {b['limit_h']:,.0f} h that its maintenance "
                    "data may be projected to (six times the test duration, IES TM-21); output is shown as at "
                    f"{b['limit_h']:,.0f} h and is likely lower.",
                    "Measure the canopy with a quantum sensor and enter the readings to fit the real output.",
                )
            )

    return warnings


OFF_GRID_M = 0.005  # a centre farther than this from its nearest grid line is off the grid


def off_grid_warnings(room: Room) -> list[dict[str, Any]]:
    """Fixtures whose centre is not on the room's hanging grid, with the nearest place on it."""
    g = room.hanging_grid
    if g is None:
        return []
    out, u = [], room.display_units
    for f in room.fixtures:
        x = snap_m(f.x_m, g.origin_x_m, g.pitch_x_m, 0.0, room.width_m)
        y = snap_m(f.y_m, g.origin_y_m, g.pitch_y_m, 0.0, room.length_m)
        if x is None or y is None or max(abs(x - f.x_m), abs(y - f.y_m)) <= OFF_GRID_M:
            continue
        out.append(
            warn(
                "fixture_off_grid",
                "info",
                f"Fixture {f.id} hangs off the hanging grid.",
                f"Hang it {format_length(x, u, fine=True)} from the left wall and {format_length(y, u, fine=True)} "
                "from the front wall (the nearest place on the grid), or add a hanger where it is.",
                fixture=f.id,
                where=[f.x_m, f.y_m, f.x_m, f.y_m],
            )
        )
    return out


def among_plants_warnings(room: Room) -> list[dict[str, Any]]:
    """Fixtures hung below a canopy's top, among its plants: the map is computed at the canopy top only."""
    out = []
    for f in room.fixtures:
        for z in layout.zones_among(room.zones, room.obstacles, f):
            out.append(
                warn(
                    "fixture_among_plants",
                    "warning",
                    f"Fixture {f.id} hangs at {format_length(f.hanging_height_m, room.display_units)}, below the "
                    f"canopy top of {z.name} ({format_length(z.canopy_height_m, room.display_units)}): among the "
                    "plants. Leafcast computes the light at the canopy top, so its own light there is missing.",
                    "Raise it above the canopy (check the hanging height: above the floor, not above the canopy). "
                    "A bar meant to hang inside the canopy is not modelled that way yet.",
                    zone=z.id,
                    fixture=f.id,
                    where=[f.x_m, f.y_m, f.x_m, f.y_m],
                )
            )
    return out
