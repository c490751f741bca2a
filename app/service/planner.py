"""Layout planner: how many fixtures, where, how high and how dimmed, for each zone's DLI band.

Searches arrangements with the real engine, not a rule of thumb:

- for each zone and candidate fixture type: rotation (0° or 90°), rows × columns
  that fit without overlap, evenly spaced or pushed towards the edges, straight
  or staggered rows, and a handful of hanging heights between the minimum
  clearance above the canopy and the highest the room (or the shelf above) allows;
- for each of those the map is computed once at full power; because PPFD is
  linear in dimming, the least dimming that puts the dark area within the
  allowance follows in closed form, and so does whether any dimming also keeps
  the peak under the crop's stress level and the average DLI within the band;
- feasible layouts are ranked by input power (or fixture count), then uniformity;
  the best are checked again on the room's own map spacing with the whole
  room's analysis (walls, neighbouring zones, circuits).

A layout "meets the target" when at most ``DARK_ALLOWANCE`` of the zone is below
the DLI band, no cell is above the stress PPFD, and the average DLI is not above
the band (Leafcast's own definition; no published pass mark exists).
"""

from __future__ import annotations

import logging
import math
import threading
import time
import uuid
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from app.engine.compute import compute_scene, covering_height_m
from app.engine.metrics import area_weighted_stats, ppfd_for_dli, value_at_area_share
from app.room.library import crops_for, fixture_library
from app.room.models import CanopyZone, Fixture, FixtureType, Room, RoomFile
from app.room.roomfile import consistency_problems, fixture_half_extent_m
from app.service.analysis import analyse, zone_photoperiod_h
from app.service.jobs_pool import BoundedExecutor
from app.service.maintained import factor_for
from app.service.scene_builder import build_scene, emitter_for, room_boxes, zone_grid

DARK_ALLOWANCE = 0.10  # share of a zone allowed below the band (Leafcast default, no source)
MIN_DIMMING = 0.10
PLANNER_POINTS_PER_SIDE = 28  # coarse map for the search; the best are re-checked on the room's spacing


@dataclass(frozen=True)
class PlanOptions:
    type_ids: tuple[str, ...] = ()
    objective: str = "power"  # or "count"
    max_power_w: float | None = None
    min_clearance_m: float = 0.15
    max_fixtures_per_zone: int = 48
    min_pitch_m: float = 0.10  # centre to centre, whatever the fixture's width
    heights: int = 5
    keep: int = 3
    seed: int = 0


@dataclass
class ZoneLayout:
    zone_id: str
    type_id: str
    rows: int
    cols: int
    rotation_deg: float
    above_canopy_m: float
    edge_weighted: bool
    staggered: bool
    dimming: float = 1.0
    power_w: float = 0.0
    ppfd: dict[str, float] = field(default_factory=dict)
    dark_share: float = 0.0
    positions: list[tuple[float, float]] = field(default_factory=list)
    type_name: str = ""

    @property
    def count(self) -> int:
        return len(self.positions)

    def key(self, objective: str) -> tuple:
        first = self.count if objective == "count" else self.power_w
        second = self.power_w if objective == "count" else self.count
        return (
            round(first, 6),
            round(second, 6),
            -round(self.ppfd.get("min_over_avg", 0.0), 6),
            self.type_id,
            self.rows,
            self.cols,
            self.rotation_deg,
            self.above_canopy_m,
            self.edge_weighted,
            self.staggered,
        )

    def describe(self) -> str:
        arr = f"{self.rows} × {self.cols}{' staggered' if self.staggered else ''}"
        return (
            f"{self.count} × {self.type_id} ({arr}, turned {self.rotation_deg:g}°), "
            f"{self.above_canopy_m:.2f} m above canopy, dimmed to {100 * self.dimming:.0f} %"
        )


def _max_height_m(room: Room, zone: CanopyZone) -> float:
    """Highest a fixture over the zone can hang: just under the shelf above it, or the ceiling."""
    cover = covering_height_m(zone_grid(zone, room.grid_spacing_m), room_boxes(room))
    return min(cover, room.height_m) - 0.01


def _positions(zone: CanopyZone, rows: int, cols: int, edge: bool, stagger: bool, hx: float, hy: float):
    """Centres of a rows × cols array over the zone; edge-weighted arrays put the outer fixtures nearer the edges."""

    def axis(start, extent, n, half):
        if n == 1:
            return [start + extent / 2]
        margin = (0.35 if edge else 0.5) * extent / n
        margin = max(margin, half)
        step = (extent - 2 * margin) / (n - 1)
        return [start + margin + k * step for k in range(n)]

    xs = axis(zone.x_m, zone.width_m, cols, hx)
    ys = axis(zone.y_m, zone.length_m, rows, hy)
    out = []
    for j, y in enumerate(ys):
        shift = 0.0
        if stagger and cols > 1 and j % 2 == 1:
            shift = 0.5 * (xs[1] - xs[0])
        for x in xs:
            xx = x + shift
            if stagger and j % 2 == 1 and xx > zone.x_m + zone.width_m - hx:
                continue
            out.append((round(xx, 4), round(y, 4)))
    return out


def _fits(room: Room, zone: CanopyZone, t: FixtureType, rot: float, pos, height: float) -> bool:
    hx, hy = fixture_half_extent_m(t.geometry.length_m, t.geometry.width_m, rot)
    for x, y in pos:
        if x - hx < -1e-6 or x + hx > room.width_m + 1e-6 or y - hy < -1e-6 or y + hy > room.length_m + 1e-6:
            return False
        for o in room.obstacles:
            if (
                o.z_m - 1e-6 <= height <= o.z_m + o.height_m + 1e-6
                and x + hx > o.x_m
                and x - hx < o.x_m + o.width_m
                and y + hy > o.y_m
                and y - hy < o.y_m + o.length_m
            ):
                return False
    # No two fixtures overlap.
    for a in range(len(pos)):
        for b in range(a + 1, len(pos)):
            if abs(pos[a][0] - pos[b][0]) < 2 * hx - 1e-6 and abs(pos[a][1] - pos[b][1]) < 2 * hy - 1e-6:
                return False
    return True


class Cancelled(Exception):
    pass


def _zone_search(
    room: Room,
    rf: RoomFile,
    zone: CanopyZone,
    types: list[FixtureType],
    opts: PlanOptions,
    progress,
    cancel: threading.Event,
) -> list[ZoneLayout]:
    crop = crops_for(rf)[zone.crop_id]
    stage = crop.stages[zone.stage]
    hours = zone_photoperiod_h(room, zone)
    need_ppfd = float(ppfd_for_dli(stage.dli_min, hours))
    band_max_ppfd = float(ppfd_for_dli(stage.dli_max, hours))
    scene = build_scene(room.model_copy(update={"fixtures": []}))
    # Matt-wall inter-reflection is left out of the search (it only adds light, and is costly per candidate);
    # the proposals are checked with it, by the full analysis, before they are offered.
    enclosure = replace(scene.enclosure, finish="absorbing") if scene.enclosure.finish == "diffuse" else scene.enclosure
    spacing = max(room.grid_spacing_m, max(zone.width_m, zone.length_m) / PLANNER_POINTS_PER_SIDE)
    grid = zone_grid(zone, spacing)
    area = grid.cell_area_m2
    hmin = zone.canopy_height_m + opts.min_clearance_m
    hmax = _max_height_m(room, zone)
    if hmax < hmin:
        return []
    heights = sorted({round(h, 3) for h in np.linspace(hmin, hmax if hmax - hmin < 1.2 else hmin + 1.2, opts.heights)})
    results: list[ZoneLayout] = []
    combos = []
    for t in types:
        for rot in (0.0, 90.0):
            hx, hy = fixture_half_extent_m(t.geometry.length_m, t.geometry.width_m, rot)
            max_cols = max(1, min(int(zone.width_m // max(2 * hx, opts.min_pitch_m)), opts.max_fixtures_per_zone))
            max_rows = max(1, min(int(zone.length_m // max(2 * hy, opts.min_pitch_m)), opts.max_fixtures_per_zone))
            for rows in range(1, max_rows + 1):
                for cols in range(1, max_cols + 1):
                    if rows * cols > opts.max_fixtures_per_zone:
                        continue
                    for edge in (False, True):
                        for stagger in (False, True) if rows > 1 and cols > 1 else (False,):
                            combos.append((t, rot, rows, cols, edge, stagger, hx, hy))
    kept = {t.id: factor_for(room, t) for t in types}  # output at the age the room's figures are shown
    rng = np.random.default_rng(opts.seed)
    order = rng.permutation(len(combos))  # the seed only orders the search; the ranking is total
    total = len(combos) * len(heights)
    done = 0
    for idx in order:
        t, rot, rows, cols, edge, stagger, hx, hy = combos[idx]
        if rot == 90.0 and t.geometry.kind == "point":
            done += len(heights)
            continue
        pos = _positions(zone, rows, cols, edge, stagger, hx, hy)
        for h in heights:
            if cancel.is_set():
                raise Cancelled
            done += 1
            if not _fits(room, zone, t, rot, pos, h):
                continue
            emitters = tuple(emitter_for(f"p{k}", t, x, y, h, rot, 100.0, kept[t.id]) for k, (x, y) in enumerate(pos))
            ppfd = compute_scene(emitters, (grid,), enclosure, scene.boxes)[0].ppfd.astype(float)
            p_dark = value_at_area_share(ppfd, area, DARK_ALLOWANCE)
            stats = area_weighted_stats(ppfd, area)
            d_low = max(MIN_DIMMING, need_ppfd / p_dark if p_dark > 0 else math.inf)
            d_high = min(1.0, stage.ppfd_stress_umol_m2_s / stats["max"], band_max_ppfd / stats["avg"])
            if d_low > d_high + 1e-9:
                continue
            d = math.ceil(d_low * 100) / 100  # dimmers are set in whole per cent
            if d > d_high + 1e-9:
                continue
            power = len(pos) * t.power_w * d
            if opts.max_power_w is not None and power > opts.max_power_w:
                continue
            scaled = {k: (v * d if k in ("avg", "min", "max") else v) for k, v in stats.items()}
            results.append(
                ZoneLayout(
                    zone.id,
                    t.id,
                    rows,
                    cols,
                    rot,
                    round(h - zone.canopy_height_m, 3),
                    edge,
                    stagger,
                    d,
                    power,
                    scaled,
                    float(((ppfd * d) < need_ppfd - 1e-9).mean()),
                    pos,
                )
            )
            progress(done / total, results)
    progress(1.0, results)
    results.sort(key=lambda r: r.key(opts.objective))
    return results


def apply_layouts(rf: RoomFile, layouts: list[ZoneLayout]) -> RoomFile:
    """The room with each planned zone's fixtures replaced by its layout, spread over the circuits."""
    room = rf.room
    zones = {z.id: z for z in room.zones}
    lib = fixture_library()
    types = {t.id: t for t in room.fixture_types}
    planned = {lay.zone_id for lay in layouts}

    def over(f, z):
        return (
            z.x_m <= f.x_m <= z.x_m + z.width_m
            and z.y_m <= f.y_m <= z.y_m + z.length_m
            and z.canopy_height_m < f.hanging_height_m <= _max_height_m(room, z) + 0.02
        )

    keep = [f for f in room.fixtures if not any(over(f, zones[zid]) for zid in planned)]
    fixtures = list(keep)
    taken = {f.id for f in fixtures}
    limits = {c.name: 0.8 * c.breaker_a * room.schedule.supply_voltage_v for c in room.circuits}
    load = {c.name: 0.0 for c in room.circuits}
    for f in keep:
        t = types[f.type_id]
        load[f.circuit] = load.get(f.circuit, 0.0) + t.power_w * f.dimming_pct / 100
    for lay in layouts:
        t = types.get(lay.type_id) or lib[lay.type_id]
        types[t.id] = t
        z = zones[lay.zone_id]
        for x, y in lay.positions:
            watts = t.power_w * lay.dimming
            circuit = next((c for c in load if load[c] + watts <= limits[c] + 1e-9), room.circuits[0].name)
            load[circuit] += watts
            k = 1
            while f"{lay.zone_id[:30]}-L{k}" in taken:
                k += 1
            fid = f"{lay.zone_id[:30]}-L{k}"
            taken.add(fid)
            fixtures.append(
                Fixture(
                    id=fid,
                    type_id=t.id,
                    x_m=x,
                    y_m=y,
                    hanging_height_m=round(z.canopy_height_m + lay.above_canopy_m, 4),
                    rotation_deg=lay.rotation_deg,
                    dimming_pct=round(100 * lay.dimming, 1),
                    circuit=circuit,
                )
            )
    used = {f.type_id for f in fixtures} | {t.id for t in room.fixture_types}
    new_room = room.model_copy(
        update={"fixtures": fixtures, "fixture_types": [t for tid, t in types.items() if tid in used]}
    )
    return rf.model_copy(update={"room": new_room})


def meets_target(result: dict[str, Any]) -> bool:
    if any(not c["ok"] for c in result["circuits"]):
        return False
    return all(
        z["dark"]["share"] <= DARK_ALLOWANCE + 1e-9
        and z["hot"]["share"] == 0
        and z["dli"]["avg"] <= z["target"]["dli_max"] + 1e-9
        for z in result["zones"]
    )


def plan(rf: RoomFile, opts: PlanOptions, progress=None, cancel: threading.Event | None = None) -> dict[str, Any]:
    """Propose up to ``opts.keep`` whole-room layouts that meet every zone's target, best first."""
    cancel = cancel or threading.Event()
    room = rf.room
    lib = fixture_library()
    types = [next((t for t in room.fixture_types if t.id == tid), None) or lib.get(tid) for tid in opts.type_ids]
    types = [t for t in types if t is not None] or list(room.fixture_types) or [lib["panel-0.6"]]
    t0 = time.perf_counter()
    first_feasible_s = None
    per_zone: list[list[ZoneLayout]] = []
    zones = sorted(room.zones, key=lambda z: z.id)
    for i, zone in enumerate(zones):

        def report(frac, found, i=i, zone_id=zone.id):
            nonlocal first_feasible_s
            if found and first_feasible_s is None and i == len(zones) - 1:
                first_feasible_s = time.perf_counter() - t0
            if progress:
                best = min(found, key=lambda r: r.key(opts.objective)).describe() if found else ""
                progress((i + frac) / len(zones), zone_id, len(found), best)

        per_zone.append(_zone_search(room, rf, zone, types, opts, report, cancel))
    proposals, seen = [], set()
    depth = max((len(z) for z in per_zone), default=0)
    for k in range(min(depth, 6 * opts.keep)):
        choice = [z[min(k, len(z) - 1)] for z in per_zone if z]
        # A layout that differs from one already offered only by a turn of a near-square fixture is no choice.
        signature = tuple((c.type_id, c.count, round(c.power_w), round(c.above_canopy_m, 2)) for c in choice)
        if signature in seen:
            continue
        seen.add(signature)
        if len(choice) != len(zones):
            break
        candidate = apply_layouts(rf, choice)
        if consistency_problems(candidate):
            continue
        result = analyse(candidate, include_grids=False)
        if not meets_target(result):
            continue
        if opts.max_power_w is not None and result["energy"]["power_w"] > opts.max_power_w + 1e-6:
            continue
        proposals.append(
            {
                "layouts": [lay.describe() for lay in choice],
                "room_file": candidate.model_dump(mode="json"),
                "figures": _figures(result),
                "fixtures": len(candidate.room.fixtures),
            }
        )
        if len(proposals) >= opts.keep:
            break
    unmet = [z.id for z, found in zip(zones, per_zone, strict=True) if not found]
    return {
        "proposals": proposals,
        "unmet_zones": unmet,
        "elapsed_s": time.perf_counter() - t0,
        "first_feasible_s": first_feasible_s,
        "searched": {z.id: len(found) for z, found in zip(zones, per_zone, strict=True)},
    }


def _figures(result: dict[str, Any]) -> dict[str, Any]:
    return {
        "zones": [
            {
                "id": z["id"],
                "name": z["name"],
                "ppfd": z["ppfd"],
                "dli": z["dli"],
                "target": z["target"],
                "share_in_band": z["share_in_band"],
                "dark_share": z["dark"]["share"],
            }
            for z in result["zones"]
        ],
        "energy": result["energy"],
        "heat": result["heat"],
        "circuits": result["circuits"],
    }


# -- check my setup ---------------------------------------------------------


def check_setup(rf: RoomFile, opts: PlanOptions | None = None) -> dict[str, Any]:
    """Does the room as it is meet each zone's target? If not, the smallest changes that do, in numbers."""
    opts = opts or PlanOptions()
    base = analyse(rf, include_grids=True)
    room = rf.room
    crops = crops_for(rf)
    types = room_types(room)
    out = []
    for z, a in zip(room.zones, base["zones"], strict=True):
        crop = crops[z.crop_id]
        stage = crop.stages[z.stage]
        ok = a["dark"]["share"] <= DARK_ALLOWANCE + 1e-9 and a["hot"]["share"] == 0 and a["dli"]["avg"] <= stage.dli_max
        fixes: list[dict[str, Any]] = []
        if not ok:
            # The same area-weighted rule as the search and as the dark share the analysis reports.
            p_dark = value_at_area_share(
                a["grid"]["ppfd"], zone_grid(z, room.grid_spacing_m).cell_area_m2, DARK_ALLOWANCE
            )
            hours = a["photoperiod_h"]
            mine = [
                f
                for f in room.fixtures
                if f.on
                and z.x_m <= f.x_m <= z.x_m + z.width_m
                and z.y_m <= f.y_m <= z.y_m + z.length_m
                and f.hanging_height_m > z.canopy_height_m
            ]
            # 1. Photoperiod: no hardware change.
            if p_dark > 0 and a["hot"]["share"] == 0:
                need_h = stage.dli_min * 1e6 / (p_dark * 3600)
                fits = need_h <= 24 - crop.min_dark_h and a["ppfd"]["avg"] * need_h * 0.0036 <= stage.dli_max
                if fits and need_h > hours:
                    fixes.append(
                        {
                            "kind": "photoperiod",
                            "text": f"Lengthen the photoperiod from {hours:g} h to {math.ceil(need_h * 4) / 4:g} h.",
                            "photoperiod_h": math.ceil(need_h * 4) / 4,
                        }
                    )
                if a["dli"]["avg"] > stage.dli_max:
                    short_h = stage.dli_max * 1e6 / (a["ppfd"]["avg"] * 3600)
                    if stage.dli_min * 1e6 / (p_dark * 3600) <= short_h:
                        fixes.append(
                            {
                                "kind": "photoperiod",
                                "text": f"Shorten the photoperiod from {hours:g} h to "
                                f"{math.floor(short_h * 4) / 4:g} h.",
                                "photoperiod_h": math.floor(short_h * 4) / 4,
                            }
                        )
            # 2. Dimming all fixtures over the zone by one factor (PPFD is linear in it).
            if mine and p_dark > 0:
                need_ppfd = float(ppfd_for_dli(stage.dli_min, hours))
                lo = need_ppfd / p_dark
                hi = min(
                    stage.ppfd_stress_umol_m2_s / a["ppfd"]["max"],
                    float(ppfd_for_dli(stage.dli_max, hours)) / a["ppfd"]["avg"],
                )
                top = max(f.dimming_pct for f in mine) / 100
                if lo <= hi and lo * top <= 1.0 and lo * min(f.dimming_pct for f in mine) / 100 >= MIN_DIMMING:
                    scale = math.ceil(lo * 100) / 100
                    fixes.append(
                        {
                            "kind": "dimming",
                            "scale": scale,
                            "text": f"Set the dimming of {', '.join(f.id for f in mine)} to {scale:.0%} of what it "
                            f"is now ({', '.join(f'{f.dimming_pct * scale:.0f} %' for f in mine[:4])}).",
                            "power_change_w": sum(types[f.type_id].power_w * f.dimming_pct / 100 for f in mine)
                            * (scale - 1),
                        }
                    )
            if not fixes:
                need_ppfd = float(ppfd_for_dli(stage.dli_min, hours))
                top = max((f.dimming_pct for f in mine), default=100) / 100
                if p_dark <= 0 or need_ppfd / p_dark * top > 1:
                    why = (
                        f"even at full power the darkest tenth of the zone would get about "
                        f"{p_dark / top:.0f} µmol m⁻² s⁻¹, short of the {need_ppfd:.0f} the band needs at {hours:g} h"
                    )
                else:
                    why = (
                        f"the darkest tenth gets {p_dark:.0f} and the average is {a['ppfd']['avg']:.0f} "
                        "µmol m⁻² s⁻¹, a wider spread than the band allows"
                    )
                fixes.append(
                    {
                        "kind": "note",
                        "text": f"Neither the photoperiod nor one dimming setting fits: {why}. Change the layout:",
                    }
                )
            # 3. Only when no setting fixes it: a new layout of the same type, or of other types (this zone only).
            same = [f.type_id for f in mine][:1] or [t.id for t in room.fixture_types][:1]
            searches = (
                ()
                if any(f["kind"] in ("photoperiod", "dimming") for f in fixes)
                else (("same type", tuple(same)), ("any library type", tuple(fixture_library())))
            )
            for label, ids in searches:
                sub = _zone_search(
                    room,
                    rf,
                    z,
                    [types.get(i) or fixture_library()[i] for i in ids],
                    PlanOptions(
                        type_ids=ids,
                        objective="count",
                        min_clearance_m=opts.min_clearance_m,
                        heights=3,
                        max_fixtures_per_zone=24,
                        min_pitch_m=0.15,
                    ),
                    lambda *_: None,
                    threading.Event(),
                )
                if sub:
                    best = sub[0]
                    fixes.append(
                        {
                            "kind": "layout",
                            "text": f"Re-hang with {label}: {best.describe()}; about "
                            f"{best.power_w:.0f} W, min/avg {best.ppfd['min_over_avg']:.2f}.",
                            "count": best.count,
                            "power_w": best.power_w,
                            "change_in_count": best.count - len(mine),
                        }
                    )
        out.append(
            {
                "zone_id": z.id,
                "name": z.name,
                "meets_target": ok,
                "dark_share": a["dark"]["share"],
                "hot_share": a["hot"]["share"],
                "dli_avg": a["dli"]["avg"],
                "band": [stage.dli_min, stage.dli_max],
                "fixes": fixes,
            }
        )
    return {"zones": out, "meets_target": all(z["meets_target"] for z in out)}


def room_types(room: Room) -> dict[str, FixtureType]:
    return {t.id: t for t in room.fixture_types}


# -- height and dimming curves ----------------------------------------------


def curves(rf: RoomFile, zone_id: str, fixture_ids: tuple[str, ...] = (), steps: int = 12) -> dict[str, Any]:
    """Average and peak PPFD on a zone against the hanging height of its fixtures, and against dimming."""
    room = rf.room
    z = next(zz for zz in room.zones if zz.id == zone_id)
    ids = set(fixture_ids) or {
        f.id
        for f in room.fixtures
        if z.x_m <= f.x_m <= z.x_m + z.width_m
        and z.y_m <= f.y_m <= z.y_m + z.length_m
        and f.hanging_height_m > z.canopy_height_m
    }
    chosen = [f for f in room.fixtures if f.id in ids]
    if not chosen:
        raise ValueError(f"no fixture hangs over zone '{zone_id}'")
    scene = build_scene(room)
    spacing = max(room.grid_spacing_m, max(z.width_m, z.length_m) / 60)
    grid = zone_grid(z, spacing)
    types = room_types(room)
    others = tuple(e for e in scene.emitters if e.id not in ids)
    lowest = min(f.hanging_height_m for f in chosen)
    top = _max_height_m(room, z) - (max(f.hanging_height_m for f in chosen) - lowest)
    heights = np.linspace(z.canopy_height_m + 0.1, max(top, z.canopy_height_m + 0.2), steps)
    rows = []
    for h in heights:
        dz = h - lowest
        em = tuple(
            emitter_for(
                f.id,
                types[f.type_id],
                f.x_m,
                f.y_m,
                f.hanging_height_m + dz,
                f.rotation_deg,
                f.dimming_pct,
                factor_for(room, types[f.type_id]),
            )
            for f in chosen
            if f.on
        )
        p = compute_scene(others + em, (grid,), scene.enclosure, scene.boxes)[0].ppfd
        s = area_weighted_stats(p, grid.cell_area_m2)
        rows.append({"above_canopy_m": float(h - z.canopy_height_m), "avg": s["avg"], "max": s["max"], "min": s["min"]})
    base = compute_scene(scene.emitters, (grid,), scene.enclosure, scene.boxes)[0].ppfd
    mine = compute_scene(others, (grid,), scene.enclosure, scene.boxes)[0].ppfd
    own = base - mine  # the chosen fixtures' share, which scales with their dimming
    dims = []
    cur = np.mean([f.dimming_pct for f in chosen])
    for d in np.linspace(10, 100, 10):
        p = mine + own * (d / cur)
        s = area_weighted_stats(p, grid.cell_area_m2)
        dims.append({"dimming_pct": float(d), "avg": s["avg"], "max": s["max"], "min": s["min"]})
    crop = crops_for(rf)[z.crop_id].stages[z.stage]
    hours = zone_photoperiod_h(room, z)
    return {
        "zone_id": z.id,
        "fixtures": sorted(ids),
        "heights": rows,
        "dimming": dims,
        "band_ppfd": [float(ppfd_for_dli(crop.dli_min, hours)), float(ppfd_for_dli(crop.dli_max, hours))],
        "stress_ppfd": crop.ppfd_stress_umol_m2_s,
        "current_above_canopy_m": lowest - z.canopy_height_m,
        "current_dimming_pct": float(cur),
    }


# -- background jobs ----------------------------------------------------------


@dataclass
class Job:
    id: str
    room_id: str
    progress: float = 0.0
    zone: str = ""
    found: int = 0
    best_so_far: str = ""
    done: bool = False
    cancelled: bool = False
    error: str | None = None
    result: dict[str, Any] | None = None
    cancel: threading.Event = field(default_factory=threading.Event)
    started: float = field(default_factory=time.time)
    position: Any = None  # () -> place in the executor's queue (0 = running), set by the JobBoard

    def public(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "room_id": self.room_id,
            "queue_position": self.position() if self.position and not self.done else None,
            "progress": self.progress,
            "zone": self.zone,
            "found": self.found,
            "done": self.done,
            "cancelled": self.cancelled,
            "error": self.error,
            "result": self.result,
        }


class JobBoard:
    """Planner runs on a bounded executor (one at a time, the rest queued); at most a few jobs are kept."""

    def __init__(self, keep: int = 16, workers: int = 1) -> None:
        self.jobs: dict[str, Job] = {}
        self.keep = keep
        self.lock = threading.Lock()
        self.pool = BoundedExecutor(workers=workers, max_queued=keep, name="plan")
        self.check_pool = BoundedExecutor(workers=workers, max_queued=keep, name="check")

    def start(self, room_id: str, rf: RoomFile, opts: PlanOptions) -> Job:
        job = Job(uuid.uuid4().hex[:12], room_id)
        with self.lock:
            if len(self.jobs) >= self.keep:
                for old in sorted(self.jobs.values(), key=lambda j: j.started)[: len(self.jobs) - self.keep + 1]:
                    old.cancel.set()
                    self.jobs.pop(old.id, None)
            self.jobs[job.id] = job

        def progress(frac, zone, found, best=""):
            job.progress, job.zone, job.found, job.best_so_far = frac, zone, found, best

        def run():
            try:
                if job.cancel.is_set():
                    raise Cancelled
                job.result = plan(rf, opts, progress, job.cancel)
            except Cancelled:
                job.cancelled = True
            except Exception as exc:  # reported to the page, never a traceback; logged with it
                logging.getLogger("leafcast.planner").exception("planner job %s failed", job.id)
                job.error = f"the planner stopped: {exc}"
            finally:
                job.done = True
                job.progress = 1.0 if not job.cancelled else job.progress

        job.position = lambda: self.pool.position(job.id)
        self.pool.submit(job.id, run)
        return job

    def get(self, job_id: str) -> Job | None:
        return self.jobs.get(job_id)
