"""Output maintenance against the exponential form of IES TM-21, with a worked example computed by hand."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.maintenance import (
    MaintenanceError,
    fit_measured,
    fit_window,
    from_rated_point,
    maintained_factor,
)

# A worked example computed by hand from the published form Φ(t) = B exp(−α t) (IES TM-21-11):
# a 6,000 h test; TM-21 fits the last 5,000 h, so the points at 1,000-6,000 h (the 0 h point is dropped).
HOURS = [0, 1000, 2000, 3000, 4000, 5000, 6000]
SHARE = [1.000, 0.995, 0.990, 0.986, 0.981, 0.977, 0.972]


def test_tm21_worked_example_by_hand():
    # By hand: y = ln Φ at t = 1000..6000 h:
    #   ln .995 = -0.0050125, ln .990 = -0.0100503, ln .986 = -0.0140989,
    #   ln .981 = -0.0191828, ln .977 = -0.0232686, ln .972 = -0.0283995.
    # t̄ = 3500 h, Sxx = Σ(t − t̄)² = 2 (2500² + 1500² + 500²) = 17.5e6 h²,
    # Σ(t − t̄) y = −2500(−.0050125) − 1500(−.0100503) − 500(−.0140989)
    #             + 500(−.0191828) + 1500(−.0232686) + 2500(−.0283995) = −80.8367 h,
    # slope = −80.8367 / 17.5e6 = −4.61924e-6 /h → α = 4.61924e-6 /h,
    # ȳ = −0.1000127 / 6 = −0.0166688, ln B = ȳ − slope·t̄ = −0.0166688 + 0.0161673 = −0.0005014,
    # B = exp(−0.0005014) = 0.999499.
    y = [-0.0050125, -0.0100503, -0.0140989, -0.0191828, -0.0232686, -0.0283995]
    assert_allclose(np.log(SHARE[1:]), y, atol=1e-7)  # the logarithms above, to the digits written
    sxy = -2500 * y[0] - 1500 * y[1] - 500 * y[2] + 500 * y[3] + 1500 * y[4] + 2500 * y[5]
    assert_allclose(sxy, -80.8367, atol=1e-3)
    alpha_hand = 4.61924e-6
    b_hand = 0.999499
    p = fit_measured(HOURS, SHARE)
    assert_allclose(p.alpha_per_h, alpha_hand, rtol=1e-5)
    assert_allclose(p.b, b_hand, rtol=1e-6)
    # L70 = ln(100 B / 70) / α = ln(1.427856) / 4.61924e-6 = 0.356173 / 4.61924e-6 = 77,106 h (calculated),
    # beyond 6 × 6,000 = 36,000 h, so TM-21 reports "L70 > 36,000 h".
    assert_allclose(p.calculated_lp_h(70), 77106, rtol=2e-4)
    reported, capped = p.reported_lp_h(70)
    assert capped and reported == 36000
    # L97 = ln(100 B / 97) / α = ln(1.030412) / 4.61924e-6 = 0.029958 / 4.61924e-6 = 6,485 h: inside the limit.
    lp, capped = p.reported_lp_h(97)
    assert not capped
    assert_allclose(lp, 6485, rtol=5e-4)


def test_six_times_rule_holds_the_projection_at_its_limit():
    # IES TM-21-11: a projection is not extended beyond six times the test duration.
    p = fit_measured(HOURS, SHARE)
    assert p.limit_h == 6 * 6000
    at_limit = float(p.maintenance(36000))
    assert_allclose(at_limit, 0.999499 * math.exp(-4.61924e-6 * 36000), rtol=1e-5)  # = 0.84637
    assert float(p.maintenance(50000)) == at_limit  # not extended: held
    assert p.beyond_limit(50000) and not p.beyond_limit(30000)
    assert "6 × the 6,000 h test" in p.source


def test_tm21_data_windows():
    # IES TM-21-11 (from memory): 6,000-10,000 h tests use the last 5,000 h; longer tests the last half;
    # the first 1,000 h never.
    t = np.arange(0, 12001, 1000.0)
    assert t[fit_window(t, 6000)].tolist() == [1000, 2000, 3000, 4000, 5000, 6000]
    assert t[fit_window(t, 10000)].tolist() == [5000, 6000, 7000, 8000, 9000, 10000]
    assert t[fit_window(t, 12000)].tolist() == [6000, 7000, 8000, 9000, 10000, 11000, 12000]


def test_rated_point_exponential():
    # L90 at 36,000 h: Φ(t) = exp(−α t), α = −ln 0.9 / 36,000 (the exponential form with B = 1).
    p = from_rated_point(90, 36000)
    assert_allclose(float(p.maintenance(36000)), 0.9, rtol=1e-12)
    assert_allclose(float(p.maintenance(18000)), math.sqrt(0.9), rtol=1e-12)
    assert_allclose(p.calculated_lp_h(70), 36000 * math.log(0.7) / math.log(0.9), rtol=1e-12)
    # With the test duration known (say 10,000 h), nothing is projected beyond 60,000 h.
    q = from_rated_point(90, 36000, test_duration_h=10000)
    assert q.limit_h == 60000 and float(q.maintenance(80000)) == float(q.maintenance(60000))


def test_exact_exponential_is_recovered():
    t = np.arange(0, 10001, 500.0)
    p = fit_measured(t, 0.998 * np.exp(-3e-6 * t))
    assert_allclose([p.b, p.alpha_per_h], [0.998, 3e-6], rtol=1e-9)


def test_maintained_factor_multiplies_dirt():
    p = from_rated_point(90, 36000)
    assert_allclose(maintained_factor(p, 36000, 0.95), 0.9 * 0.95)
    assert maintained_factor(None, 1e5, 1.0) == 1.0


@pytest.mark.parametrize(
    "hours, share, words",
    [
        ([0, 1000, 3000], [1, 0.99, 0.98], "at least 6,000 h"),
        ([0, 6000], [1, float("nan")], "finite"),
        ([0, 6000], [1, -0.5], "between 0 and 1.2"),
        ([0, 6000, 7000], [1, 0.98], "same length"),
    ],
)
def test_bad_maintenance_data_is_refused(hours, share, words):
    with pytest.raises(MaintenanceError, match=words):
        fit_measured(hours, share)
