"""Core-area averages: one fixture in open air at a height, or any spot of a room's canopy map.

Nested squares of 1-5 ft (imperial rooms) or 0.3-1.5 m (metric rooms) centred
under the fixture, with average, min/avg and the share of each square at or
above a chosen PPFD (:mod:`app.engine.core_areas`). Open air means no walls and
no obstacles: the light a maker's map should show. The fixture is at its rated
output (installation) times the dimming asked for.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from app.engine import core_areas as ca
from app.engine.compute import compute_scene
from app.engine.scene import Enclosure
from app.room.models import FixtureType
from app.room.units import M_PER_FT
from app.service.scene_builder import emitter_for

CELLS_PER_STEP = 6  # 1 inch cells in imperial (half-side step 6 in), 2.5 cm in metric (step 15 cm)
METRIC_STEP_M = 0.15
IMPERIAL_STEP_M = 0.5 * M_PER_FT
DEFAULT_THRESHOLD_UMOL = 400.0  # a typical target for leafy crops; the grower changes it (no source)
_OPEN_AIR_ROOM_M = 100.0  # a box so large and dark that it returns nothing: open air
_MAP_EVERY = 2  # the map on the card every second cell (2 in / 5 cm)


def sides_for(display_units: str) -> tuple[tuple[float, ...], float]:
    """Square sides [m] and the half-side step [m] for the room's display units."""
    if display_units == "metric":
        return ca.METRIC_SIDES_M, METRIC_STEP_M
    return ca.FT_SIDES_M, IMPERIAL_STEP_M


def fixture_card(
    t: FixtureType,
    height_m: float,
    display_units: str = "imperial",
    threshold_umol: float = DEFAULT_THRESHOLD_UMOL,
    dimming_pct: float = 100.0,
) -> dict[str, Any]:
    """Averages over nested squares under one fixture ``height_m`` above the canopy, in open air."""
    sides, step = sides_for(display_units)
    c = 0.5 * _OPEN_AIR_ROOM_M
    e = emitter_for(t.id, t, c, c, height_m, 0.0, dimming_pct)
    grid = ca.cell_centred_grid(c, c, 0.0, step, CELLS_PER_STEP, len(sides))
    (zl,) = compute_scene((e,), (grid,), Enclosure(_OPEN_AIR_ROOM_M, _OPEN_AIR_ROOM_M, height_m + 1.0))
    ppfd = zl.ppfd.astype(float)
    rows = ca.nested_square_stats(grid.x_m, grid.y_m, ppfd, ca.cell_centred_areas(grid), c, c, sides, threshold_umol)
    emitted = e.flux_umol_s
    for r in rows:
        # Photons landing in the square as a share of the fixture's output: what a map over it can hold.
        r["share_of_output"] = r["avg"] * r["area_m2"] / emitted if emitted > 0 and r["avg"] is not None else None
    sub = slice(_MAP_EVERY // 2, None, _MAP_EVERY)
    return {
        "fixture_type": {"id": t.id, "name": t.name, "ppf_umol_s": t.ppf_umol_s, "power_w": t.power_w},
        "height_m": height_m,
        "dimming_pct": dimming_pct,
        "threshold_umol": threshold_umol,
        "display_units": display_units,
        "squares": rows,
        "map": {
            "x_m": np.round(grid.x_m[sub] - c, 4).tolist(),
            "y_m": np.round(grid.y_m[sub] - c, 4).tolist(),
            "ppfd": np.round(ppfd[sub, sub], 1).tolist(),
        },
        "peak_umol": float(ppfd.max()),
        "basis": "open air (no walls, no obstacles), rated output at installation",
    }


def zone_squares(
    grid, ppfd: np.ndarray, x_m: float, y_m: float, display_units: str, threshold_umol: float
) -> list[dict[str, Any]]:
    """Nested squares centred at (x, y) over a zone's canopy map (points weighted by their cell areas)."""
    sides, _ = sides_for(display_units)
    return ca.nested_square_stats(grid.x_m, grid.y_m, ppfd, grid.cell_area_m2, x_m, y_m, sides, threshold_umol)
