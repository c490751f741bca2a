"""Per-fixture footprints for the editor's drag preview.

While a fixture is dragged, the browser composes the map from the last exact answer: it takes away the moved
fixture's own direct light at its old place and adds it at the new one, shifted by whole grid cells. This module
sends that light: the open-air direct PPFD of one fixture on the canopy it lights, on a square of grid points
centred on the fixture, at 100 % output (the browser scales it by the dimming). Reflections and shelves are
left to the exact answer that replaces the preview on drop.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from app.engine.direct import cull_radius_m, direct_patch
from app.engine.scene import Grid
from app.room.layout import fixture_zones
from app.room.models import Room
from app.service.scene_builder import aim_fields, emitter_for

MAX_RADIUS_CELLS = 150  # a 301 x 301 stamp at most (2.4 MB of float64, about 0.6 MB of JSON)


def footprint(room: Room, fixture_id: str) -> dict[str, Any]:
    """One fixture's open-air direct PPFD (µmol m⁻² s⁻¹ at 100 %) around its centre on the canopy it lights."""
    f = next(ff for ff in room.fixtures if ff.id == fixture_id)
    zone_id = fixture_zones(room.zones, room.fixtures).get(f.id)
    zone = next((z for z in room.zones if z.id == zone_id), None)
    t = next(tt for tt in room.fixture_types if tt.id == f.type_id)
    base = {
        "fixture_id": f.id,
        "zone_id": zone_id,
        "type_id": t.id,
        "rotation_deg": f.rotation_deg,
        "tilt_deg": f.tilt_deg,
        "aim_deg": f.aim_deg,
    }
    if zone is None:
        return {**base, "above_canopy_m": None, "spacing_m": room.grid_spacing_m, "radius_cells": 0, "ppfd": None}
    drop_m = f.hanging_height_m - zone.canopy_height_m
    e = emitter_for(f.id, t, f.x_m, f.y_m, f.hanging_height_m, f.rotation_deg, 100.0, **aim_fields(f))
    s = room.grid_spacing_m
    reach_m = cull_radius_m(e.distribution, drop_m, tilted=e.tilted) + 0.5 * e.largest_dimension_m
    r = min(int(math.ceil(reach_m / s)), MAX_RADIUS_CELLS)
    # Points x - r·s ... x + r·s: the grid's own centring puts its middle point under the fixture.
    grid = Grid("footprint", f.x_m - r * s, f.y_m - r * s, 2 * r * s, 2 * r * s, zone.canopy_height_m, s)
    values = np.zeros((grid.ny, grid.nx))
    patch = direct_patch(e, grid, (), dtype=np.float64)
    if patch is not None:
        patch.add_into(values)
    return {**base, "above_canopy_m": drop_m, "spacing_m": s, "radius_cells": r, "ppfd": np.round(values, 2).tolist()}


def footprints(room: Room, fixture_ids: list[str]) -> list[dict[str, Any]]:
    known = {f.id for f in room.fixtures}
    return [footprint(room, fid) for fid in dict.fromkeys(fixture_ids) if fid in known]
