"""The price the lights pay per kWh: the schedule's flat price, or the time-of-use tariff at today's hours."""

from __future__ import annotations

from app.engine import tariff as tf
from app.room.models import Schedule, Tariff


def profile_for(schedule: Schedule, tariff: Tariff | None = None) -> tf.WeekProfile:
    tariff = tariff or schedule.tariff
    windows = [
        tf.PriceWindow(tuple(w.days), w.start_h, w.end_h, w.price_per_kwh, w.peak)
        for w in (tariff.windows if tariff else [])
    ]
    return tf.week_profile(schedule.electricity_price_per_kwh, windows)


def effective_price_per_kwh(schedule: Schedule, power_kw: float, photoperiod_h: float) -> float:
    """Mean energy price over the hours the lights run now (demand charges are reported apart)."""
    t = schedule.tariff
    if t is None or photoperiod_h <= 0:
        return schedule.electricity_price_per_kwh
    week_cost_per_kw = float(tf.weekly_energy_cost(profile_for(schedule), 1.0, t.lights_on_h, photoperiod_h))
    return week_cost_per_kw / (photoperiod_h * tf.DAYS_PER_WEEK)


def tariff_report(room_file, zone_rows: list[dict]) -> dict | None:
    """Per zone: the cost of today's lights-on time against the cheapest one that keeps its dark period
    unbroken and its photoperiod; saving per month and per year.

    ``zone_rows`` carry ``zone_id``, ``zone_name``, ``power_w``, ``photoperiod_h``, ``min_dark_h``, ``why``.
    Each zone is placed on its own; the demand charge is billed per zone, which is the room's real peak when
    the zones' light periods overlap and an upper bound when they do not.
    """
    schedule = room_file.room.schedule
    t = schedule.tariff
    if t is None:
        return None
    profile = profile_for(schedule)
    month_days = 365.0 / 12.0
    rows = []
    for z in zone_rows:
        kw = z["power_w"] / 1000.0
        h = z["photoperiod_h"]
        args = (profile, kw, t.lights_on_h, h, month_days, t.demand_charge_per_kw, t.demand_in_peak_only)
        energy_now, demand_now = (float(v) for v in tf.monthly_cost(*args))
        row = {**z, "lights_on_now_h": t.lights_on_h, "cost_now_per_month": energy_now + demand_now}
        try:
            best = tf.cheapest_light_period(
                profile,
                kw,
                h,
                z["min_dark_h"],
                month_days,
                t.demand_charge_per_kw,
                t.demand_in_peak_only,
                t.lights_on_h,
            )
        except ValueError as exc:
            row.update(problem=str(exc), best=None, saving_per_month=0.0, saving_per_year=0.0)
        else:
            saving = row["cost_now_per_month"] - best.cost_per_month
            row.update(
                problem=None,
                best={
                    "lights_on_h": best.lights_on_h,
                    "lights_off_h": best.lights_off_h,
                    "dark_h": best.dark_h,
                    "energy_cost_per_month": best.energy_cost_per_month,
                    "demand_cost_per_month": best.demand_cost_per_month,
                    "cost_per_month": best.cost_per_month,
                },
                saving_per_month=saving,
                saving_per_year=12.0 * saving,
            )
        rows.append(row)
    hours = [i * tf.SLOT_H for i in range(tf.SLOTS_PER_DAY)]
    return {
        "zones": rows,
        "saving_per_month": sum(r["saving_per_month"] for r in rows),
        "saving_per_year": sum(r["saving_per_year"] for r in rows),
        "currency": schedule.currency,
        "price_hours": hours,
        "price_by_day": [
            profile.price_per_kwh[d * tf.SLOTS_PER_DAY : (d + 1) * tf.SLOTS_PER_DAY].tolist() for d in range(7)
        ],
        "demand_charge_per_kw": t.demand_charge_per_kw,
        "demand_in_peak_only": t.demand_in_peak_only,
    }
