"""A greenhouse zone over the year: natural DLI by month, the top-up the fixtures give, and its energy and cost."""

from __future__ import annotations

from functools import lru_cache
from typing import Any

import numpy as np

from app.engine import greenhouse as gh
from app.room.library import crops_for
from app.room.models import CanopyZone, RoomFile
from app.service.cycle import photoperiod_rule
from app.service.energy_price import effective_price_per_kwh
from app.service.zone_light import ZoneLightCache

MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"]

# A few places to choose from instead of typing coordinates (latitude, longitude, altitude in m; rounded,
# from memory of atlases).
PLACES: dict[str, tuple[float, float, float]] = {
    "Amsterdam, Netherlands": (52.37, 4.90, 0.0),
    "Almería, Spain": (36.84, -2.46, 20.0),
    "Ottawa, Canada": (45.42, -75.70, 70.0),
    "Denver, USA": (39.74, -104.99, 1600.0),
    "Phoenix, USA": (33.45, -112.07, 330.0),
    "Philadelphia, USA": (39.95, -75.17, 10.0),
    "Seattle, USA": (47.61, -122.33, 50.0),
    "Mexico City, Mexico": (19.43, -99.13, 2240.0),
    "Nairobi, Kenya": (-1.29, 36.82, 1700.0),
    "Tokyo, Japan": (35.68, 139.69, 40.0),
    "Melbourne, Australia": (-37.81, 144.96, 30.0),
    "Helsinki, Finland": (60.17, 24.94, 20.0),
}


@lru_cache(maxsize=64)
def _clear_sky_mj(lat: float, lon: float, alt: float) -> tuple[float, ...]:
    return tuple(gh.clear_sky_monthly_insolation_mj_m2(lat, lon, alt))


def site_of(zone: CanopyZone) -> tuple[float, float, float]:
    g = zone.greenhouse
    if g.place in PLACES:
        return PLACES[g.place]
    return g.latitude_deg, g.longitude_deg, g.altitude_m


def transmission_of(zone: CanopyZone) -> tuple[float, str]:
    g = zone.greenhouse
    if g.transmission is not None:
        return g.transmission, "set by the grower"
    return gh.GLAZING_TRANSMISSION[g.glazing]


def natural_by_month(zone: CanopyZone) -> dict[str, Any]:
    """Outdoor and bench-level natural DLI by month, from the grower's figures or the clear-sky model."""
    g = zone.greenhouse
    trans, trans_note = transmission_of(zone)
    if g.outdoor_dli_by_month is not None:
        outdoor = np.asarray(g.outdoor_dli_by_month, dtype=float)
        inside = gh.natural_dli_inside(outdoor, trans)
        source = "monthly outdoor DLI typed by the grower"
        clear = None
    else:
        lat, lon, alt = site_of(zone)
        clear = np.asarray(_clear_sky_mj(round(lat, 3), round(lon, 3), round(alt)))
        outdoor = gh.dli_from_insolation(clear)
        inside = gh.natural_dli_inside(outdoor, trans, g.sky_share)
        source = (
            f"clear-sky model (pvlib, Ineichen-Perez) at {lat:.2f}°, {lon:.2f}°, × {g.sky_share:g} of clear-sky sun"
        )
    return {
        "outdoor_clear_sky_mj_m2_d": None if clear is None else np.round(clear, 2).tolist(),
        "outdoor_dli": np.round(outdoor * (1 if clear is None else g.sky_share), 2).tolist(),
        "inside_dli": np.round(inside, 2).tolist(),
        "transmission": trans,
        "transmission_note": trans_note,
        "source": source,
        "inside": inside,
    }


def greenhouse_report(room_file: RoomFile, zone: CanopyZone) -> dict[str, Any]:
    """Natural, supplemental and target DLI by month; hours or dimming of the fixtures; energy and cost."""
    crop = crops_for(room_file)[zone.crop_id]
    stage = crop.stages[zone.stage]
    target = zone.greenhouse.target_dli or stage.dli_min
    nat = natural_by_month(zone)
    need = gh.supplemental_need(nat.pop("inside"), target)
    cache = ZoneLightCache(room_file, zone)
    light = cache.light(zone.canopy_height_m, None)
    ppfd = light.stats(None)["avg"]
    rule = photoperiod_rule(crop, zone.stage)
    hours, delivered = gh.supplemental_hours(need, ppfd, rule.max_h)
    schedule = room_file.room.schedule
    photoperiod = zone.photoperiod_h or schedule.photoperiod_h
    full = cache.light(zone.canopy_height_m, None).stats(100.0)["avg"]
    dimming = gh.dimming_for_need(need, full, min(photoperiod, rule.max_h))
    power = cache.power_w(None)
    kwh = gh.monthly_energy_kwh(power, hours)
    price = np.array([effective_price_per_kwh(schedule, power / 1000.0, h) if h > 0 else 0.0 for h in hours])
    cost = kwh * price
    short = delivered < need - 1e-6
    return {
        "zone_id": zone.id,
        "zone_name": zone.name,
        "crop_name": crop.name,
        "months": MONTHS,
        **nat,
        "target_dli": target,
        "target_note": "set by the grower" if zone.greenhouse.target_dli else f"bottom of the {zone.stage} band",
        "supplemental_need_dli": np.round(need, 2).tolist(),
        "supplemental_dli": np.round(delivered, 2).tolist(),
        "fixture_ppfd_avg": ppfd,
        "hours_per_day": np.round(hours, 2).tolist(),
        "max_hours": rule.max_h,
        "max_hours_why": rule.why,
        "dimming_at_photoperiod_pct": np.round(dimming, 0).tolist(),
        "photoperiod_h": min(photoperiod, rule.max_h),
        "power_w": power,
        "kwh_by_month": np.round(kwh, 1).tolist(),
        "cost_by_month": np.round(cost, 2).tolist(),
        "kwh_year": float(kwh.sum()),
        "cost_year": float(cost.sum()),
        "short_months": [MONTHS[i] for i in np.flatnonzero(short)],
        "currency": schedule.currency,
    }
