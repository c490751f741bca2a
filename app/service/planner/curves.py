"""Average, peak and lowest PPFD on a zone against the hanging height of the fixtures that light it, and
against their dimming (the other fixtures stay as they are)."""

from __future__ import annotations

from typing import Any

import numpy as np

from app.engine.compute import compute_scene
from app.engine.metrics import area_weighted_stats, ppfd_for_dli
from app.room import layout
from app.room.library import crops_for
from app.room.models import RoomFile
from app.service.advice import fixture_emitters
from app.service.analysis import zone_photoperiod_h
from app.service.scene_builder import build_scene, zone_grid

CURVE_POINTS_PER_SIDE = 60
LOWEST_ABOVE_CANOPY_M = 0.1


def curves(rf: RoomFile, zone_id: str, fixture_ids: tuple[str, ...] = (), steps: int = 12) -> dict[str, Any]:
    """PPFD figures on a zone against the hanging height of its fixtures (moved together) and their dimming."""
    room = rf.room
    z = next((zz for zz in room.zones if zz.id == zone_id), None)
    if z is None:
        raise ValueError(f"no zone '{zone_id}'")
    lit = layout.fixtures_lighting(room.zones, room.fixtures, zone_id)
    ids = set(fixture_ids) or {f.id for f in lit}
    chosen = [f for f in room.fixtures if f.id in ids]
    if not chosen:
        raise ValueError(f"no fixture lights zone '{zone_id}'")
    scene = build_scene(room)
    index = room.zones.index(z)
    spacing = max(room.grid_spacing_m, max(z.width_m, z.length_m) / CURVE_POINTS_PER_SIDE)
    grids = tuple(zone_grid(zz, spacing) for zz in room.zones)  # every canopy blocks wall light, as in the analysis
    grid = grids[index]
    others = tuple(e for e in scene.emitters if e.id not in ids)

    def ppfd(emitters):
        return compute_scene(emitters, grids, scene.enclosure, scene.boxes)[index].ppfd.astype(float)

    lowest = min(f.hanging_height_m for f in chosen)
    top = layout.highest_hanging_m(room, z) - (max(f.hanging_height_m for f in chosen) - lowest)
    heights = np.linspace(z.canopy_height_m + LOWEST_ABOVE_CANOPY_M, max(top, z.canopy_height_m + 0.2), steps)
    rows = []
    for h in heights:
        dz = h - lowest
        s = area_weighted_stats(ppfd(others + fixture_emitters(room, chosen, dz_m=dz)), grid.cell_area_m2)
        rows.append({"above_canopy_m": float(h - z.canopy_height_m), "avg": s["avg"], "max": s["max"], "min": s["min"]})
    rest = ppfd(others)
    own = ppfd(fixture_emitters(room, chosen, dimming_pct=100.0))
    dims = []
    for d in np.linspace(10, 100, 10):  # every chosen fixture set to d %: PPFD is linear in it
        s = area_weighted_stats(rest + own * d / 100, grid.cell_area_m2)
        dims.append({"dimming_pct": float(d), "avg": s["avg"], "max": s["max"], "min": s["min"]})
    stage = crops_for(rf)[z.crop_id].stages[z.stage]
    hours = zone_photoperiod_h(room, z)
    return {
        "zone_id": z.id,
        "zone_name": z.name,
        "fixtures": sorted(ids),
        "heights": rows,
        "dimming": dims,
        "band_ppfd": [float(ppfd_for_dli(stage.dli_min, hours)), float(ppfd_for_dli(stage.dli_max, hours))],
        "stress_ppfd": stage.ppfd_stress_umol_m2_s,
        "current_above_canopy_m": lowest - z.canopy_height_m,
        "current_dimming_pct": float(np.mean([f.dimming_pct for f in chosen])),
        "fixtures_off": sorted(f.id for f in chosen if not f.on),
    }
