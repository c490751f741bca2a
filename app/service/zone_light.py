"""A zone's canopy light as two parts that add: its own fixtures, and the spill of every other fixture.

The light model is linear in each fixture's flux (direct light and the reflections
alike), so the canopy PPFD at a dimming ``d`` of the zone's own fixtures is exactly
``own_full × d/100 + spill``. Changing the canopy height or the fixtures' hanging
height changes the geometry, which needs a real re-analysis; each height pair is
analysed once and kept for the rest of the report.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from app.engine import metrics as mx
from app.room.models import CanopyZone, RoomFile
from app.room.year_checks import hung_over
from app.service.analysis import analyse
from app.service.scene_builder import zone_grid

HEIGHT_KEY_MM = 1.0  # heights closer than a millimetre share an analysis


@dataclass(frozen=True)
class ZoneLight:
    """Maps on the zone's grid [µmol m⁻² s⁻¹] for one canopy height and one fixture height."""

    own_full: np.ndarray  # the zone's fixtures at 100 % dimming
    own_as_set: np.ndarray  # the zone's fixtures at their own dimming
    spill: np.ndarray  # every other fixture, as set
    area_m2: np.ndarray
    canopy_height_m: float
    fixture_height_m: float | None

    def ppfd(self, dimming_pct: float | None) -> np.ndarray:
        if dimming_pct is None:
            return self.own_as_set + self.spill
        return self.own_full * (dimming_pct / 100.0) + self.spill

    def stats(self, dimming_pct: float | None) -> dict[str, float]:
        return mx.area_weighted_stats(self.ppfd(dimming_pct), self.area_m2)

    def canopy_flux_umol_s(self, dimming_pct: float | None) -> float:
        return float((self.ppfd(dimming_pct) * self.area_m2).sum())


class ZoneLightCache:
    """Real analyses of one zone at the heights a report asks for, each done once."""

    def __init__(self, room_file: RoomFile, zone: CanopyZone) -> None:
        self.room_file = room_file
        self.zone = zone
        self.own = hung_over(room_file.room, zone)
        self._own_ids = {f.id for f in self.own}
        self._types = {t.id: t for t in room_file.room.fixture_types}
        self._maps: dict[tuple[float, float | None], ZoneLight] = {}
        self.analyses = 0

    def power_w(self, dimming_pct: float | None) -> float:
        """Input power of the zone's own fixtures (those switched on) at a dimming, or as each is set."""
        on = [f for f in self.own if f.on]
        if dimming_pct is None:
            return sum(self._types[f.type_id].power_w * f.dimming_pct / 100.0 for f in on)
        return sum(self._types[f.type_id].power_w for f in on) * dimming_pct / 100.0

    def lowest_fixture_m(self) -> float | None:
        return min((f.hanging_height_m for f in self.own), default=None)

    def light(self, canopy_height_m: float, fixture_height_m: float | None) -> ZoneLight:
        key = (
            round(canopy_height_m * 1000 / HEIGHT_KEY_MM),
            None if fixture_height_m is None else round(fixture_height_m * 1000 / HEIGHT_KEY_MM),
        )
        if key not in self._maps:
            self._maps[key] = self._analyse(canopy_height_m, fixture_height_m)
        return self._maps[key]

    def _room_with(self, canopy_height_m: float, fixture_height_m: float | None, part: str) -> RoomFile:
        room = self.room_file.room
        zone = self.zone.model_copy(update={"canopy_height_m": canopy_height_m, "cycle": None, "greenhouse": None})
        fixtures = []
        for f in room.fixtures:
            mine = f.id in self._own_ids
            if part == "spill" and not mine:
                fixtures.append(f)
            elif part != "spill" and mine:
                update: dict = {}
                if fixture_height_m is not None:
                    update["hanging_height_m"] = fixture_height_m
                if part == "full":
                    update["dimming_pct"] = 100.0
                fixtures.append(f.model_copy(update=update))
        new_room = room.model_copy(update={"zones": [zone], "fixtures": fixtures})
        return self.room_file.model_copy(update={"room": new_room})

    def _zone_ppfd(self, room_file: RoomFile) -> np.ndarray:
        self.analyses += 1
        if not any(f.on for f in room_file.room.fixtures):
            grid = zone_grid(room_file.room.zones[0], room_file.room.grid_spacing_m)
            return np.zeros((grid.y_m.size, grid.x_m.size))
        result = analyse(room_file, include_grids=True)
        return np.asarray(result["zones"][0]["grid"]["ppfd"], dtype=float)

    def _analyse(self, canopy_height_m: float, fixture_height_m: float | None) -> ZoneLight:
        full = self._zone_ppfd(self._room_with(canopy_height_m, fixture_height_m, "full"))
        if all(f.dimming_pct == 100.0 for f in self.own):
            as_set = full
        else:
            as_set = self._zone_ppfd(self._room_with(canopy_height_m, fixture_height_m, "as_set"))
        spill = self._zone_ppfd(self._room_with(canopy_height_m, fixture_height_m, "spill"))
        zone = self.zone.model_copy(update={"canopy_height_m": canopy_height_m})
        area = zone_grid(zone, self.room_file.room.grid_spacing_m).cell_area_m2
        return ZoneLight(full, as_set, spill, area, canopy_height_m, fixture_height_m)
