"""Time-of-use placement: exact cost integrals, an unbroken dark period every night, least cost.

The references here are built independently of the engine: prices sampled minute by
minute straight from the window definitions, costs added up by hand.
"""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from app.engine import tariff as tf

MINUTES_PER_WEEK = 7 * 24 * 60


def minute_prices(base, windows):
    """Price of every minute of the week, straight from the window definitions (later windows win)."""
    out = np.full(MINUTES_PER_WEEK, float(base))
    for w in windows:
        a = round(w.start_h * 4) / 4
        b = round(w.end_h * 4) / 4
        length = (b - a) % 24 or 24
        for d in w.days:
            m0 = round((d * 24 + a) * 60)
            idx = (m0 + np.arange(round(length * 60))) % MINUTES_PER_WEEK
            out[idx] = w.price_per_kwh
    return out


def lit_minutes(lights_on_h, photoperiod_h):
    """Mask of the minutes of the week the lights are on."""
    on = np.zeros(MINUTES_PER_WEEK, dtype=bool)
    for d in range(7):
        m0 = round((d * 24 + lights_on_h) * 60)
        on[(m0 + np.arange(round(photoperiod_h * 60))) % MINUTES_PER_WEEK] = True
    return on


def test_flat_price_by_hand():
    # 0.5 kW for 16 h a day at 0.20 per kWh: 0.5 × 16 × 0.20 = 1.60 a day, 11.20 a week (by hand).
    p = tf.week_profile(0.20, [])
    assert_allclose(tf.weekly_energy_cost(p, 0.5, 6.0, 16.0), 11.20)


def test_peak_window_by_hand():
    # Weekdays 16:00-21:00 at 0.40, otherwise 0.10. Lights 1 kW from 06:00 for 12 h (to 18:00):
    # weekdays 10 h × 0.10 + 2 h × 0.40 = 1.80; weekend 12 × 0.10 = 1.20; week = 5 × 1.8 + 2 × 1.2 = 11.40.
    p = tf.week_profile(0.10, [tf.PriceWindow(tuple(range(5)), 16, 21, 0.40)])
    assert_allclose(tf.weekly_energy_cost(p, 1.0, 6.0, 12.0), 11.40)
    # Placed from 21:00 it never sees the peak: 12 h × 0.10 × 7 = 8.40 a week.
    best = tf.cheapest_light_period(p, 1.0, 12.0, 0.0, days_per_month=7.0, prefer_on_h=6.0)
    assert_allclose(best.energy_cost_per_month, 8.40)
    assert best.lights_on_h >= 21.0 or best.lights_on_h <= 4.0  # the 12 h block fits between 21:00 and 16:00


def test_window_wrapping_midnight_and_quarter_hours():
    # Night rate 22:30-06:15 every day at 0.05, day 0.30: lights 1 kW from 22:30 for 7.75 h sit wholly in it.
    p = tf.week_profile(0.30, [tf.PriceWindow(tuple(range(7)), 22.5, 6.25, 0.05)])
    assert_allclose(tf.weekly_energy_cost(p, 1.0, 22.5, 7.75), 7 * 7.75 * 0.05)
    # Half an hour more runs into the day rate: + 0.5 h × 0.30 a day.
    assert_allclose(tf.weekly_energy_cost(p, 1.0, 22.5, 8.25), 7 * (7.75 * 0.05 + 0.5 * 0.30))


def test_demand_charge_by_hand():
    # 2 kW of lights, demand charge 12 per kW a month billed only in peak hours 14:00-20:00 weekdays.
    p = tf.week_profile(0.10, [tf.PriceWindow(tuple(range(5)), 14, 20, 0.10, peak=True)])
    energy, demand = tf.monthly_cost(p, 2.0, 8.0, 8.0, 30.0, 12.0, demand_in_peak_only=True)
    assert_allclose(demand, 24.0)  # 08:00-16:00 touches the peak: 2 kW × 12
    assert_allclose(energy, 2.0 * 8.0 * 0.10 * 30.0)
    _, demand = tf.monthly_cost(p, 2.0, 20.0, 8.0, 30.0, 12.0, demand_in_peak_only=True)
    assert_allclose(demand, 0.0)  # 20:00-04:00 misses it
    best = tf.cheapest_light_period(p, 2.0, 8.0, 0.0, 30.0, 12.0, demand_in_peak_only=True, prefer_on_h=8.0)
    assert best.demand_cost_per_month == 0.0


def test_photoperiod_leaving_too_little_dark_is_refused():
    # A short-day crop in flowering needs at least 12 h of dark (Purdue HO-253): 13 h of light is refused.
    p = tf.week_profile(0.1, [])
    with pytest.raises(ValueError, match="needs at least 12 h"):
        tf.cheapest_light_period(p, 1.0, 13.0, 12.0, 30.0)


def test_tie_keeps_the_present_start():
    p = tf.week_profile(0.15, [])
    assert tf.cheapest_light_period(p, 1.0, 16.0, 4.0, 30.0, prefer_on_h=5.0).lights_on_h == 5.0


windows_st = st.lists(
    st.builds(
        tf.PriceWindow,
        days=st.lists(st.integers(0, 6), min_size=1, max_size=7, unique=True).map(tuple),
        start_h=st.integers(0, 95).map(lambda q: q / 4),
        end_h=st.integers(0, 95).map(lambda q: q / 4),
        price_per_kwh=st.floats(0.0, 1.0),
        peak=st.booleans(),
    ),
    max_size=4,
)


@settings(max_examples=60, deadline=None)
@given(
    base=st.floats(0.01, 1.0),
    windows=windows_st,
    photoperiod_q=st.integers(1, 96),
    min_dark_h=st.sampled_from([0.0, 4.0, 6.0, 10.0, 12.0]),
    power_kw=st.floats(0.05, 20.0),
)
def test_placement_keeps_dark_unbroken_and_is_cheapest(base, windows, photoperiod_q, min_dark_h, power_kw):
    photoperiod_h = photoperiod_q / 4
    profile = tf.week_profile(base, windows)
    if 24 - photoperiod_h < min_dark_h:
        with pytest.raises(ValueError):
            tf.cheapest_light_period(profile, power_kw, photoperiod_h, min_dark_h, 30.0)
        return
    best = tf.cheapest_light_period(profile, power_kw, photoperiod_h, min_dark_h, 30.0)
    on = lit_minutes(best.lights_on_h, photoperiod_h)
    # Every night is one unbroken dark run of the full dark period (here the week is circular).
    if photoperiod_h < 24:
        starts_of_dark = np.flatnonzero(on & ~np.roll(on, -1))
        runs = []
        for s in starts_of_dark:
            n = 0
            while not on[(s + 1 + n) % MINUTES_PER_WEEK]:
                n += 1
            runs.append(n)
        assert len(runs) == 7
        assert all(r == round((24 - photoperiod_h) * 60) for r in runs)
        assert min(runs) / 60 >= min_dark_h - 1e-9
    assert on.sum() == round(7 * photoperiod_h * 60)
    # Cost equals the minute-by-minute sum, and no quarter-hour start is cheaper (brute force).
    prices = minute_prices(base, windows)
    weekly = power_kw * prices[on].sum() / 60
    assert_allclose(best.energy_cost_per_month, weekly * 30 / 7, rtol=1e-9, atol=1e-9)
    for q in range(96):
        other = power_kw * prices[lit_minutes(q / 4, photoperiod_h)].sum() / 60 * 30 / 7
        assert best.energy_cost_per_month <= other + 1e-6
