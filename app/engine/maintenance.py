"""Output maintenance over a fixture's life: the exponential projection of IES TM-21.

A fixture loses photon output with hours of use. IES TM-21 projects measured
output maintenance (normalised to 1 at 0 h) with the exponential form

    Φ(t) = B · exp(−α t),

fitted by least squares to ln Φ over the later part of the test, and reports
the time to a share p of the initial output as L_p = ln(100 B / p) / α
(p in %). A projection is never extended beyond six times the test duration:
past that limit the reported life is "more than 6 × D".

Two ways to describe a fixture type's maintenance are handled:

- a rated point "L_p at t_p hours" (for example L90 at 36,000 h): the
  exponential through 1 at 0 h and p/100 at t_p (B = 1), with no test-duration
  limit known unless the type records one;
- measured points (hours, share of initial output): the TM-21 fit, limited to
  six times the last measured hour.

References
----------
- Illuminating Engineering Society, IES TM-21-11 "Projecting Long Term Lumen
  Maintenance of LED Light Sources" (2011): the exponential form above, the
  least-squares fit of ln Φ, L_p = ln(100 B / p) / α and the limit of six times
  the test duration (for 20 or more units tested; 5.5 times for 10-19 units,
  from memory). The data window (for a test of D hours between 6,000 and
  10,000 h the last 5,000 h; beyond 10,000 h the last half; never the first
  1,000 h) is applied as stated there (from memory: confirm against the text).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

PROJECTION_LIMIT_TIMES = 6.0
"""IES TM-21-11: a projection is not extended beyond six times the test duration."""
MIN_TEST_DURATION_H = 6000.0
"""IES TM-21-11 asks for at least 6,000 h of data (from memory)."""
FIRST_HOURS_IGNORED_H = 1000.0
"""IES TM-21-11: the first 1,000 h are never used in the fit (from memory)."""
LAST_WINDOW_H = 5000.0
"""IES TM-21-11: tests of 6,000-10,000 h use their last 5,000 h (from memory)."""
HALF_WINDOW_BEYOND_H = 10000.0
"""IES TM-21-11: longer tests use their last half (from memory)."""


class MaintenanceError(ValueError):
    """Maintenance data the projection refuses."""


@dataclass(frozen=True)
class Projection:
    """Φ(t) = B exp(−α t), valid up to ``limit_h`` (inf when no test duration is known).

    source : where the curve comes from, in words, for the grower.
    """

    b: float
    alpha_per_h: float
    limit_h: float
    source: str

    def maintenance(self, hours_h):
        """Share of initial output at ``hours_h`` [h], the projection held at its limit beyond it."""
        t = np.minimum(np.asarray(hours_h, float), self.limit_h)
        # At 0 h the output is by definition the initial output: B only describes the fitted window.
        return np.where(t <= 0, 1.0, np.minimum(self.b * np.exp(-self.alpha_per_h * t), 1.0))

    def beyond_limit(self, hours_h: float) -> bool:
        return float(hours_h) > self.limit_h

    def calculated_lp_h(self, percent: float) -> float:
        """Hours to ``percent`` % of the initial output by the exponential, unlimited (inf if it never falls)."""
        if not 0 < percent < 100:
            raise MaintenanceError("the maintained share must be between 0 and 100 %")
        if self.alpha_per_h <= 0:
            return float("inf")
        return float(np.log(100.0 * self.b / percent) / self.alpha_per_h)

    def reported_lp_h(self, percent: float) -> tuple[float, bool]:
        """(hours, capped): the calculated L_p, or the projection limit with capped=True when beyond it."""
        lp = self.calculated_lp_h(percent)
        if lp > self.limit_h:
            return self.limit_h, True
        return lp, False


def from_rated_point(percent: float, hours_h: float, test_duration_h: float | None = None) -> Projection:
    """The exponential through 100 % at 0 h and ``percent`` % at ``hours_h`` (e.g. L90 at 36,000 h).

    test_duration_h : the test behind the rating, when known: the curve is then held at six times it.
    """
    if not 0 < percent < 100:
        raise MaintenanceError(f"a rated maintenance must be between 0 and 100 % (got {percent:g})")
    if not hours_h > 0:
        raise MaintenanceError("the hours of a rated maintenance must be > 0")
    alpha = -np.log(percent / 100.0) / hours_h
    limit = PROJECTION_LIMIT_TIMES * test_duration_h if test_duration_h else float("inf")
    src = f"rated L{percent:g} at {hours_h:,.0f} h, exponential through 100 % at 0 h"
    if test_duration_h:
        src += f"; held beyond {limit:,.0f} h (6 × the {test_duration_h:,.0f} h test, IES TM-21)"
    return Projection(1.0, float(alpha), limit, src)


def fit_window(hours_h: np.ndarray, test_duration_h: float) -> np.ndarray:
    """Mask of the points IES TM-21 fits: the last 5,000 h (tests up to 10,000 h) or the last half."""
    start = 0.5 * test_duration_h if test_duration_h > HALF_WINDOW_BEYOND_H else test_duration_h - LAST_WINDOW_H
    return (hours_h >= max(start, FIRST_HOURS_IGNORED_H)) & (hours_h <= test_duration_h)


def fit_measured(hours_h, maintained_share, strict_tm21: bool = True) -> Projection:
    """IES TM-21 fit of measured maintenance points (hours, share of initial output 0-1).

    strict_tm21 : refuse tests shorter than 6,000 h (as TM-21 does); when False a
        shorter test is fitted over all points after the first 1,000 h, still held
        at six times its duration.
    """
    t = np.asarray(hours_h, float)
    y = np.asarray(maintained_share, float)
    if t.shape != y.shape or t.ndim != 1:
        raise MaintenanceError("hours and shares must be two lists of the same length")
    if not (np.all(np.isfinite(t)) and np.all(np.isfinite(y))):
        raise MaintenanceError("hours and shares must be finite numbers")
    if np.any(t < 0) or np.any(y <= 0) or np.any(y > 1.2):
        raise MaintenanceError("hours must be >= 0 and shares between 0 and 1.2 of the initial output")
    duration = float(t.max()) if t.size else 0.0
    if strict_tm21 and duration < MIN_TEST_DURATION_H:
        raise MaintenanceError(
            f"IES TM-21 projects from at least {MIN_TEST_DURATION_H:,.0f} h of data; these points end at {duration:,.0f} h"
        )
    use = fit_window(t, duration) if duration >= MIN_TEST_DURATION_H else t >= min(FIRST_HOURS_IGNORED_H, duration)
    if np.count_nonzero(use) < 2 or np.ptp(t[use]) <= 0:
        raise MaintenanceError("the fit needs at least two points at different hours in the TM-21 window")
    slope, intercept = np.polyfit(t[use], np.log(y[use]), 1)
    lo, hi = float(t[use].min()), float(t[use].max())
    limit = PROJECTION_LIMIT_TIMES * duration
    src = (
        f"IES TM-21 exponential fit of {np.count_nonzero(use)} measured points ({lo:,.0f}-{hi:,.0f} h), "
        f"not projected beyond {limit:,.0f} h (6 × the {duration:,.0f} h test)"
    )
    return Projection(float(np.exp(intercept)), float(-slope), limit, src)


def maintained_factor(projection: Projection | None, hours_h: float, dirt_factor: float = 1.0) -> float:
    """Share of the installed output at an age: maintenance × dirt factor (1 when no maintenance is known)."""
    if not 0 < dirt_factor <= 1:
        raise MaintenanceError("the dirt factor must be in (0, 1]")
    share = 1.0 if projection is None else float(projection.maintenance(hours_h))
    return share * dirt_factor
