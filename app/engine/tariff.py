"""Time-of-use electricity prices and where to put the light period in them.

A week is 168 hours, Monday 00:00 first. Prices are held as a piecewise-constant
profile on quarter-hour slots; the cost of running a load over any interval is
the exact integral of that profile (a cumulative sum, interpolated inside a slot).

The light period is one unbroken block that starts at the same clock time every
day. That is the rule that keeps the dark period unbroken and equal every night:
if the start moved from one day to the next, one night would be shortened by the
move. Short-day crops in flowering need long, uninterrupted nights and long-day
crops need short ones, so the length of the light period is never changed here,
only its start; the caller passes the dark period the crop needs and a
photoperiod that would leave less is refused.

References
----------
- Short-day crops flower under long nights (at least 12 h of uninterrupted dark);
  many long-day crops need nights under about 10 h (Currey C.J., Lopez R.G. &
  Runkle E.S., Purdue Extension HO-253; Runkle E., photoperiod articles).
- A demand charge bills the highest power drawn in the billing period, per kW,
  whatever the hours of use (common tariff practice, no source).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

HOURS_PER_DAY = 24.0
DAYS_PER_WEEK = 7
HOURS_PER_WEEK = HOURS_PER_DAY * DAYS_PER_WEEK
SLOT_H = 0.25  # quarter-hour slots: the finest step tariffs are usually written in
SLOTS_PER_DAY = int(HOURS_PER_DAY / SLOT_H)
SLOTS_PER_WEEK = SLOTS_PER_DAY * DAYS_PER_WEEK
START_STEP_H = 0.25  # candidate lights-on times are on the quarter hour


@dataclass(frozen=True)
class PriceWindow:
    """A price that applies on some weekdays between two clock times.

    ``days`` are 0 = Monday ... 6 = Sunday. ``end_h`` <= ``start_h`` wraps past
    midnight into the next day. ``peak`` marks the hours in which a demand
    charge counts (when the tariff bills demand only in peak hours).
    """

    days: tuple[int, ...]
    start_h: float
    end_h: float
    price_per_kwh: float
    peak: bool = False


@dataclass(frozen=True)
class WeekProfile:
    price_per_kwh: np.ndarray  # (SLOTS_PER_WEEK,)
    peak: np.ndarray  # (SLOTS_PER_WEEK,) bool


def week_profile(base_price_per_kwh: float, windows: Sequence[PriceWindow]) -> WeekProfile:
    """Price per quarter-hour slot over the week; later windows override earlier ones.

    Window edges are rounded to the nearest quarter hour.
    """
    price = np.full(SLOTS_PER_WEEK, float(base_price_per_kwh))
    peak = np.zeros(SLOTS_PER_WEEK, dtype=bool)
    for w in windows:
        a = round(w.start_h / SLOT_H) % SLOTS_PER_DAY
        b = round(w.end_h / SLOT_H) % SLOTS_PER_DAY
        n = (b - a) % SLOTS_PER_DAY or SLOTS_PER_DAY  # equal edges: the whole day
        for d in w.days:
            idx = (d * SLOTS_PER_DAY + a + np.arange(n)) % SLOTS_PER_WEEK
            price[idx] = w.price_per_kwh
            peak[idx] = peak[idx] | w.peak
    return WeekProfile(price, peak)


def _cumulative_week(values: np.ndarray) -> np.ndarray:
    """Integral of a slot profile from the week's start, at every slot edge [value·h]."""
    return np.concatenate([[0.0], np.cumsum(values * SLOT_H)])


def interval_integral(values: np.ndarray, start_h, length_h) -> np.ndarray:
    """Exact integral of a slot profile over [start, start + length) on the circular week [value·h].

    ``start_h`` and ``length_h`` broadcast; lengths up to a whole week.
    """
    cum = _cumulative_week(np.asarray(values, dtype=float))
    week_total = cum[-1]
    edges_h = np.arange(cum.size) * SLOT_H

    def at(t):
        t = np.asarray(t, dtype=float)
        turns = np.floor(t / HOURS_PER_WEEK)
        return turns * week_total + np.interp(t - turns * HOURS_PER_WEEK, edges_h, cum)

    start = np.asarray(start_h, dtype=float)
    return at(start + np.asarray(length_h, dtype=float)) - at(start)


def daily_starts_h(lights_on_h) -> np.ndarray:
    """Start of the light block on each day of the week for a clock lights-on time: (..., 7) [h from Monday 0:00]."""
    return np.asarray(lights_on_h, dtype=float)[..., None] + HOURS_PER_DAY * np.arange(DAYS_PER_WEEK)


def weekly_energy_cost(profile: WeekProfile, power_kw: float, lights_on_h, photoperiod_h: float) -> np.ndarray:
    """Energy cost of one week for a load of ``power_kw`` on from ``lights_on_h`` for ``photoperiod_h`` each day."""
    per_day = interval_integral(profile.price_per_kwh, daily_starts_h(lights_on_h), photoperiod_h)
    return power_kw * per_day.sum(axis=-1)


def touches_peak(profile: WeekProfile, lights_on_h, photoperiod_h: float) -> np.ndarray:
    """Whether the light block overlaps a peak slot on any day (so it sets the billed demand)."""
    hours_in_peak = interval_integral(profile.peak.astype(float), daily_starts_h(lights_on_h), photoperiod_h)
    return (hours_in_peak > 1e-9).any(axis=-1)


def monthly_cost(
    profile: WeekProfile,
    power_kw: float,
    lights_on_h,
    photoperiod_h: float,
    days_per_month: float,
    demand_charge_per_kw: float = 0.0,
    demand_in_peak_only: bool = False,
):
    """(energy cost, demand charge) of a month for the lights alone.

    The demand charge bills ``power_kw`` once a month if the lights run at all
    (or, with ``demand_in_peak_only``, if they run in a peak slot).
    """
    energy = weekly_energy_cost(profile, power_kw, lights_on_h, photoperiod_h) * days_per_month / DAYS_PER_WEEK
    if demand_in_peak_only:
        billed = touches_peak(profile, lights_on_h, photoperiod_h)
    else:
        billed = np.full(np.shape(energy), photoperiod_h > 0)
    demand = np.where(billed, power_kw * demand_charge_per_kw, 0.0)
    return energy, demand


@dataclass(frozen=True)
class Placement:
    lights_on_h: float  # clock time, same every day
    lights_off_h: float
    dark_h: float  # unbroken every night
    energy_cost_per_month: float
    demand_cost_per_month: float

    @property
    def cost_per_month(self) -> float:
        return self.energy_cost_per_month + self.demand_cost_per_month


def cheapest_light_period(
    profile: WeekProfile,
    power_kw: float,
    photoperiod_h: float,
    min_dark_h: float,
    days_per_month: float,
    demand_charge_per_kw: float = 0.0,
    demand_in_peak_only: bool = False,
    prefer_on_h: float = 0.0,
) -> Placement:
    """The lights-on time (same every day, on the quarter hour) that costs least per month.

    The photoperiod is kept; the dark period is the unbroken rest of the day. Ties
    go to the start closest to ``prefer_on_h`` (the present schedule), so nothing
    moves for no saving.

    Raises
    ------
    ValueError
        If the photoperiod leaves less dark than ``min_dark_h``.
    """
    if not 0 < photoperiod_h <= HOURS_PER_DAY:
        raise ValueError(f"photoperiod_h must be in (0, 24], got {photoperiod_h:g}")
    dark_h = HOURS_PER_DAY - photoperiod_h
    if dark_h < min_dark_h - 1e-9:
        raise ValueError(
            f"a {photoperiod_h:g} h photoperiod leaves {dark_h:g} h of dark; the crop needs at least {min_dark_h:g} h"
        )
    starts = np.arange(0.0, HOURS_PER_DAY, START_STEP_H)
    energy, demand = monthly_cost(
        profile, power_kw, starts, photoperiod_h, days_per_month, demand_charge_per_kw, demand_in_peak_only
    )
    total = energy + demand
    # Costs within a thousandth of a cent are a tie; prefer the present start.
    best = total.min()
    ties = np.flatnonzero(total <= best + 1e-5)
    gap = np.abs((starts[ties] - prefer_on_h + 12.0) % HOURS_PER_DAY - 12.0)
    i = int(ties[np.argmin(gap)])
    on = float(starts[i])
    return Placement(on, (on + photoperiod_h) % HOURS_PER_DAY, dark_h, float(energy[i]), float(demand[i]))
