"""The search over one zone: arrangements × hanging heights, dimmed in closed form, on the planning model.

PPFD is linear in dimming, so for each arrangement at full power the dimming that puts the dark area within
the room's allowance (or the average at the band's middle) follows in closed form, and so does whether any
dimming also keeps the peak under the crop's stress level and the average DLI within the band.
"""

from __future__ import annotations

import math
import threading

import numpy as np

from app.engine.metrics import area_weighted_stats, ppfd_for_dli, value_at_area_share
from app.room import layout
from app.room.library import crops_for
from app.room.models import CanopyZone, FixtureType, Room, RoomFile
from app.service.analysis import zone_photoperiod_h
from app.service.planner.arrange import clear_of_obstacles, half_extent, positions, turns
from app.service.planner.light import PlanningLight
from app.service.planner.options import DAYS_PER_YEAR, MIN_DIMMING, PlanOptions, ZoneLayout
from app.service.verdict import dark_allowance

FULL_MODEL_CANDIDATES = 4  # distinct arrangements per zone recomputed with the full model
REFINE_STEPS = 16  # the leaders' heights are refined on this many rungs
REFINE_KEEP = 1  # and the best few judged by the full model
PRUNE_SLACK = 0.8  # a count is skipped only when its flux is 20 % away from what the band can use
PLANNING_MARGIN = 0.015  # aim 1.5 % inside the band's edges: the proposals are analysed again on a finer grid


class Cancelled(Exception):
    pass


class ZoneTarget:
    """The zone's band as PPFD over its photoperiod, and the room's allowance."""

    def __init__(self, rf: RoomFile, zone: CanopyZone, opts: PlanOptions) -> None:
        room = rf.room
        stage = crops_for(rf)[zone.crop_id].stages[zone.stage]
        self.hours = zone_photoperiod_h(room, zone)
        self.need = float(ppfd_for_dli(stage.dli_min, self.hours)) * (1 + PLANNING_MARGIN)
        self.top = float(ppfd_for_dli(stage.dli_max, self.hours)) * (1 - PLANNING_MARGIN)
        self.middle = 0.5 * (self.need + self.top)
        self.stress = stage.ppfd_stress_umol_m2_s * (1 - PLANNING_MARGIN)
        self.allowance = dark_allowance(room)
        self.opts = opts
        self.price_kwh = room.schedule.electricity_price_per_kwh

    def dimming(self, ppfd: np.ndarray, area: np.ndarray) -> tuple[float, dict] | None:
        """The whole-per-cent dimming that meets the target (bottom or middle of the band), or None."""
        p_dark = value_at_area_share(ppfd, area, self.allowance)
        stats = area_weighted_stats(ppfd, area)
        if p_dark <= 0 or stats["max"] <= 0:
            return None
        low = max(MIN_DIMMING, self.need / p_dark)
        high = min(1.0, self.stress / stats["max"], self.top / stats["avg"])
        want = low if self.opts.target == "bottom" else min(max(self.middle / stats["avg"], low), high)
        d = math.ceil(round(want * 100, 6)) / 100  # dimmers are set in whole per cent
        if low > high + 1e-9 or d > high + 1e-9:
            return None
        return d, {k: (v * d if k in ("avg", "min", "max") else v) for k, v in stats.items()}

    def cost(self, count: int, t: FixtureType, power_w: float) -> float:
        kwh = power_w * self.hours * DAYS_PER_YEAR * self.opts.years / 1000
        return count * (t.price or 0.0) + kwh * self.price_kwh


def arrangements(room: Room, zone: CanopyZone, types: list[FixtureType], opts: PlanOptions):
    """(type, turn, rows, cols, edge, stagger, positions) that hang over the zone with the gaps; no repeats."""
    out, seen = [], set()
    for t in types:
        for rot in turns(t):
            hx, hy = half_extent(t, rot)
            pitch_x, pitch_y = 2 * hx + opts.min_gap_m, 2 * hy + opts.min_gap_m
            max_cols = max(1, min(int(zone.width_m // pitch_x) + 1, opts.max_fixtures_per_zone))
            max_rows = max(1, min(int(zone.length_m // pitch_y) + 1, opts.max_fixtures_per_zone))
            for rows in range(1, max_rows + 1):
                for cols in range(1, max_cols + 1):
                    if rows * cols > opts.max_fixtures_per_zone:
                        continue
                    for edge in (False, True):
                        for stagger in (False, True) if rows > 1 and cols > 1 else (False,):
                            pos = positions(room, zone, rows, cols, edge, stagger, hx, hy, opts.min_gap_m)
                            key = (t.id, rot, tuple(pos or ()))
                            if pos and key not in seen:
                                seen.add(key)
                                out.append((t, rot, rows, cols, edge, stagger, pos))
    return out


def heights_for(room: Room, zone: CanopyZone, opts: PlanOptions) -> list[float]:
    low = zone.canopy_height_m + opts.min_clearance_m
    high = min(layout.highest_hanging_m(room, zone), low + 1.2)
    if high < low:
        return []
    return sorted({round(h, 3) for h in np.linspace(low, high, opts.heights)})


def _layout(zone, t, rot, rows, cols, edge, stagger, pos, h, d, stats, ppfd, target, full, grid) -> ZoneLayout:
    power = len(pos) * t.power_w * d
    return ZoneLayout(
        zone.id,
        zone.name,
        t.id,
        t.name,
        rows,
        cols,
        rot,
        round(h - zone.canopy_height_m, 3),
        edge,
        stagger,
        d,
        power,
        target.cost(len(pos), t, power),
        stats,
        float(((ppfd * d) < target.need - 1e-9).mean()),
        list(pos),
        full,
        abs(zone.width_m - zone.length_m) <= 0.05 * max(zone.width_m, zone.length_m),
        grid,
    )


def zone_search(
    rf: RoomFile, zone: CanopyZone, types: list[FixtureType], opts: PlanOptions, progress, cancel: threading.Event
) -> list[ZoneLayout]:
    """Layouts for one zone that meet its target, best first, the leaders recomputed with the full model."""
    if cancel.is_set():
        raise Cancelled
    room = rf.room
    target = ZoneTarget(rf, zone, opts)
    heights = heights_for(room, zone, opts)
    light = PlanningLight(room, zone, heights)
    combos = arrangements(room, zone, types, opts)
    order = np.random.default_rng(opts.seed).permutation(len(combos))  # the seed orders the search only
    found: list[ZoneLayout] = []
    total = max(1, len(combos) * len(heights))
    done = 0
    for idx in order:
        t, rot, rows, cols, edge, stagger, pos = combos[idx]
        hx, hy = half_extent(t, rot)
        for h in heights:
            if cancel.is_set():
                raise Cancelled
            done += 1
            if not clear_of_obstacles(room, pos, hx, hy, h) or hopeless(light, target, t, rot, h, len(pos)):
                continue
            ppfd = light.estimate(t, rot, h, pos)
            dimmed = target.dimming(ppfd, light.area)
            if dimmed is None:
                continue
            on_grid = room.hanging_grid is not None
            lay = _layout(zone, t, rot, rows, cols, edge, stagger, pos, h, *dimmed, ppfd, target, False, on_grid)
            if opts.max_power_w is None or lay.power_w <= opts.max_power_w:
                found.append(lay)
        progress(0.85 * done / total, found)
    found.sort(key=lambda r: r.key(opts.objective))
    best = rank_on_full_model(found, light, target, types, opts, cancel)
    progress(1.0, best)
    return best


def hopeless(light: PlanningLight, target: ZoneTarget, t: FixtureType, rot: float, h: float, n: int) -> bool:
    """Too few fixtures to reach the band at 100 %, or so many that even 10 % overshoots it (with slack)."""
    avg = n * t.ppf_umol_s * light.flux_to_canopy(t, rot, h)
    return avg < PRUNE_SLACK * target.need or avg * MIN_DIMMING > target.top / PRUNE_SLACK


def rank_on_full_model(found, light: PlanningLight, target: ZoneTarget, types, opts, cancel) -> list[ZoneLayout]:
    """The leading distinct arrangements, their height refined, recomputed with the full model and ranked."""
    by_type = {t.id: t for t in types}
    leaders, seen = [], set()
    for lay in found:
        if lay.signature not in seen:
            seen.add(lay.signature)
            leaders.append(lay)
        if len(leaders) >= FULL_MODEL_CANDIDATES:
            break
    out = []
    for lay in leaders:
        t = by_type[lay.type_id]
        best = None
        for h in refined_heights(light, target, t, lay, cancel):
            if cancel.is_set():
                raise Cancelled
            ppfd = (
                light.full(t, lay.rotation_deg, h, lay.positions)
                if light.walls_return
                else light.direct(t, lay.rotation_deg, h, lay.positions, exact=True)
            )
            dimmed = target.dimming(ppfd, light.area)
            if dimmed is None:
                continue
            full = _layout(
                light.zone,
                t,
                lay.rotation_deg,
                lay.rows,
                lay.cols,
                lay.edge_weighted,
                lay.staggered,
                lay.positions,
                h,
                *dimmed,
                ppfd,
                target,
                True,
                lay.on_grid,
            )
            if best is None or full.key(opts.objective) < best.key(opts.objective):
                best = full
        if best is not None and (opts.max_power_w is None or best.power_w <= opts.max_power_w):
            out.append(best)
    out.sort(key=lambda r: r.key(opts.objective))
    return out


def refined_heights(light: PlanningLight, target: ZoneTarget, t: FixtureType, lay: ZoneLayout, cancel) -> list[float]:
    """The best heights of this arrangement on a fine ladder (planning estimate), for the full model to judge."""
    low, high = light.span
    ladder = np.linspace(low, high, REFINE_STEPS) if high > low else np.array([low])
    hx, hy = half_extent(t, lay.rotation_deg)
    scored = []
    for h in ladder:
        if cancel.is_set():
            raise Cancelled
        if not clear_of_obstacles(light.room, lay.positions, hx, hy, float(h)):
            continue
        dimmed = target.dimming(light.estimate(t, lay.rotation_deg, float(h), lay.positions), light.area)
        if dimmed is not None:
            scored.append((dimmed[0], round(float(h), 3)))
    scored.sort()
    return [h for _, h in scored[:REFINE_KEEP]] or [lay.above_canopy_m + light.zone.canopy_height_m]
