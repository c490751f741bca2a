"""Grow-cycle weeks and payback arithmetic, checked by hand."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from app.engine import cycle, payback


def test_week_values_hold_and_ramp():
    # Steps at weeks 1, 3, 7 of a 9-week cycle; the second ramps to the third.
    # Weeks 1-2 hold 0.5; weeks 3-6 go 0.9 → 1.3 in steps of 0.1 ((1.3-0.9)/4); weeks 7-9 hold 1.3.
    v = cycle.week_values([1, 3, 7], [0.5, 0.9, 1.3], [False, True, False], 9)
    assert_allclose(v, [0.5, 0.5, 0.9, 1.0, 1.1, 1.2, 1.3, 1.3, 1.3])
    assert cycle.step_index_by_week([1, 3, 7], 9).tolist() == [0, 0, 1, 1, 1, 1, 2, 2, 2]


def test_ramp_on_the_last_step_holds():
    assert_allclose(cycle.week_values([1], [18.0], [True], 3), [18.0, 18.0, 18.0])


@pytest.mark.parametrize("weeks", [[2, 4], [1, 1], [1, 3, 2], []])
def test_bad_steps_refused(weeks):
    with pytest.raises(ValueError):
        cycle.week_values(weeks, [1.0] * len(weeks), [False] * len(weeks), 5)


def test_weekly_moles_faust_logan():
    # DLI = 250 × 18 × 3600 / 10⁶ = 16.2 mol m⁻² d⁻¹ (Faust & Logan 2018), × 7 = 113.4 a week.
    assert_allclose(cycle.weekly_moles_m2(250.0, 18.0), 113.4)


def test_cycle_totals_by_hand():
    # Two weeks: 400 W for 18 h then 600 W for 12 h. kWh = 7 × (400 × 18 + 600 × 12) / 1000 = 100.8.
    # Canopy flux 800 then 1200 µmol/s: mol = 7 × 3600 × (800 × 18 + 1200 × 12) / 10⁶ = 725.76.
    t = cycle.cycle_totals(
        [400, 600], [18, 12], [800, 1200], canopy_area_m2=2.0, price_per_kwh=0.2, harvests_per_cycle=2
    )
    assert_allclose(t["kwh"], 100.8)
    assert_allclose(t["cost"], 20.16)
    assert_allclose(t["canopy_mol"], 725.76)
    assert_allclose(t["canopy_mol_per_m2"], 362.88)
    assert_allclose(t["cost_per_mol"], 20.16 / 725.76)
    assert_allclose(t["cost_per_harvest"], 10.08)
    # 100.8 kWh of heat = 100.8 × 3412.14 BTU (NIST SP 811: 1 Btu_IT = 1055.056 J).
    assert_allclose(t["heat_btu"], 100.8 * 3412.14, rtol=1e-5)


def test_maintained_output_tm21_form():
    # L90 at 50 000 h: α = −ln 0.9 / 50 000 (IES TM-21 exponential through 100 % at 0 h).
    # Mean over [0, T] of exp(−α t) = (1 − e^{−αT}) / (αT); at T = 50 000 h: 0.1 / 0.105361 = 0.94912.
    a = -math.log(0.9) / 50_000
    assert_allclose(payback.mean_maintained_share(a, 0.0, 50_000.0), 0.1 / -math.log(0.9), rtol=1e-9)
    assert_allclose(payback.mean_maintained_share(0.0, 0.0, 10.0), 1.0)


def test_yearly_mean_share_against_the_closed_form():
    from app.engine.maintenance import from_rated_point

    p = from_rated_point(90.0, 50_000.0)
    got = payback.yearly_mean_share(p.maintenance, 12_000.0, 5_000.0, 3)
    want = [payback.mean_maintained_share(p.alpha_per_h, 12_000.0 + k * 5_000, 17_000.0 + k * 5_000) for k in range(3)]
    assert_allclose(got, want, rtol=1e-6)
    assert np.all(np.diff(got) < 0)
    # A curve held flat beyond its limit (6 × a 6,000 h test, IES TM-21): past 36,000 h the share stops falling.
    held = from_rated_point(90.0, 50_000.0, test_duration_h=6_000.0)
    late = payback.yearly_mean_share(held.maintenance, 40_000.0, 5_000.0, 2)
    assert_allclose(late, held.maintenance(36_000.0), rtol=1e-12)


def test_simple_payback_by_hand():
    # Spend 1200 to save 1000 − 600 = 400 a year: 3 years simple; balance −800, −400, 0, 400, 800.
    r = payback.payback(1200.0, 1000.0, 600.0, horizon_years=5)
    assert_allclose(r["simple_years"], 3.0)
    assert_allclose(r["years"], 3.0)
    assert_allclose(r["cumulative"], [-800, -400, 0, 400, 800])
    # Spend 1000 to save 400: 2.5 years (half-way through year 3).
    assert_allclose(payback.payback(1000.0, 1000.0, 600.0, 5)["years"], 2.5)


def test_discounted_payback_by_hand():
    # 10 % a year: present values of 400 are 363.64, 330.58, 300.53; after 3 years 994.74 ≥ 900.
    # Balance after 2 years: −900 + 694.21 = −205.79 → 2 + 205.79 / 300.53 = 2.6848 years.
    r = payback.payback(900.0, 1000.0, 600.0, 5, discount_rate=0.10)
    assert_allclose(r["years"], 2 + (900 - 400 / 1.1 - 400 / 1.21) / (400 / 1.331), rtol=1e-9)
    assert_allclose(r["years"], 2.6848, rtol=1e-4)


def test_no_payback_within_the_horizon_or_no_saving():
    assert payback.payback(5000.0, 1000.0, 600.0, 5)["years"] is None
    r = payback.payback(100.0, 500.0, 600.0, 5)
    assert r["years"] is None and r["simple_years"] is None
    assert payback.payback(0.0, 500.0, 600.0, 5)["years"] == 0.0


def test_cost_per_mol_by_hand():
    # (1000 + 300 + 300) / (2000 + 2000) = 0.4 per mol.
    assert_allclose(payback.cost_per_mol(1000.0, [300, 300], [2000, 2000]), 0.4)
    assert payback.cost_per_mol(0.0, [1.0], [0.0]) == math.inf


@settings(max_examples=80, deadline=None)
@given(
    gaps=st.lists(st.integers(1, 8), min_size=1, max_size=6),
    values=st.lists(st.floats(0.0, 100.0), min_size=7, max_size=7),
    ramps=st.lists(st.booleans(), min_size=7, max_size=7),
    tail=st.integers(0, 5),
)
def test_week_values_stay_between_their_steps(gaps, values, ramps, tail):
    # A held step keeps its value; a ramp moves monotonically from its value towards the next step's,
    # reaching it exactly at the next step's first week (linear interpolation by week).
    weeks = [1]
    for g in gaps:
        weeks.append(weeks[-1] + g)
    n = len(weeks)
    v, r = values[:n], ramps[:n]
    n_weeks = weeks[-1] + tail
    out = cycle.week_values(weeks, v, r, n_weeks)
    for i, w0 in enumerate(weeks):
        assert out[w0 - 1] == pytest.approx(v[i])
        w1 = weeks[i + 1] if i + 1 < n else n_weeks + 1
        seg = out[w0 - 1 : w1 - 1]
        if r[i] and i + 1 < n:
            lo, hi = sorted((v[i], v[i + 1]))
            assert np.all(seg >= lo - 1e-9) and np.all(seg <= hi + 1e-9)
            steps = np.diff(np.append(seg, v[i + 1]))
            assert_allclose(steps, (v[i + 1] - v[i]) / (w1 - w0), atol=1e-9)
        else:
            assert_allclose(seg, v[i])
