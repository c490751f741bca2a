"""The cycle-and-year page's one data structure: cycles, greenhouse months, tariff placement, payback."""

from __future__ import annotations

from typing import Any

from app.engine.compute import SceneError
from app.engine.greenhouse import GLAZING_TRANSMISSION  # numpy only: pvlib is imported where the sun is computed
from app.room.library import crops_for, fixture_library
from app.room.models import RoomFile
from app.room.roomfile import dump_room_file
from app.room.units import FT2_PER_M2
from app.service.analysis import CAUTIONS
from app.service.cycle import cycle_report, photoperiod_rule
from app.service.energy_price import tariff_report
from app.service.greenhouse import PLACES, greenhouse_report
from app.service.payback import payback_report
from app.service.zone_light import ZoneLightCache


def _guarded(fn, *args) -> dict[str, Any]:
    """A part that cannot be computed (a fixture moved into an obstacle, say) says why instead of failing the page."""
    try:
        return fn(*args)
    except (SceneError, ValueError) as exc:
        return {"problem": str(exc)}


def _tariff_rows(room_file: RoomFile) -> list[dict[str, Any]]:
    room = room_file.room
    crops = crops_for(room_file)
    rows = []
    for zone in room.zones:
        cache = ZoneLightCache(room_file, zone)
        power = cache.power_w(None)
        if power <= 0:
            continue
        rule = photoperiod_rule(crops[zone.crop_id], zone.stage)
        rows.append(
            {
                "zone_id": zone.id,
                "zone_name": zone.name,
                "power_w": power,
                "photoperiod_h": zone.photoperiod_h or room.schedule.photoperiod_h,
                "min_dark_h": 24.0 - rule.max_h,
                "why": rule.why,
            }
        )
    return rows


def year_view(room_id: str, room_file: RoomFile) -> dict[str, Any]:
    room = room_file.room
    return {
        "title": f"{room.name}: over the cycle and the year",
        "room_id": room_id,
        "room_file": dump_room_file(room_file),
        "display_units": room.display_units,
        "area_unit": "ft²" if room.display_units == "imperial" else "m²",
        "per_area_factor": 1 / FT2_PER_M2 if room.display_units == "imperial" else 1.0,
        "currency": room.schedule.currency,
        "cycles": [_guarded(cycle_report, room_file, z) for z in room.zones if z.cycle is not None],
        "greenhouses": [_guarded(greenhouse_report, room_file, z) for z in room.zones if z.greenhouse is not None],
        "tariff": _guarded(tariff_report, room_file, _tariff_rows(room_file)) if room.schedule.tariff else None,
        "payback": _guarded(payback_report, room_file) if room.payback else None,
        "cautions": CAUTIONS,
        "crops": {cid: c.model_dump(mode="json") for cid, c in crops_for(room_file).items()},
        "glazings": {k: {"transmission": v[0], "note": v[1]} for k, v in GLAZING_TRANSMISSION.items()},
        "places": {k: list(v) for k, v in PLACES.items()},
        "fixture_types": [
            {"id": t.id, "name": t.name, "ppf_umol_s": t.ppf_umol_s, "power_w": t.power_w}
            for t in {**{t.id: t for t in room.fixture_types}, **fixture_library()}.values()
        ],
    }
