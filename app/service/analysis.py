"""From a room file to the one analysis structure that the editor, the sheet, the API and the CLI show.

This is the service layer: it converts models to engine inputs
(:mod:`app.service.scene_builder`), calls the engine, and turns arrays into plain data.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass
from typing import Any

import numpy as np

from app.engine import electrical as elec
from app.engine import metrics as mx
from app.engine.budget import photon_budget
from app.engine.compute import compute_scene
from app.room import layout
from app.room.library import crops_for
from app.room.models import CanopyZone, Crop, Fixture, Room, RoomFile
from app.service.maintained import output_basis
from app.service.scene_builder import build_scene

UNIFORMITY_NOTE_BELOW = 0.7  # Leafcast's own prompt, no source: no horticultural pass mark is published
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


@dataclass(frozen=True)
class Region:
    """A rectangle the grower draws to compare areas (e.g. centre against edges)."""

    name: str
    x_m: float
    y_m: float
    width_m: float
    length_m: float


def zone_photoperiod_h(room: Room, zone: CanopyZone) -> float:
    return zone.photoperiod_h if zone.photoperiod_h is not None else room.schedule.photoperiod_h


def zone_below(room: Room, fixture: Fixture) -> CanopyZone | None:
    """The zone a fixture lights (the one layout rule, :func:`app.room.layout.zone_lit_by`)."""
    return layout.zone_lit_by(room.zones, fixture)


def _fixture_hours(room: Room) -> dict[str, float]:
    """Each fixture runs for the photoperiod of the zone it hangs over (the room's schedule if none)."""
    out = {}
    for f in room.fixtures:
        zone = zone_below(room, f)
        out[f.id] = zone_photoperiod_h(room, zone) if zone else room.schedule.photoperiod_h
    return out


def _round_grid(a: np.ndarray, digits: int = 1) -> list[list[float]]:
    return np.round(a.astype(float), digits).tolist()


def _warn(
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


def _nearest_fixture(room: Room, x: float, y: float) -> str | None:
    on = [f for f in room.fixtures if f.on]
    if not on:
        return None
    return min(on, key=lambda f: (f.x_m - x) ** 2 + (f.y_m - y) ** 2).id


def _photoperiod_warnings(zone: CanopyZone, crop: Crop, hours: float) -> list[dict[str, Any]]:
    out = []
    dark = 24.0 - hours
    need_dark = crop.min_dark_h
    if hours >= 24.0 and crop.continuous_light_injury:
        out.append(
            _warn(
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
            _warn(
                "short_dark_period",
                "warning",
                f"A {hours:g} h photoperiod leaves {dark:g} h of dark; {crop.name} needs at least {need_dark:g} h.",
                f"Shorten the photoperiod to {24 - need_dark:g} h or less.",
                zone.id,
            )
        )
    if crop.daylength == "short_day" and zone.stage == "flowering" and dark < SHORT_DAY_NIGHT_H:
        out.append(
            _warn(
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
            _warn(
                "long_day_night",
                "info",
                f"{crop.name} is a long-day crop: nights longer than about {LONG_DAY_NIGHT_H:g} h "
                f"({dark:g} h now) may delay flowering.",
                f"Lengthen the photoperiod to {24 - LONG_DAY_NIGHT_H:g} h or more.",
                zone.id,
            )
        )
    return out


def _region_stats(zl, region: Region) -> dict[str, Any] | None:
    g = zl.grid
    xs, ys = g.x_m, g.y_m
    mi = (xs >= region.x_m) & (xs <= region.x_m + region.width_m)
    mj = (ys >= region.y_m) & (ys <= region.y_m + region.length_m)
    if not mi.any() or not mj.any():
        return None
    sub = zl.ppfd[np.ix_(mj, mi)]
    area = g.cell_area_m2[np.ix_(mj, mi)]
    return {
        "name": region.name,
        "zone_id": g.id,
        "ppfd": mx.area_weighted_stats(sub, area),
        "area_m2": float(area.sum()),
    }


def analyse(
    room_file: RoomFile, *, with_budget: bool = False, regions: tuple[Region, ...] = (), include_grids: bool = True
) -> dict[str, Any]:
    """The whole analysis of a room: per-zone maps and figures, energy, circuits, warnings."""
    t0 = time.perf_counter()
    room = room_file.room
    crops = crops_for(room_file)
    scene = build_scene(room)
    lights = compute_scene(scene.emitters, scene.grids, scene.enclosure, scene.boxes)
    compute_ms = (time.perf_counter() - t0) * 1000
    types = {t.id: t for t in room.fixture_types}
    basis = output_basis(room)
    type_factor = {b["type_id"]: b["factor"] for b in basis["types"]}
    hours = _fixture_hours(room)
    emitted = sum(e.flux_umol_s for e in scene.emitters)

    warnings: list[dict[str, Any]] = []
    zones_out = []
    canopy_flux = 0.0
    canopy_photons_mol_day = 0.0
    for zone, zl in zip(room.zones, lights, strict=True):
        crop = crops[zone.crop_id]
        stage = crop.stages[zone.stage]
        photoperiod = zone_photoperiod_h(room, zone)
        ppfd = zl.ppfd
        area = zl.grid.cell_area_m2
        dli = mx.dli_mol_m2_d(ppfd, photoperiod)
        stats = mx.area_weighted_stats(ppfd, area)
        dli_stats = mx.area_weighted_stats(dli, area)
        in_band = (dli >= stage.dli_min) & (dli <= stage.dli_max)
        dark = dli < stage.dli_min
        hot = ppfd > stage.ppfd_stress_umol_m2_s
        band_area, band_share = mx.share_of_area(in_band, area)
        dark_area, dark_share = mx.share_of_area(dark, area)
        hot_area, hot_share = mx.share_of_area(hot, area)
        flux = float((ppfd * area).sum())
        direct_flux = float((zl.direct * area).sum())
        canopy_flux += flux
        canopy_photons_mol_day += flux * photoperiod * mx.DLI_FACTOR
        target_mid = 0.5 * (stage.dli_min + stage.dli_max)
        hours_for_min = float(mx.photoperiod_for_dli_h(stage.dli_min, stats["avg"])) if stats["avg"] > 0 else None
        hours_for_min_everywhere = (
            float(mx.photoperiod_for_dli_h(stage.dli_min, stats["min"])) if stats["min"] > 0 else math.inf
        )
        dim_scale_mid = target_mid / dli_stats["avg"] if dli_stats["avg"] > 0 else None
        xs, ys = zl.grid.x_m, zl.grid.y_m

        if dark_share > 0:
            b = mx.mask_bounds(dark, xs, ys)
            if hours_for_min_everywhere <= 24 - crop.min_dark_h:
                fix = (
                    f"Lengthen the photoperiod to {math.ceil(hours_for_min_everywhere * 4) / 4:g} h, "
                    "or lower or add a fixture over the dark area."
                )
            else:
                fix = "Add a fixture over the dark area, lower the fixtures nearby, or raise their dimming."
            warnings.append(
                _warn(
                    "dark_zone",
                    "warning" if dark_share < 0.5 else "error",
                    f"{dark_share:.0%} of {zone.name} ({dark_area:.2f} m²) gets less than the "
                    f"{stage.dli_min:g} mol m⁻² d⁻¹ that {crop.name.lower()} needs "
                    f"(lowest {dli_stats['min']:.1f}).",
                    fix,
                    zone.id,
                    where=b,
                )
            )
        if hot_share > 0:
            b = mx.mask_bounds(hot, xs, ys)
            fid = _nearest_fixture(room, 0.5 * (b[0] + b[2]), 0.5 * (b[1] + b[3]))
            f = next((f for f in room.fixtures if f.id == fid), None)
            dim_to = (f.dimming_pct * stage.ppfd_stress_umol_m2_s / stats["max"]) if f else None
            fix = (
                (
                    f"Raise fixture {fid} or dim it to about {max(10, math.floor(dim_to)):g} % "
                    f"(peak {stats['max']:.0f} against the {stage.ppfd_stress_umol_m2_s:g} limit)."
                )
                if f
                else "Raise or dim the fixtures."
            )
            warnings.append(
                _warn(
                    "hot_spot",
                    "warning",
                    f"{hot_share:.0%} of {zone.name} ({hot_area:.2f} m²) is above "
                    f"{stage.ppfd_stress_umol_m2_s:g} µmol m⁻² s⁻¹, where {crop.name.lower()} leaves are stressed.",
                    fix,
                    zone.id,
                    fid,
                    b,
                )
            )
        if dli_stats["avg"] > stage.dli_max and stats["avg"] > 0:
            hours_fit = float(mx.photoperiod_for_dli_h(stage.dli_max, stats["avg"]))
            warnings.append(
                _warn(
                    "over_target",
                    "info",
                    f"{zone.name} averages {dli_stats['avg']:.1f} mol m⁻² d⁻¹, above the "
                    f"{stage.dli_min:g}-{stage.dli_max:g} band: power is being spent for no gain.",
                    f"Shorten the photoperiod to about {math.floor(hours_fit * 4) / 4:g} h, or dim to about "
                    f"{max(10, math.floor(100 * stage.dli_max / dli_stats['avg'])):g} % of the present output.",
                    zone.id,
                )
            )
        if stats["avg"] > 0 and stats["min_over_avg"] < UNIFORMITY_NOTE_BELOW:
            warnings.append(
                _warn(
                    "uneven",
                    "info",
                    f"{zone.name}: uniformity min/avg is {stats['min_over_avg']:.2f} "
                    f"(Leafcast flags below {UNIFORMITY_NOTE_BELOW:g}, a default with no published source).",
                    "Spread the fixtures more evenly, raise them, or add one where it is darkest.",
                    zone.id,
                    where=mx.mask_bounds(ppfd <= stats["min"] * 1.05, xs, ys),
                )
            )
        if stats["avg"] == 0:
            warnings.append(_warn("unlit", "error", f"{zone.name} gets no light.", "Hang a fixture over it.", zone.id))
        warnings += _photoperiod_warnings(zone, crop, photoperiod)

        zone_out: dict[str, Any] = {
            "id": zone.id,
            "name": zone.name,
            "crop_id": crop.id,
            "crop_name": crop.name,
            "stage": zone.stage,
            "canopy_height_m": zone.canopy_height_m,
            "photoperiod_h": photoperiod,
            "rect": [zone.x_m, zone.y_m, zone.width_m, zone.length_m],
            "target": {
                "dli_min": stage.dli_min,
                "dli_max": stage.dli_max,
                "ppfd_min": float(mx.ppfd_for_dli(stage.dli_min, photoperiod)),
                "ppfd_max": float(mx.ppfd_for_dli(stage.dli_max, photoperiod)),
                "ppfd_stress": stage.ppfd_stress_umol_m2_s,
                "source": stage.source,
            },
            "ppfd": stats,
            "dli": dli_stats,
            "share_in_band": band_share,
            "dark": {"area_m2": dark_area, "share": dark_share, "outline": mx.mask_outline(dark, xs, ys)},
            "hot": {"area_m2": hot_area, "share": hot_share, "outline": mx.mask_outline(hot, xs, ys)},
            "photoperiod_for_target_h": hours_for_min,
            "dimming_scale_for_target_mid": dim_scale_mid,
            "canopy_flux_umol_s": flux,
            "direct_share": direct_flux / flux if flux > 0 else 0.0,
            "reflected_share": 1 - direct_flux / flux if flux > 0 else 0.0,
            "area_m2": float(area.sum()),
        }
        if include_grids:
            zone_out["grid"] = {
                "x_m": np.round(xs, 5).tolist(),
                "y_m": np.round(ys, 5).tolist(),
                "spacing_m": zl.grid.spacing_m,
                "ppfd": _round_grid(ppfd),
                "dli": _round_grid(dli, 2),
            }
        zones_out.append(zone_out)

    # Energy, heat, circuits.
    fixtures_out, load_by_circuit = [], {c.name: 0.0 for c in room.circuits}
    total_w = kwh_day = 0.0
    for f in room.fixtures:
        t = types[f.type_id]
        watts = t.power_w * f.dimming_pct / 100 if f.on else 0.0
        total_w += watts
        kwh_day += float(elec.energy_kwh(watts, hours[f.id]))
        load_by_circuit[f.circuit] = load_by_circuit.get(f.circuit, 0.0) + watts
        fixtures_out.append(
            {
                "id": f.id,
                "type_id": f.type_id,
                "type_name": t.name,
                "on": f.on,
                "ppf_umol_s": t.ppf_umol_s * f.dimming_pct / 100 * type_factor[t.id] if f.on else 0.0,
                "power_w": watts,
                "dimming_pct": f.dimming_pct,
                "circuit": f.circuit,
                "hours_per_day": hours[f.id],
                "weight_kg": t.weight_kg,
            }
        )
    v = room.schedule.supply_voltage_v
    circuits_out = []
    for c in room.circuits:
        load = load_by_circuit.get(c.name, 0.0)
        amps = float(elec.current_a(load, v))
        limit = float(elec.continuous_limit_a(c.breaker_a))
        circuits_out.append(
            {
                "name": c.name,
                "breaker_a": c.breaker_a,
                "load_w": load,
                "current_a": amps,
                "continuous_limit_a": limit,
                "limit_w": limit * v,
                "share_of_limit": amps / limit,
                "ok": amps <= limit,
            }
        )
        if amps > limit:
            warnings.append(
                _warn(
                    "circuit_overload",
                    "error",
                    f"Circuit {c.name} would carry {amps:.1f} A continuously; a {c.breaker_a:g} A breaker "
                    f"should carry at most {limit:.1f} A (80 % rule).",
                    "Move fixtures to another circuit, dim them, or have an electrician add a circuit.",
                    fixture=None,
                )
            )
    price = room.schedule.electricity_price_per_kwh
    umol_per_j = (emitted / total_w) if total_w > 0 else 0.0
    energy = {
        "power_w": total_w,
        "kwh_per_day": kwh_day,
        "kwh_per_month": kwh_day * elec.DAYS_PER_MONTH,
        "cost_per_day": kwh_day * price,
        "cost_per_month": kwh_day * price * elec.DAYS_PER_MONTH,
        "currency": room.schedule.currency,
        "price_per_kwh": price,
        "layout_umol_per_j": umol_per_j,
        "canopy_share_of_emitted": canopy_flux / emitted if emitted > 0 else 0.0,
        "canopy_mol_per_kwh": canopy_photons_mol_day / kwh_day if kwh_day > 0 else 0.0,
        "month_days": elec.DAYS_PER_MONTH,
    }
    heat = {"w": total_w, "btu_h": float(elec.heat_btu_h(total_w))}

    for f in room.fixtures:
        if f.on and zone_below(room, f) is None:
            warnings.append(
                _warn(
                    "fixture_off_canopy",
                    "info",
                    f"Fixture {f.id} does not hang over any canopy zone.",
                    "Move it over a bench, or switch it off.",
                    fixture=f.id,
                    where=[f.x_m, f.y_m, f.x_m, f.y_m],
                )
            )

    for b in basis["types"]:
        if b["beyond_limit"]:
            warnings.append(
                _warn(
                    "maintenance_beyond_projection",
                    "info",
                    f"{b['name']}: {b['age_h']:,.0f} h is beyond the {b['limit_h']:,.0f} h that its maintenance "
                    "data may be projected to (six times the test duration, IES TM-21); output is shown as at "
                    f"{b['limit_h']:,.0f} h and is likely lower.",
                    "Measure the canopy with a quantum sensor and enter the readings to fit the real output.",
                )
            )

    result: dict[str, Any] = {
        "room": {
            "name": room.name,
            "revision": room_file.revision,
            "display_units": room.display_units,
            "width_m": room.width_m,
            "length_m": room.length_m,
            "height_m": room.height_m,
        },
        "zones": zones_out,
        "fixtures": fixtures_out,
        "fixture_zones": layout.fixture_zones(room.zones, room.fixtures),
        "energy": energy,
        "heat": heat,
        "circuits": circuits_out,
        "emitted_umol_s": emitted,
        "output_basis": basis,
        "regions": [r for r in (_region_stats(zl, reg) for reg in regions for zl in lights) if r],
        "warnings": warnings,
        "cautions": CAUTIONS,
        "compute_ms": compute_ms,
    }
    if with_budget:
        b = photon_budget(scene.emitters, scene.grids, scene.enclosure, scene.boxes)
        result["budget"] = {
            "emitted_umol_s": b.emitted_umol_s,
            "zones_umol_s": b.zones_umol_s,
            "floor_umol_s": b.floor_umol_s,
            "obstacles_umol_s": b.obstacles_umol_s,
            "walls_absorbed_umol_s": b.walls_absorbed_umol_s,
            "escaped_umol_s": b.escaped_umol_s,
            "unresolved_umol_s": b.unresolved_umol_s,
            "accounted_umol_s": b.accounted_umol_s,
        }
    result["elapsed_ms"] = (time.perf_counter() - t0) * 1000
    return result
