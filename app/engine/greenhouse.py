"""Sun in a greenhouse: natural DLI by month, and the supplemental light that tops it up.

Natural light comes from a clear-sky model run with pvlib (solar position by the
NREL SPA algorithm, clear-sky global horizontal irradiance by the Ineichen-Perez
model with the Linke turbidity climatology pvlib ships), integrated over every
day of a year at ten-minute steps, then converted from energy to photons, reduced
by the grower's cloudiness factor and by the glazing's transmission.

pvlib brings pandas, which takes a while to import; both are imported inside
:func:`clear_sky_monthly_insolation_mj_m2` only, so the web app starts without them.

References
----------
- Reda I. & Andreas A. (2004), "Solar position algorithm for solar radiation
  applications", Solar Energy 76(5):577-589 (NREL SPA, as implemented in pvlib).
- Ineichen P. & Perez R. (2002), "A new airmass independent formulation for the
  Linke turbidity coefficient", Solar Energy 73(3):151-157; Remund J. et al. (2003),
  Linke turbidity climatology (pvlib.clearsky.lookup_linke_turbidity).
- Holmgren W.F., Hansen C.W. & Mikofski M.A. (2018), "pvlib python: a python
  package for modeling solar energy systems", J. Open Source Software 3(29):884.
- Global shortwave to PAR photons: PAR is about 0.45 of global solar radiation
  (energy), and daylight PAR carries about 4.57 µmol J⁻¹ (McCree K.J. (1972),
  "Test of current definitions of photosynthetically active radiation against
  leaf photosynthesis data", Agric. Meteorol. 10:443-453; both values from memory),
  so 1 J of global radiation gives about 0.45 × 4.57 = 2.06 µmol of PAR photons.
- DLI [mol m⁻² d⁻¹] = PPFD × h × 3600 / 10⁶ (Faust J.E. & Logan J. (2018),
  HortScience 53(9):1250-1257).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from app.engine.metrics import SECONDS_PER_HOUR, UMOL_PER_MOL

PAR_ENERGY_SHARE_OF_GLOBAL = 0.45  # McCree (1972), from memory
DAYLIGHT_UMOL_PER_J_PAR = 4.57  # McCree (1972); Thimijan & Heins (1983) give the same for sunlight (from memory)
PAR_UMOL_PER_J_GLOBAL = PAR_ENERGY_SHARE_OF_GLOBAL * DAYLIGHT_UMOL_PER_J_PAR  # 2.06 µmol per J of global radiation
SAMPLE_MINUTES = 10
DAYS_IN_MONTH = np.array([31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31], dtype=float)  # a common year

# PAR transmission of clean, new glazing alone (no frame, no shading), typical values.
# All from memory of greenhouse-management texts and extension guides (e.g. Nelson P.V.,
# "Greenhouse Operation and Management"); whole-house transmission with frame, gutters and
# dust is commonly 10-25 percentage points lower (from memory). Dirt and ageing lower them further.
GLAZING_TRANSMISSION = {
    "glass_single": (0.90, "single float glass, about 0.88-0.91 (from memory)"),
    "glass_diffuse": (0.89, "diffusing (patterned) glass, about 0.87-0.91 hemispherical (from memory)"),
    "acrylic_double": (0.84, "double-wall acrylic, about 0.83-0.86 (from memory)"),
    "polycarbonate_twin": (0.80, "twin-wall polycarbonate 8 mm, about 0.78-0.83 (from memory)"),
    "polycarbonate_triple": (0.75, "triple-wall polycarbonate, about 0.72-0.77 (from memory)"),
    "film_single": (0.87, "single polyethylene film, new, about 0.85-0.90 (from memory)"),
    "film_double": (0.77, "double inflated polyethylene film, new, about 0.75-0.80 (from memory)"),
}


def clear_sky_monthly_insolation_mj_m2(
    latitude_deg: float, longitude_deg: float, altitude_m: float = 0.0, year: int = 2025
) -> np.ndarray:
    """Mean clear-sky daily global horizontal insolation for each month [MJ m⁻² d⁻¹], shape (12,).

    Every ten minutes of the year, in UTC (the monthly mean does not depend on
    the time zone), through pvlib's Ineichen-Perez clear-sky model.
    """
    import pandas as pd  # deferred: pandas is slow to import and only this needs it
    import pvlib

    if not -90 <= latitude_deg <= 90 or not -180 <= longitude_deg <= 180:
        raise ValueError("latitude must be within ±90° and longitude within ±180°")
    times = pd.date_range(f"{year}-01-01", f"{year + 1}-01-01", freq=f"{SAMPLE_MINUTES}min", tz="UTC", inclusive="left")
    site = pvlib.location.Location(latitude_deg, longitude_deg, altitude=altitude_m)
    ghi = site.get_clearsky(times, model="ineichen")["ghi"].to_numpy()
    month = times.month.to_numpy()
    joules = np.bincount(month - 1, weights=ghi * SAMPLE_MINUTES * 60.0, minlength=12)
    days = np.bincount(month - 1, minlength=12) * SAMPLE_MINUTES / (24 * 60)
    return joules / days / 1e6


def dli_from_insolation(insolation_mj_m2_d, umol_per_j: float = PAR_UMOL_PER_J_GLOBAL):
    """Outdoor DLI [mol m⁻² d⁻¹] from daily global insolation [MJ m⁻² d⁻¹]: MJ × µmol/J gives mol."""
    return np.asarray(insolation_mj_m2_d, dtype=float) * umol_per_j


def natural_dli_inside(outdoor_dli_mol_m2_d, transmission: float, sky_share: float = 1.0):
    """DLI at the benches under glazing: outdoor × share of clear sky received × transmission."""
    if not 0 <= transmission <= 1 or not 0 <= sky_share <= 1:
        raise ValueError("transmission and sky_share must be within 0-1")
    return np.asarray(outdoor_dli_mol_m2_d, dtype=float) * sky_share * transmission


def supplemental_need(natural_dli_mol_m2_d, target_dli_mol_m2_d):
    """DLI the lights must add each month to reach the target [mol m⁻² d⁻¹] (0 where the sun suffices)."""
    return np.maximum(0.0, np.asarray(target_dli_mol_m2_d, dtype=float) - np.asarray(natural_dli_mol_m2_d))


def supplemental_hours(need_dli_mol_m2_d, ppfd_umol_m2_s: float, max_hours: float):
    """Hours a day at the fixtures' canopy PPFD that give the need, capped at ``max_hours``.

    Returns (hours, delivered DLI) per month; delivered < need where the cap binds.
    """
    need = np.asarray(need_dli_mol_m2_d, dtype=float)
    if ppfd_umol_m2_s <= 0:
        return np.zeros_like(need), np.zeros_like(need)
    hours = np.minimum(need * UMOL_PER_MOL / (ppfd_umol_m2_s * SECONDS_PER_HOUR), max_hours)
    return hours, ppfd_umol_m2_s * hours * SECONDS_PER_HOUR / UMOL_PER_MOL


def dimming_for_need(need_dli_mol_m2_d, full_ppfd_umol_m2_s: float, photoperiod_h: float, min_pct: float = 10.0):
    """Dimming [%] at a fixed photoperiod that gives the need (0 = off; capped at 100; floor ``min_pct`` when on)."""
    need = np.asarray(need_dli_mol_m2_d, dtype=float)
    full_dli = full_ppfd_umol_m2_s * photoperiod_h * SECONDS_PER_HOUR / UMOL_PER_MOL
    if full_dli <= 0:
        return np.zeros_like(need)
    pct = np.clip(100.0 * need / full_dli, 0.0, 100.0)
    return np.where(need > 0, np.maximum(pct, min_pct), 0.0)


def monthly_energy_kwh(power_w: float, hours_per_day: Sequence[float], days=DAYS_IN_MONTH):
    """Energy of the lights each month [kWh] for the hours they run each day."""
    return power_w * np.asarray(hours_per_day, dtype=float) * np.asarray(days) / 1000.0
