"""A zone's grow cycle week by week: its light from the real analysis, the weeks off the band, verified fixes.

Each week's light comes from :class:`~app.service.zone_light.ZoneLightCache` (a real
analysis per canopy/fixture height pair; dimming scales the zone's own fixtures
linearly). A fix is only offered after the changed week has been computed again
with the same model and meets the band and the stress level.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from app.engine import cycle as cy
from app.engine import metrics as mx
from app.room import layout
from app.room.library import crops_for
from app.room.models import CanopyZone, Crop, RoomFile
from app.service.analysis import DEFAULT_MIN_DARK_H, LONG_DAY_NIGHT_H, SHORT_DAY_NIGHT_H
from app.service.energy_price import effective_price_per_kwh
from app.service.zone_light import ZoneLightCache

MIN_DIMMING_PCT = 10.0
PHOTOPERIOD_STEP_H = 0.25
HEIGHT_STEP_M = 0.05  # fixtures are moved in 5 cm steps when dimming and hours cannot fix a week
MIN_FIX_CLEARANCE_M = 0.15  # never lowered closer than this to the canopy (common practice, no source)
MAX_HEIGHT_TRIES = 6
ROUNDING = {"photoperiod_h": 0.25, "canopy_height_m": 0.001, "fixture_height_m": 0.001, "dimming_pct": 1.0}
BAND_EDGE_MARGIN = 0.03
DAYS_PER_MEAN_MONTH = 365.25 / 12  # aim 3 % inside the band so rounding does not land on its edge


@dataclass(frozen=True)
class PhotoperiodRule:
    min_h: float
    max_h: float
    why: str


def photoperiod_rule(crop: Crop, stage: str) -> PhotoperiodRule:
    """Shortest and longest photoperiod the crop's own rules allow in a stage."""
    dark = crop.min_dark_h
    why = f"{crop.name} needs {dark:g} h of dark" if dark > 0 else ""
    if crop.continuous_light_injury:
        dark = max(dark, DEFAULT_MIN_DARK_H)
        why = f"{crop.name} is injured by continuous light"
    if crop.daylength == "short_day" and stage == "flowering":
        dark = max(dark, SHORT_DAY_NIGHT_H)
        why = f"a short-day crop in flowering needs {SHORT_DAY_NIGHT_H:g} h of uninterrupted dark"
    low = PHOTOPERIOD_STEP_H
    if crop.daylength == "long_day" and stage == "flowering":
        low = 24.0 - LONG_DAY_NIGHT_H
        why += ("; " if why else "") + f"a long-day crop in flowering needs nights under {LONG_DAY_NIGHT_H:g} h"
    return PhotoperiodRule(low, 24.0 - dark, why)


def week_settings(zone: CanopyZone) -> dict[str, np.ndarray | list]:
    """Per week: stage, photoperiod, canopy height, fixture height (None = as hung), dimming (None = as set)."""
    c = zone.cycle
    weeks = [s.week for s in c.steps]
    ramps = [s.ramp for s in c.steps]
    idx = cy.step_index_by_week(weeks, c.weeks)

    def series(name: str, default):
        vals = [getattr(s, name) for s in c.steps]
        # A step without a value holds the default (None: as the fixtures are set); ramps only join steps
        # that both have a value (checked when the file is read).
        filled = [(math.nan if default is None else default) if v is None else v for v in vals]
        out = cy.week_values(weeks, filled, ramps, c.weeks)
        step = ROUNDING[name]  # ramped values land on what a timer, a winch or a dimmer can be set to
        return [None if math.isnan(v) else round(round(v / step) * step, 6) for v in out]

    return {
        "stage": [c.steps[i].stage for i in idx],
        "photoperiod_h": series("photoperiod_h", 0.0),
        "canopy_height_m": series("canopy_height_m", zone.canopy_height_m),
        "fixture_height_m": series("fixture_height_m", None),
        "dimming_pct": series("dimming_pct", None),
    }


def natural_by_week(zone: CanopyZone) -> list[float]:
    """Natural DLI at the bench in each week of the cycle: a greenhouse zone whose cycle has a start month
    gets the mean of the month each week's middle falls in; every other zone gets none."""
    c = zone.cycle
    if zone.greenhouse is None or c.start_month is None:
        return [0.0] * c.weeks
    from app.service.greenhouse import natural_by_month  # it imports this module's photoperiod rule

    monthly = natural_by_month(zone)["inside"]
    mid_day = np.arange(c.weeks) * cy.DAYS_PER_WEEK + 0.5 * cy.DAYS_PER_WEEK
    month = (c.start_month - 1 + np.floor(mid_day / DAYS_PER_MEAN_MONTH).astype(int)) % 12
    return [round(float(monthly[m]), 3) for m in month]


def _figures(light, dimming_pct, hours: float, natural_dli: float = 0.0) -> dict[str, float]:
    """PPFD of the fixtures, and the DLI the canopy gets: the fixtures' plus the sun's at the bench (greenhouse)."""
    s = light.stats(dimming_pct)
    return {
        "ppfd_avg": s["avg"],
        "ppfd_max": s["max"],
        "ppfd_min": s["min"],
        "dli_avg": float(mx.dli_mol_m2_d(s["avg"], hours)) + natural_dli,
        "dli_min": float(mx.dli_mol_m2_d(s["min"], hours)) + natural_dli,
    }


def _status(fig: dict[str, float], band: dict[str, float]) -> list[str]:
    out = []
    if fig["dli_avg"] < band["dli_min"] - 1e-9:
        out.append("below")
    if fig["dli_avg"] > band["dli_max"] + 1e-9:
        out.append("above")
    if fig["ppfd_max"] > band["ppfd_stress"] + 1e-9:
        out.append("stress")
    return out


def _dimming_for(light, hours: float, target_dli: float, stress: float) -> float | None:
    """Whole-percent dimming of the zone's fixtures that brings the average DLI to ``target_dli`` without
    exceeding ``stress`` anywhere (None if the own fixtures give no light)."""
    own = mx.area_weighted_stats(light.own_full, light.area_m2)["avg"]
    spill = mx.area_weighted_stats(light.spill, light.area_m2)["avg"]
    if own <= 0:
        return None
    pct = 100.0 * (float(mx.ppfd_for_dli(target_dli, hours)) - spill) / own
    pct = min(100.0, max(MIN_DIMMING_PCT, round(pct)))
    while pct > MIN_DIMMING_PCT and light.stats(pct)["max"] > stress:
        pct -= 1.0
    return pct


def _try(light, dimming, hours, band, natural_dli) -> dict[str, float] | None:
    fig = _figures(light, dimming, hours, natural_dli)
    return fig if not _status(fig, band) else None


def find_fix(cache: ZoneLightCache, week: dict[str, Any], band: dict[str, float], rule: PhotoperiodRule):
    """The first change that puts the week in the band below the stress level, re-computed; or None."""
    canopy, fixture_h, dim, hours = (
        week["canopy_height_m"],
        week["fixture_height_m"],
        week["dimming_pct"],
        week["photoperiod_h"],
    )
    light = cache.light(canopy, fixture_h)
    natural = week["dli_natural"]
    low, high = band["dli_min"] * (1 + BAND_EDGE_MARGIN), band["dli_max"] * (1 - BAND_EDGE_MARGIN)
    # What the fixtures must give: the band's target less the sun's share.
    target = (low if "below" in week["status"] else high if "above" in week["status"] else 0.5 * (low + high)) - natural
    tries: list[tuple[str, Any, float, float | None]] = []
    pct = _dimming_for(light, hours, target, band["ppfd_stress"])
    if pct is not None:
        tries.append(("dimming", light, hours, pct))
    now = light.stats(dim)["avg"]
    if now > 0 and target > 0:
        h = float(mx.photoperiod_for_dli_h(target, now))
        h = (
            math.ceil(h / PHOTOPERIOD_STEP_H) * PHOTOPERIOD_STEP_H
            if "below" in week["status"]
            else math.floor(h / PHOTOPERIOD_STEP_H) * PHOTOPERIOD_STEP_H
        )
        if rule.min_h <= h <= rule.max_h:
            tries.append(("photoperiod", light, h, dim))
    for kind, lt, h, d in tries:
        fig = _try(lt, d, h, band, natural)
        if fig:
            return _fix(kind, h, d, lt.fixture_height_m, fig)
    return _height_fix(cache, week, band, target) if target > 0 else None


def _height_fix(cache: ZoneLightCache, week, band, target):
    """Move the zone's fixtures 5 cm at a time (down for more light, up against stress), each step re-analysed."""
    start = week["fixture_height_m"] if week["fixture_height_m"] is not None else cache.lowest_fixture_m()
    if start is None:
        return None
    canopy, hours = week["canopy_height_m"], week["photoperiod_h"]
    direction = -1.0 if "below" in week["status"] else 1.0
    ceiling = layout.highest_hanging_m(cache.room_file.room, cache.zone)  # under a shelf over the zone, or the ceiling
    for k in range(1, MAX_HEIGHT_TRIES + 1):
        h_fix = round(start + direction * k * HEIGHT_STEP_M, 3)
        if h_fix < canopy + MIN_FIX_CLEARANCE_M or h_fix > ceiling:
            break
        light = cache.light(canopy, h_fix)
        pct = _dimming_for(light, hours, target, band["ppfd_stress"])
        if pct is None:
            return None
        fig = _try(light, pct, hours, band, week["dli_natural"])
        if fig:
            return _fix("height", hours, pct, h_fix, fig)
    return None


def _fix(kind: str, hours: float, dimming, fixture_h, fig) -> dict[str, Any]:
    return {
        "kind": kind,
        "photoperiod_h": hours,
        "dimming_pct": dimming,
        "fixture_height_m": fixture_h,
        "verified": {k: round(v, 2) for k, v in fig.items()},
    }


def cycle_report(room_file: RoomFile, zone: CanopyZone) -> dict[str, Any]:
    """Per week and per cycle: light, band, flags with verified fixes, energy, cost, heat and photons."""
    crop = crops_for(room_file)[zone.crop_id]
    cache = ZoneLightCache(room_file, zone)
    settings = week_settings(zone)
    natural = natural_by_week(zone)
    weeks_out = []
    for i in range(zone.cycle.weeks):
        w = {k: v[i] for k, v in settings.items()}
        w["dli_natural"] = natural[i]
        st = crop.stages[w["stage"]]
        band = {"dli_min": st.dli_min, "dli_max": st.dli_max, "ppfd_stress": st.ppfd_stress_umol_m2_s}
        light = cache.light(w["canopy_height_m"], w["fixture_height_m"])
        fig = _figures(light, w["dimming_pct"], w["photoperiod_h"], natural[i])
        rule = photoperiod_rule(crop, w["stage"])
        w.update(week=i + 1, band=band, **{k: round(v, 2) for k, v in fig.items()})
        w["status"] = _status(fig, band)
        w["power_w"] = cache.power_w(w["dimming_pct"])
        w["canopy_flux_umol_s"] = light.canopy_flux_umol_s(w["dimming_pct"])
        w["photoperiod_ok"] = rule.min_h - 1e-9 <= w["photoperiod_h"] <= rule.max_h + 1e-9
        w["photoperiod_rule"] = {"min_h": rule.min_h, "max_h": rule.max_h, "why": rule.why}
        w["fix"] = find_fix(cache, w, band, rule) if w["status"] else None
        weeks_out.append(w)
    area = float(cache.light(zone.canopy_height_m, None).area_m2.sum())
    power = [w["power_w"] for w in weeks_out]
    hours = [w["photoperiod_h"] for w in weeks_out]
    prices = [
        effective_price_per_kwh(room_file.room.schedule, p / 1000.0, h) for p, h in zip(power, hours, strict=True)
    ]
    kwh_weeks = np.asarray(power) * np.asarray(hours) * cy.DAYS_PER_WEEK / 1000.0
    mean_price = float((kwh_weeks * prices).sum() / kwh_weeks.sum()) if kwh_weeks.sum() > 0 else prices[0]
    totals = cy.cycle_totals(
        power, hours, [w["canopy_flux_umol_s"] for w in weeks_out], area, mean_price, zone.cycle.harvests
    )
    natural_mol = sum(natural) * cy.DAYS_PER_WEEK * area  # the sun's photons at the bench, apart from the fixtures'
    return {
        "zone_id": zone.id,
        "zone_name": zone.name,
        "crop_name": crop.name,
        "weeks": weeks_out,
        "totals": {
            **totals,
            "natural_mol": natural_mol,
            "mean_price_per_kwh": mean_price,
            "harvests": zone.cycle.harvests,
            "area_m2": area,
        },
        "flagged": sum(1 for w in weeks_out if w["status"]),
        "fixed": sum(1 for w in weeks_out if w["status"] and w["fix"]),
        "analyses": cache.analyses,
        "fixtures": [f.id for f in cache.own],
    }


def schedule_table(report: dict[str, Any], display_units: str) -> dict[str, Any]:
    """The cycle as a plain table for the layout sheet: one row per week, values formatted in the room's units."""
    from app.room.units import format_length

    def length(m):
        return "as hung" if m is None else format_length(m, display_units)

    rows = [
        [
            str(w["week"]),
            w["stage"],
            f"{w['photoperiod_h']:g} h",
            length(w["canopy_height_m"]),
            length(w["fixture_height_m"]),
            "as set" if w["dimming_pct"] is None else f"{w['dimming_pct']:g} %",
            f"{w['dli_avg']:.1f}",
            f"{w['band']['dli_min']:g}–{w['band']['dli_max']:g}",
            "ok" if not w["status"] else ", ".join(w["status"]),
        ]
        for w in report["weeks"]
    ]
    return {
        "title": f"{report['zone_name']}: grow cycle",
        "columns": ["Week", "Stage", "Light", "Canopy", "Fixtures", "Dimming", "DLI", "Band", "Check"],
        "rows": rows,
    }
