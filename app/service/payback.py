"""Payback of replacing fixtures with another type: both rooms analysed, year by year to the horizon."""

from __future__ import annotations

import math
from typing import Any

from app.engine import maintenance as mt
from app.engine import payback as pb
from app.engine import tariff as tf
from app.room.library import fixture_library
from app.room.models import RoomFile
from app.room.roomfile import RoomFileError, dump_room_file, parse_room_file
from app.service.analysis import analyse
from app.service.energy_price import effective_price_per_kwh, profile_for
from app.service.maintained import projection_for

DAYS_PER_YEAR = 365.0
L90_PERCENT = 90.0  # the rated hours asked for are L90: 90 % of the first output (IES TM-21 reports Lp life)
ASSUMED_L90_H = 50_000.0  # when neither the grower nor the fixture type says (common practice, no source)


def _variant_room(room_file: RoomFile, dimming_scale: float = 1.0) -> tuple[RoomFile, list[str]]:
    room = room_file.room
    plan = room.payback
    types = {t.id: t for t in room.fixture_types}
    new_type = types.get(plan.variant_type_id) or fixture_library()[plan.variant_type_id]
    doc = dump_room_file(room_file)
    if new_type.id not in types:
        doc["room"]["fixture_types"].append(new_type.model_dump(mode="json"))
    replaced = []
    for f in doc["room"]["fixtures"]:
        if plan.replace_type_id is None or f["type_id"] == plan.replace_type_id:
            f["type_id"] = new_type.id
            f["dimming_pct"] = min(100.0, max(10.0, round(f["dimming_pct"] * dimming_scale, 1)))
            replaced.append(f["id"])
    doc["room"]["payback"] = None
    return parse_room_file(doc), replaced


def _canopy_flux(result: dict[str, Any]) -> float:
    return sum(z["canopy_flux_umol_s"] for z in result["zones"])


def _yearly(room_file: RoomFile, result: dict[str, Any]) -> dict[str, float]:
    schedule = room_file.room.schedule
    e = result["energy"]
    kw = e["power_w"] / 1000.0
    hours = e["kwh_per_day"] / kw if kw > 0 else 0.0
    price = effective_price_per_kwh(schedule, kw, hours)
    t = schedule.tariff
    demand = 0.0
    if t is not None and t.demand_charge_per_kw > 0 and kw > 0:
        billed = not t.demand_in_peak_only or bool(tf.touches_peak(profile_for(schedule), t.lights_on_h, hours))
        demand = 12.0 * t.demand_charge_per_kw * kw if billed else 0.0
    kwh_year = e["kwh_per_day"] * DAYS_PER_YEAR
    return {
        "power_w": e["power_w"],
        "hours_per_day": hours,
        "kwh_year": kwh_year,
        "cost_year": kwh_year * price + demand,
        "demand_year": demand,
        "canopy_flux_umol_s": _canopy_flux(result),
        "mol_year_first": e["canopy_mol_per_kwh"] * kwh_year,
    }


def payback_report(room_file: RoomFile) -> dict[str, Any] | None:
    plan = room_file.room.payback
    if plan is None:
        return None
    # Both rooms are analysed as new and clean; age and dirt are applied year by year below.
    age = room_file.room.output_age.model_copy(update={"shown_at": "installation"})
    room_file = room_file.model_copy(update={"room": room_file.room.model_copy(update={"output_age": age})})
    now_result = analyse(room_file, include_grids=False)
    try:
        variant, replaced = _variant_room(room_file)
        var_result = analyse(variant, include_grids=False)
        if plan.match_light and replaced:
            flux_now, flux_var = _canopy_flux(now_result), _canopy_flux(var_result)
            if flux_var > 0:
                # Light is linear in each fixture's flux: scale only the replaced fixtures' share.
                kept_only = (
                    analyse(_without(variant, replaced), include_grids=False)
                    if len(replaced) < len(variant.room.fixtures)
                    else None
                )
                kept = _canopy_flux(kept_only) if kept_only else 0.0
                scale = (flux_now - kept) / (flux_var - kept) if flux_var > kept else 1.0
                variant, replaced = _variant_room(room_file, scale)
                var_result = analyse(variant, include_grids=False)
    except RoomFileError as exc:
        first = exc.problems[0].message if getattr(exc, "problems", None) else str(exc)
        return {
            "problem": f"The new type does not fit where the present fixtures hang ({first}): choose a type that "
            "fits, or move the fixtures in the editor first."
        }
    now, var = _yearly(room_file, now_result), _yearly(variant, var_result)
    years = plan.horizon_years
    room = room_file.room
    types = {t.id: t for t in variant.room.fixture_types}
    old_ids = {f.type_id for f in room.fixtures if f.id in set(replaced)}
    old_type = types[old_ids.pop()] if len(old_ids) == 1 else None
    proj_now = _projection(plan.rated_hours_now, old_type)
    proj_var = _projection(plan.rated_hours_variant, types[plan.variant_type_id])
    run = plan.hours_run_now if plan.hours_run_now is not None else (room.output_age.hours_in_service_h or 0.0)
    h_now, h_var = now["hours_per_day"] * DAYS_PER_YEAR, var["hours_per_day"] * DAYS_PER_YEAR
    dirt = room.output_age.dirt_factor  # the same dust on either fixture
    # The present fixtures have aged already: their curve starts at the hours they have run.
    mol_now = now["mol_year_first"] * dirt * pb.yearly_mean_share(proj_now.maintenance, run, h_now, years)
    mol_var = var["mol_year_first"] * dirt * pb.yearly_mean_share(proj_var.maintenance, 0.0, h_var, years)
    purchase = plan.price_per_fixture * len(replaced) + plan.install_cost
    result = pb.payback(purchase, now["cost_year"], var["cost_year"], years, plan.discount_rate)
    return {
        "problem": None,
        "variant_type_name": types[plan.variant_type_id].name,
        "replaced": replaced,
        "purchase_cost": purchase,
        "now": {
            **now,
            "mol_by_year": mol_now.tolist(),
            "cost_per_mol": _finite_or_none(pb.cost_per_mol(0.0, [now["cost_year"]] * years, mol_now)),
        },
        "variant": {
            **var,
            "mol_by_year": mol_var.tolist(),
            "cost_per_mol": _finite_or_none(pb.cost_per_mol(purchase, [var["cost_year"]] * years, mol_var)),
            "dimming_pct": sorted({f.dimming_pct for f in variant.room.fixtures if f.id in replaced}),
        },
        "maintenance_now": proj_now.source,
        "maintenance_variant": proj_var.source,
        "hours_run_now": run,
        "match_light": plan.match_light,
        "horizon_years": years,
        "discount_rate": plan.discount_rate,
        **result,
        "currency": room_file.room.schedule.currency,
    }


def _finite_or_none(value: float) -> float | None:
    # No photons delivered (every fixture off) makes the cost per mole infinite, which JSON cannot carry:
    # the page's ?format=json answered 500. None reads as "no light, no cost per mole".
    return value if math.isfinite(value) else None


def _projection(rated_l90_h: float | None, fixture_type) -> mt.Projection:
    """The grower's L90 for the comparison, else the type's own maintenance record, else an assumed L90."""
    if rated_l90_h is not None:
        return mt.from_rated_point(L90_PERCENT, rated_l90_h)
    recorded = projection_for(fixture_type) if fixture_type is not None else None
    if recorded is not None:
        return recorded
    p = mt.from_rated_point(L90_PERCENT, ASSUMED_L90_H)
    return mt.Projection(p.b, p.alpha_per_h, p.limit_h, p.source + " (assumed: no maintenance recorded)")


def _without(room_file: RoomFile, fixture_ids: list[str]) -> RoomFile:
    gone = set(fixture_ids)
    room = room_file.room.model_copy(update={"fixtures": [f for f in room_file.room.fixtures if f.id not in gone]})
    return room_file.model_copy(update={"room": room})
