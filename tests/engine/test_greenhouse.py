"""Greenhouse sun: solar position, clear-sky insolation, PAR conversion and supplemental light.

pvlib's own tested functions are the reference for solar position and clear-sky
irradiance; these tests check that Leafcast calls them right and that what comes
out agrees with independent published numbers and closed forms.
"""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine import greenhouse as gh

# Physical constants (CODATA exact values, as in scipy.constants).
PLANCK = 6.62607015e-34
LIGHT = 299792458.0
AVOGADRO = 6.02214076e23
SOLAR_CONSTANT_W_M2 = 1367.0  # Duffie & Beckman, Solar Engineering of Thermal Processes (value from memory)


def test_pvlib_spa_matches_the_published_example():
    # Reda I. & Andreas A. (2004), Solar Energy 76(5):577-589, worked example (values from memory):
    # 2003-10-17 12:30:30 at UTC-7, 39.742476 N, 105.1786 W, 1830.14 m, 820 mbar, 11 °C, ΔT = 67 s
    # → topocentric zenith 50.11162°, azimuth 194.34024°.
    import pandas as pd
    import pvlib

    t = pd.DatetimeIndex([pd.Timestamp("2003-10-17 12:30:30", tz="Etc/GMT+7")])
    sp = pvlib.solarposition.spa_python(
        t, 39.742476, -105.1786, altitude=1830.14, pressure=82000, temperature=11, delta_t=67
    )
    assert_allclose(sp["apparent_zenith"].iloc[0], 50.11162, atol=1e-4)
    assert_allclose(sp["azimuth"].iloc[0], 194.34024, atol=1e-4)


def noaa_solar_elevation_deg(year, month, day, utc_hour, lat, lon):
    """Solar elevation (no refraction) by the NOAA solar calculator's equations (after Meeus),
    written here independently of pvlib."""
    a = (14 - month) // 12
    y = year + 4800 - a
    m = month + 12 * a - 3
    jdn = day + (153 * m + 2) // 5 + 365 * y + y // 4 - y // 100 + y // 400 - 32045
    jd = jdn - 0.5 + utc_hour / 24
    jc = (jd - 2451545.0) / 36525
    r = math.radians
    L = (280.46646 + jc * (36000.76983 + jc * 0.0003032)) % 360
    M = 357.52911 + jc * (35999.05029 - 0.0001537 * jc)
    e = 0.016708634 - jc * (0.000042037 + 0.0000001267 * jc)
    C = (
        math.sin(r(M)) * (1.914602 - jc * (0.004817 + 0.000014 * jc))
        + math.sin(r(2 * M)) * (0.019993 - 0.000101 * jc)
        + math.sin(r(3 * M)) * 0.000289
    )
    omega = 125.04 - 1934.136 * jc
    app_long = L + C - 0.00569 - 0.00478 * math.sin(r(omega))
    eps0 = 23 + (26 + (21.448 - jc * (46.815 + jc * (0.00059 - jc * 0.001813))) / 60) / 60
    eps = eps0 + 0.00256 * math.cos(r(omega))
    decl = math.asin(math.sin(r(eps)) * math.sin(r(app_long)))
    yy = math.tan(r(eps / 2)) ** 2
    eot_min = 4 * math.degrees(
        yy * math.sin(2 * r(L))
        - 2 * e * math.sin(r(M))
        + 4 * e * yy * math.sin(r(M)) * math.cos(2 * r(L))
        - 0.5 * yy * yy * math.sin(4 * r(L))
        - 1.25 * e * e * math.sin(2 * r(M))
    )
    tst = (utc_hour * 60 + eot_min + 4 * lon) % 1440
    ha = tst / 4 - 180
    cz = math.sin(r(lat)) * math.sin(decl) + math.cos(r(lat)) * math.cos(decl) * math.cos(r(ha))
    return 90 - math.degrees(math.acos(cz))


@pytest.mark.parametrize(
    "when, lat, lon",
    [
        ((2025, 6, 21, 12.0), 40.0, -75.0),
        ((2025, 12, 21, 17.0), 40.0, -75.0),
        ((2025, 3, 20, 10.5), 52.0, 5.0),
        ((2025, 9, 1, 3.0), -33.9, 151.2),
        ((2025, 1, 15, 20.25), 19.7, -155.1),
    ],
)
def test_pvlib_solar_position_agrees_with_noaa_equations(when, lat, lon):
    import pandas as pd
    import pvlib

    y, mo, d, h = when
    t = pd.DatetimeIndex([pd.Timestamp(y, mo, d, tz="UTC") + pd.Timedelta(hours=h)])
    elev = pvlib.solarposition.get_solarposition(t, lat, lon)["elevation"].iloc[0]
    # NOAA's spreadsheet equations are a lower-precision series: agreement to about 0.05° (from memory).
    assert_allclose(elev, noaa_solar_elevation_deg(y, mo, d, h, lat, lon), atol=0.05)


def extraterrestrial_daily_mj_m2(lat_deg, day_of_year):
    """Duffie J.A. & Beckman W.A., Solar Engineering of Thermal Processes, eq. 1.10.3 (with Cooper's declination)."""
    phi = math.radians(lat_deg)
    delta = math.radians(23.45 * math.sin(math.radians(360 * (284 + day_of_year) / 365)))
    ws = math.acos(max(-1.0, min(1.0, -math.tan(phi) * math.tan(delta))))
    g = SOLAR_CONSTANT_W_M2 * (1 + 0.033 * math.cos(math.radians(360 * day_of_year / 365)))
    return (
        24
        * 3600
        / math.pi
        * g
        * (math.cos(phi) * math.cos(delta) * math.sin(ws) + ws * math.sin(phi) * math.sin(delta))
        / 1e6
    )


@pytest.fixture(scope="module")
def forty_north():
    return gh.clear_sky_monthly_insolation_mj_m2(40.0, -75.0, 20.0)


def test_clear_sky_insolation_plausible_band(forty_north):
    # Clear-sky daily global insolation at 40° N near sea level (from memory, handbook maps and
    # clear-day measurements): about 27-34 MJ m⁻² d⁻¹ in June, 8-12 in December.
    assert 27 <= forty_north[5] <= 34
    assert 8 <= forty_north[11] <= 12
    assert np.argmax(forty_north) in (5, 6) and np.argmin(forty_north) in (11, 0)


def test_clear_sky_below_extraterrestrial_with_a_clear_day_clearness(forty_north):
    # Mid-month days (Duffie & Beckman Table 1.6.1 recommended days, from memory).
    mid = [17, 47, 75, 105, 135, 162, 198, 228, 258, 288, 318, 344]
    h0 = np.array([extraterrestrial_daily_mj_m2(40.0, n) for n in mid])
    kt = forty_north / h0
    # Clear days have a clearness index of about 0.65-0.8 (from memory).
    assert np.all(kt < 0.85) and np.all(kt > 0.6)


def test_par_conversion_factor_against_the_reference_spectrum():
    # Derived here from the ASTM G173-03 global tilt reference spectrum (shipped by pvlib):
    # photons 400-700 nm by the Planck relation E = h c / λ, divided by the whole spectrum's energy.
    from pvlib.spectrum import get_reference_spectra

    s = get_reference_spectra()
    wl = s.index.to_numpy()
    e = s["global"].to_numpy()
    par = (wl >= 400) & (wl <= 700)
    umol = np.trapezoid(e[par] * wl[par] * 1e-9 / (PLANCK * LIGHT * AVOGADRO) * 1e6, wl[par])
    per_j_global = umol / np.trapezoid(e, wl)
    per_j_par = umol / np.trapezoid(e[par], wl[par])
    assert_allclose(per_j_par, gh.DAYLIGHT_UMOL_PER_J_PAR, rtol=0.02)  # 4.60 against McCree's 4.57
    assert_allclose(per_j_global, gh.PAR_UMOL_PER_J_GLOBAL, rtol=0.05)  # 1.98 against 0.45 × 4.57 = 2.06
    assert_allclose(gh.PAR_UMOL_PER_J_GLOBAL, 2.0565)


def test_outdoor_dli_from_insolation():
    # 20 MJ m⁻² d⁻¹ of global radiation × 2.0565 µmol/J = 41.1 mol m⁻² d⁻¹ (by hand).
    assert_allclose(gh.dli_from_insolation(20.0), 41.13)
    # Under 0.9 glass on a day with 60 % of clear-sky sun: 41.13 × 0.6 × 0.9 = 22.21.
    assert_allclose(gh.natural_dli_inside(41.13, 0.9, 0.6), 22.2102)
    with pytest.raises(ValueError):
        gh.natural_dli_inside(10.0, 1.2)


def test_supplemental_hours_worked_example():
    # Faust & Logan (2018): DLI = PPFD × h × 3600 / 10⁶. Natural 8, target 17: need 9 mol m⁻² d⁻¹.
    # At 150 µmol m⁻² s⁻¹ that is 9e6 / (150 × 3600) = 16.67 h; capped at 16 h it gives 8.64.
    need = gh.supplemental_need([8.0, 20.0], 17.0)
    assert_allclose(need, [9.0, 0.0])
    hours, got = gh.supplemental_hours(need, 150.0, max_hours=18.0)
    assert_allclose(hours, [16.6667, 0.0], rtol=1e-4)
    assert_allclose(got, need)
    hours, got = gh.supplemental_hours(need, 150.0, max_hours=16.0)
    assert_allclose(hours, [16.0, 0.0])
    assert_allclose(got, [8.64, 0.0])


def test_dimming_for_need():
    # 300 µmol m⁻² s⁻¹ at full power for 12 h gives 12.96; a need of 6.48 needs 50 %.
    assert_allclose(gh.dimming_for_need([6.48, 0.0, 30.0, 0.1], 300.0, 12.0), [50.0, 0.0, 100.0, 10.0])


def test_monthly_energy():
    # 1000 W for 10 h a day in a 31-day month: 310 kWh (by hand).
    kwh = gh.monthly_energy_kwh(1000.0, np.full(12, 10.0))
    assert_allclose(kwh[0], 310.0)
    assert_allclose(kwh.sum(), 3650.0)


def test_glazing_table_values_are_fractions_with_a_source():
    for key, (t, note) in gh.GLAZING_TRANSMISSION.items():
        assert 0.5 < t < 1.0, key
        assert "from memory" in note or "(" in note
