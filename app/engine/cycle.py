"""A crop's cycle week by week: settings held or ramped between steps, and totals per cycle.

A schedule is a list of steps, each starting at a week (week 1 is the first week
of the cycle) and holding its settings until the next step starts; a step marked
``ramp`` moves each setting in a straight line, week by week, to the next step's
value instead (a fixture raised as the crop grows, a photoperiod shortened
gradually).

References
----------
- DLI [mol m⁻² d⁻¹] = PPFD [µmol m⁻² s⁻¹] × photoperiod [h] × 3600 / 10⁶
  (Faust J.E. & Logan J. (2018), HortScience 53(9):1250-1257).
- 1 kWh = 3412.14 BTU, from 1 Btu_IT = 1055.05585262 J (NIST SP 811).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from app.engine.electrical import BTU_H_PER_W
from app.engine.metrics import SECONDS_PER_HOUR, UMOL_PER_MOL

DAYS_PER_WEEK = 7


def week_values(step_weeks: Sequence[int], step_values: Sequence[float], ramp: Sequence[bool], n_weeks: int):
    """Value of one setting in each week 1..``n_weeks``.

    Parameters
    ----------
    step_weeks : first week of each step, strictly rising, the first one 1.
    step_values : the setting at the start of each step.
    ramp : per step, whether the value moves linearly to the next step's value
        over the weeks up to it (the last step has no next one and holds).
    n_weeks : length of the cycle [weeks].

    Returns
    -------
    numpy.ndarray, shape (n_weeks,)
    """
    w = np.asarray(step_weeks, dtype=int)
    v = np.asarray(step_values, dtype=float)
    if w.size == 0 or w[0] != 1 or np.any(np.diff(w) <= 0):
        raise ValueError("step weeks must start at week 1 and rise strictly")
    weeks = np.arange(1, n_weeks + 1)
    idx = np.searchsorted(w, weeks, side="right") - 1
    out = v[idx].copy()
    for i in np.flatnonzero(np.asarray(ramp, dtype=bool)[:-1]):
        span = w[i + 1] - w[i]
        sel = idx == i
        out[sel] = v[i] + (v[i + 1] - v[i]) * (weeks[sel] - w[i]) / span
    return out


def step_index_by_week(step_weeks: Sequence[int], n_weeks: int) -> np.ndarray:
    """Which step each week 1..n_weeks belongs to (for settings that do not ramp, like the stage)."""
    return np.searchsorted(np.asarray(step_weeks, dtype=int), np.arange(1, n_weeks + 1), side="right") - 1


def weekly_moles_m2(ppfd_umol_m2_s, photoperiod_h):
    """Photons to a square metre of canopy in one week [mol m⁻²]: DLI × 7."""
    return np.asarray(ppfd_umol_m2_s) * np.asarray(photoperiod_h) * SECONDS_PER_HOUR / UMOL_PER_MOL * DAYS_PER_WEEK


def cycle_totals(
    power_w,
    photoperiod_h,
    canopy_flux_umol_s,
    canopy_area_m2: float,
    price_per_kwh: float,
    harvests_per_cycle: float = 1.0,
) -> dict[str, float]:
    """Energy, cost, heat and photons over a cycle from per-week figures.

    Parameters
    ----------
    power_w : per week, electrical input of the lights while on [W].
    photoperiod_h : per week, hours on each day [h].
    canopy_flux_umol_s : per week, photon flux landing on the canopy while on [µmol s⁻¹].
    canopy_area_m2 : canopy area [m²].
    price_per_kwh : flat energy price (a tariff's effective price may be passed).
    harvests_per_cycle : harvests the cycle yields (1 for a single crop).
    """
    p = np.asarray(power_w, dtype=float)
    h = np.asarray(photoperiod_h, dtype=float)
    flux = np.asarray(canopy_flux_umol_s, dtype=float)
    kwh = float((p * h).sum() * DAYS_PER_WEEK / 1000.0)
    moles = float((flux * h).sum() * SECONDS_PER_HOUR * DAYS_PER_WEEK / UMOL_PER_MOL)
    cost = kwh * price_per_kwh
    return {
        "weeks": int(p.size),
        "kwh": kwh,
        "cost": cost,
        "heat_kwh": kwh,  # all input power ends as heat in the room
        "heat_btu": kwh * 1000.0 * BTU_H_PER_W,
        "canopy_mol": moles,
        "canopy_mol_per_m2": moles / canopy_area_m2 if canopy_area_m2 > 0 else 0.0,
        "cost_per_mol": cost / moles if moles > 0 else 0.0,
        "kwh_per_m2": kwh / canopy_area_m2 if canopy_area_m2 > 0 else 0.0,
        "cost_per_m2": cost / canopy_area_m2 if canopy_area_m2 > 0 else 0.0,
        "cost_per_harvest": cost / harvests_per_cycle if harvests_per_cycle > 0 else 0.0,
        "kwh_per_harvest": kwh / harvests_per_cycle if harvests_per_cycle > 0 else 0.0,
    }
