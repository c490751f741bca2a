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
from app.service.notices import (  # noqa: F401 (CAUTIONS and the night rules are re-exported)
    CAUTIONS,
    DEFAULT_MIN_DARK_H,
    LONG_DAY_NIGHT_H,
    SHORT_DAY_NIGHT_H,
    nearest_fixture,
    photoperiod_warnings,
    room_warnings,
    warn,
)
from app.service.scene_builder import build_scene
from app.service.verdict import allowance_info, dark_allowance, zone_verdict

UNIFORMITY_NOTE_BELOW = 0.7  # Leafcast's own prompt, no source: no horticultural pass mark is published


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
    room_file: RoomFile,
    *,
    with_budget: bool = False,
    regions: tuple[Region, ...] = (),
    include_grids: bool = True,
    with_fixes: bool | str = True,
    before_trial=None,
) -> dict[str, Any]:
    """The whole analysis of a room: per-zone maps and figures, energy, circuits, warnings.

    With ``with_fixes`` each zone that misses its target gets a fix checked by analysing the changed room
    again (:mod:`app.service.advice`): the first kind that works, or one of each kind with ``"all"``. The
    verdict is :mod:`app.service.verdict`'s, with the room's allowance. ``before_trial`` (no arguments) is
    called before each fix is checked: check-my-setup's Cancel raises from it.
    """
    t0 = time.perf_counter()
    room = room_file.room
    crops = crops_for(room_file)
    scene = build_scene(room)
    lights = compute_scene(scene.emitters, scene.grids, scene.enclosure, scene.boxes)
    compute_ms = (time.perf_counter() - t0) * 1000
    types = {t.id: t for t in room.fixture_types}
    basis = output_basis(room)
    type_factor = {b["type_id"]: b["factor"] for b in basis["types"]}
    emitted = sum(e.flux_umol_s for e in scene.emitters)
    allowance = dark_allowance(room)

    warnings: list[dict[str, Any]] = []
    zones_out = []
    canopy_flux = canopy_photons_mol_day = 0.0
    for zone, zl in zip(room.zones, lights, strict=True):
        zone_out, zone_warnings, flux, photons = _zone_result(
            room, zone, zl, crops[zone.crop_id], allowance, include_grids
        )
        zones_out.append(zone_out)
        warnings += zone_warnings
        canopy_flux += flux
        canopy_photons_mol_day += photons
    fixtures_out, circuits_out, energy, heat, circuit_warnings = _energy_and_circuits(
        room, types, _fixture_hours(room), type_factor, emitted, canopy_flux, canopy_photons_mol_day
    )
    warnings += circuit_warnings + room_warnings(room, basis)

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
        "verdict": {
            **allowance_info(room),
            "meets_target": all(z["verdict"]["meets_target"] for z in zones_out) and all(c["ok"] for c in circuits_out),
        },
        "cautions": CAUTIONS,
        "compute_ms": compute_ms,
    }
    if with_budget:
        result["budget"] = _budget(scene)
    if with_fixes:
        from app.service.advice import attach_fixes  # advice re-analyses through this module

        attach_fixes(
            room_file,
            result,
            [zl.ppfd.astype(float) for zl in lights],
            [zl.grid.cell_area_m2 for zl in lights],
            every_kind=with_fixes == "all",
            before_trial=before_trial,
        )
    result["elapsed_ms"] = (time.perf_counter() - t0) * 1000
    return result


def _zone_result(
    room: Room, zone: CanopyZone, zl, crop: Crop, allowance: float, include_grids: bool
) -> tuple[dict[str, Any], list[dict[str, Any]], float, float]:
    """One zone's figures and warnings, and its canopy flux [µmol s⁻¹] and photons [mol d⁻¹]."""
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
    target_mid = 0.5 * (stage.dli_min + stage.dli_max)
    hours_for_min = float(mx.photoperiod_for_dli_h(stage.dli_min, stats["avg"])) if stats["avg"] > 0 else None
    dim_scale_mid = target_mid / dli_stats["avg"] if dli_stats["avg"] > 0 else None
    xs, ys = zl.grid.x_m, zl.grid.y_m

    warnings: list[dict[str, Any]] = []
    if dark_share > 0:
        within = dark_share <= allowance + 1e-9
        warnings.append(
            warn(
                "dark_zone",
                "info" if within else ("warning" if dark_share < 0.5 else "error"),
                f"{dark_share:.0%} of {zone.name} ({dark_area:.2f} m²) gets less than the "
                f"{stage.dli_min:g} mol m⁻² d⁻¹ that {crop.name.lower()} needs "
                f"(lowest {dli_stats['min']:.1f}); "
                + (
                    f"within the {allowance:.0%} allowance for dark area."
                    if within
                    else f"more than the {allowance:.0%} allowance for dark area."
                ),
                "Nothing to do: within the allowance."
                if within
                else "Lengthen the photoperiod, raise the dimming, lower the fixtures or add one over the dark area.",
                zone.id,
                where=mx.mask_bounds(dark, xs, ys),
            )
        )
    if hot_share > 0:
        b = mx.mask_bounds(hot, xs, ys)
        fid = nearest_fixture(room, 0.5 * (b[0] + b[2]), 0.5 * (b[1] + b[3]))
        fix = (
            f"Raise or dim the fixtures over it (peak {stats['max']:.0f} against the "
            f"{stage.ppfd_stress_umol_m2_s:g} limit)."
        )
        warnings.append(
            warn(
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
            warn(
                "over_target",
                "info",
                f"{zone.name} averages {dli_stats['avg']:.1f} mol m⁻² d⁻¹, above the "
                f"{stage.dli_min:g}-{stage.dli_max:g} band: power is being spent for no gain.",
                f"Shorten the photoperiod (about {math.floor(hours_fit * 4) / 4:g} h would bring the average "
                "to the top of the band) or dim the fixtures over it.",
                zone.id,
            )
        )
    if stats["avg"] > 0 and stats["min_over_avg"] < UNIFORMITY_NOTE_BELOW:
        warnings.append(
            warn(
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
        warnings.append(warn("unlit", "error", f"{zone.name} gets no light.", "Hang a fixture over it.", zone.id))
    warnings += photoperiod_warnings(zone, crop, photoperiod)

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
        "verdict": zone_verdict(dark_share, hot_share, dli_stats["avg"], stage.dli_max, allowance),
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
    return zone_out, warnings, flux, flux * photoperiod * mx.DLI_FACTOR


def _energy_and_circuits(
    room: Room,
    types: dict,
    hours: dict[str, float],
    type_factor: dict[str, float],
    emitted: float,
    canopy_flux: float,
    canopy_photons_mol_day: float,
) -> tuple[list, list, dict, dict, list]:
    """Per-fixture power, circuit loads against the continuous limit, energy, cost and heat."""
    warnings: list[dict[str, Any]] = []
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
                warn(
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

    return fixtures_out, circuits_out, energy, heat, warnings


def _budget(scene) -> dict[str, Any]:
    b = photon_budget(scene.emitters, scene.grids, scene.enclosure, scene.boxes)
    return {
        "emitted_umol_s": b.emitted_umol_s,
        "zones_umol_s": b.zones_umol_s,
        "floor_umol_s": b.floor_umol_s,
        "obstacles_umol_s": b.obstacles_umol_s,
        "walls_absorbed_umol_s": b.walls_absorbed_umol_s,
        "escaped_umol_s": b.escaped_umol_s,
        "unresolved_umol_s": b.unresolved_umol_s,
        "accounted_umol_s": b.accounted_umol_s,
    }
