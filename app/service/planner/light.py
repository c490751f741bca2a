"""The planner's light model: the engine's direct light plus a cheap, checked estimate of the walls' light.

Every candidate's direct light (with obstacles' shadows) comes from the engine on a coarse planning grid. The
light the walls return (mirror images for film, radiosity for matt paint) is too costly to compute for every
candidate, and leaving it out makes a white room look 30-45 % darker than it is. It is estimated from the full
model's wall light of one fixture of the type over the zone's centre, at the lowest and highest hanging heights
searched (linear in between), per µmol/s that misses the canopy directly, scaled by the candidate's own missed
flux (the flux the walls can return: a spread array sends more to the walls than a central one). tests/service/test_planner_light.py checks the estimate against
the full model; the leading candidates are then recomputed with the full model (:meth:`PlanningLight.full`, the
engine's own direct, mirror-image and radiosity terms), which ranks them, and the proposals are analysed again,
whole, on the room's own grid.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from app.engine.compute import canopy_slabs, compute_scene
from app.engine.mirror_images import specular_map
from app.engine.patch_transfer import diffuse_map
from app.engine.radiosity import patch_irradiance, radiosity_operator
from app.engine.scene import Grid
from app.room.models import CanopyZone, FixtureType, Room
from app.service.maintained import factor_for
from app.service.planner.options import POINTS_PER_SIDE
from app.service.scene_builder import build_scene, emitter_for, zone_grid


class PlanningLight:
    """PPFD maps at full power on one zone's planning grid, for candidate arrays of one fixture type."""

    def __init__(self, room: Room, zone: CanopyZone, heights_m: list[float]) -> None:
        self.room, self.zone = room, zone
        scene = build_scene(room.model_copy(update={"fixtures": []}))
        spacing = max(room.grid_spacing_m, max(zone.width_m, zone.length_m) / POINTS_PER_SIDE)
        self.grid: Grid = zone_grid(zone, spacing)
        self.area = self.grid.cell_area_m2
        self.enclosure = scene.enclosure
        self.open_air = replace(scene.enclosure, finish="absorbing", reflectance=0.0, surfaces=())
        self.boxes = scene.boxes
        # Matt-wall light is blocked by every canopy, as in the analysis (the same radiosity operator).
        self.blockers = scene.boxes + canopy_slabs(scene.grids)
        mirror_ceiling = scene.enclosure.mirror_reflectance("ceiling") > 0  # returns a table's upward light
        self.walls_return = scene.enclosure.has_specular or scene.enclosure.has_diffuse or mirror_ceiling
        self.cuts = tuple(sorted({round(g.z_m, 6) for g in scene.grids}))  # as compute_scene splits wall rows
        self.span = (min(heights_m), max(heights_m)) if heights_m else (0.0, 0.0)
        self._reference: dict[tuple, np.ndarray] = {}
        self._direct: dict[tuple, np.ndarray] = {}
        self._factors: dict[str, float] = {}

    def factor(self, t: FixtureType) -> float:
        """The type's output at the age the room's figures are shown (maintained output), 1 when new."""
        if t.id not in self._factors:
            self._factors[t.id] = factor_for(self.room, t)
        return self._factors[t.id]

    def _emitters(self, t: FixtureType, rot: float, height_m: float, pos) -> tuple:
        k = self.factor(t)
        return tuple(emitter_for(f"p{i}", t, x, y, height_m, rot, 100.0, k) for i, (x, y) in enumerate(pos))

    def direct(self, t: FixtureType, rot: float, height_m: float, pos, exact: bool = False) -> np.ndarray:
        """Sum of each fixture's direct map; a fixture's map is computed once per type, turn, height and place.

        For the search (not ``exact``) places are taken on a lattice of half the planning spacing, so the many
        arrangements share their fixtures' maps; the full model uses the exact places.
        """
        out = np.zeros_like(self.area)
        step = 0.5 * self.grid.spacing_m
        for x, y in pos:
            if not exact:
                x, y = round(round(x / step) * step, 4), round(round(y / step) * step, 4)
            key = (t.id, rot, round(height_m, 4), x, y)
            one = self._direct.get(key)
            if one is None:
                em = (emitter_for("p", t, x, y, height_m, rot, 100.0, self.factor(t)),)
                one = compute_scene(em, (self.grid,), self.open_air, self.boxes)[0].ppfd.astype(float)
                self._direct[key] = one
            out += one
        return out

    def flux_to_canopy(self, t: FixtureType, rot: float, height_m: float) -> float:
        """Canopy-average PPFD per µmol/s of one central fixture, walls included (for pruning hopeless counts)."""
        centre = [(self.zone.x_m + self.zone.width_m / 2, self.zone.y_m + self.zone.length_m / 2)]
        one = self.estimate(t, rot, height_m, centre) / t.ppf_umol_s
        return float((one * self.area).sum() / self.area.sum())

    def walls(self, emitters: tuple) -> np.ndarray:
        """The walls' light on the planning grid with the full model (mirror images or radiosity)."""
        enc = self.enclosure
        if not self.walls_return or not emitters:
            return np.zeros_like(self.area)
        out = np.zeros_like(self.area)
        if enc.has_specular or enc.mirror_reflectance("ceiling") > 0:
            out = out + sum(specular_map(e, self.grid, enc, self.boxes).astype(float) for e in emitters)
        if enc.has_diffuse:
            e_patch = sum(patch_irradiance(e, enc, self.blockers, self.cuts) for e in emitters)
            exitance = radiosity_operator(enc, self.blockers, self.cuts) @ e_patch
            out = out + diffuse_map(enc, self.grid, exitance, self.cuts, self.blockers).astype(float)
        return out

    def full(self, t: FixtureType, rot: float, height_m: float, pos) -> np.ndarray:
        return self.direct(t, rot, height_m, pos, exact=True) + self.walls(self._emitters(t, rot, height_m, pos))

    def walls_per_flux(self, t: FixtureType, rot: float, height_m: float) -> np.ndarray:
        """Wall light per µmol/s emitted, from one fixture over the zone's centre (full model), by height."""
        lo, hi = self.span
        maps = [self._reference_at(t, rot, h) for h in (lo, hi)]
        w = 0.0 if hi <= lo else (height_m - lo) / (hi - lo)
        return (1 - w) * maps[0] + w * maps[1]

    def _reference_at(self, t: FixtureType, rot: float, height_m: float) -> np.ndarray:
        key = (t.id, rot, round(height_m, 4))
        if key not in self._reference:
            centre = [(self.zone.x_m + self.zone.width_m / 2, self.zone.y_m + self.zone.length_m / 2)]
            missed = self.missed_flux(t, self.direct(t, rot, height_m, centre), 1)
            self._reference[key] = self.walls(self._emitters(t, rot, height_m, centre)) / max(missed, 1e-9)
        return self._reference[key]

    def missed_flux(self, t: FixtureType, direct: np.ndarray, count: int) -> float:
        """Flux that does not land on this canopy directly [µmol/s]: what the walls can return."""
        emitted = count * t.ppf_umol_s * self.factor(t)
        return max(emitted - float((direct * self.area).sum()), 0.0)

    def estimate(self, t: FixtureType, rot: float, height_m: float, pos) -> np.ndarray:
        """Direct light from the engine plus the walls' light scaled from the reference."""
        est = self.direct(t, rot, height_m, pos)
        if self.walls_return:
            est = est + self.walls_per_flux(t, rot, height_m) * self.missed_flux(t, est, len(pos))
        return est
