"""Spectra against CODATA constants (SciPy) and the published lux-to-PPFD factors (colour-science spectra)."""

import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants

from app.engine.spectrum import led_mix, parse_spectrum_csv, spectrum_figures, umol_per_joule, v_lambda

with warnings.catch_warnings():
    warnings.simplefilter("ignore")  # colour-science warns that matplotlib is absent
    import colour


def test_photon_energy_from_codata_constants():
    # E = h c / λ (Planck relation), constants from scipy.constants (CODATA, exact SI values).
    for nm in (400.0, 450.0, 550.0, 660.0, 700.0):
        expected = 1e6 / (constants.h * constants.c / (nm * 1e-9) * constants.N_A)
        assert_allclose(umol_per_joule(nm), expected, rtol=1e-12)
    # shared/REFERENCES.md: µmol/J = λ[nm] × 0.0083593; 450 nm → 3.76, 660 nm → 5.52.
    assert_allclose(umol_per_joule([450, 660]), [3.76, 5.52], atol=0.005)


def test_flat_energy_spectrum_ceiling():
    # A flat energy spectrum over 400-700 nm: about 4.60 µmol/J (shared/REFERENCES.md).
    wl = np.arange(400, 701, 1.0)
    f = spectrum_figures(wl, np.ones_like(wl))
    assert_allclose(f["ceiling_umol_j"], 4.60, atol=0.01)


def test_v_lambda_matches_colour_science():
    v = colour.colorimetry.SDS_LEFS_PHOTOPIC["CIE 1924 Photopic Standard Observer"]
    wl = np.arange(380, 781, 1)
    assert_allclose(v_lambda(wl), v[wl], atol=3e-3)  # linear interpolation of the 5 nm table


@pytest.mark.parametrize(
    "illuminant, lux_per_ppfd, tol",
    [
        # Thimijan R.W. & Heins R.D. (1983), HortScience 18(6):818-822: lux per µmol m⁻² s⁻¹ (400-700 nm).
        ("D65", 54, 0.05),  # sunlight (CIE daylight D65 stands in for their measured sun)
        ("A", 50, 0.03),  # incandescent (CIE A, a 2856 K blackbody)
        ("FL2", 74, 0.05),  # cool white fluorescent (CIE F2)
        ("HP1", 82, 0.06),  # high-pressure sodium (CIE HP1, standard HPS)
        ("HP3", 71, 0.03),  # metal halide (CIE HP3)
    ],
)
def test_lux_to_ppfd_factors_reproduce_the_published_table(illuminant, lux_per_ppfd, tol):
    sd = colour.SDS_ILLUMINANTS[illuminant]
    f = spectrum_figures(sd.wavelengths, sd.values)
    assert_allclose(f["lux_per_ppfd"], lux_per_ppfd, rtol=tol)
    assert_allclose(f["ppfd_per_klux"] * f["lux_per_ppfd"], 1000, rtol=1e-9)


def test_led_peaks_fall_in_their_bands():
    wl, p = led_mix([{"nm": 660, "fwhm_nm": 20, "weight": 1.0}])
    f = spectrum_figures(wl, p)
    assert f["red_600_700"] > 0.99 and f["blue_400_500"] < 0.001
    assert_allclose(f["ceiling_umol_j"], umol_per_joule(660), rtol=0.01)
    wl, p = led_mix([{"nm": 730, "fwhm_nm": 25, "weight": 1.0}, {"nm": 450, "fwhm_nm": 20, "weight": 1.0}])
    f = spectrum_figures(wl, p)
    assert f["far_red_700_750"] > 0.5  # far red counted beside PPF, as a share of it


def test_spectrum_csv_errors_name_the_line():
    assert parse_spectrum_csv("nm,power\n400,1\n500,2\n")[0].tolist() == [400, 500]
    with pytest.raises(ValueError, match="line 3"):
        parse_spectrum_csv("nm,power\n400,1\nfour hundred,2\n")
    with pytest.raises(ValueError, match="at least two"):
        parse_spectrum_csv("400,1\n")


def test_band_shares_integrate_exactly_over_their_band():
    """A flat energy spectrum: photons per nm ∝ λ (Planck relation), so the 400-500 nm share of the 400-700 nm
    photons is ∫λ dλ over each band; reference by scipy.integrate.quad, no half-nm slivers at the band edges."""
    from scipy.integrate import quad

    wl = np.arange(380.0, 781.0, 1.0)
    fig = spectrum_figures(wl, np.ones_like(wl))
    par = quad(lambda x: x, 400, 700)[0]
    for band, (lo, hi) in (("blue_400_500", (400, 500)), ("red_600_700", (600, 700)), ("far_red_700_750", (700, 750))):
        assert fig[band] == pytest.approx(quad(lambda x: x, lo, hi)[0] / par, rel=1e-9)


def test_power_outside_the_visible_counts_in_the_ceiling():
    """A red peak plus an equal 850 nm peak holds twice the radiant power for the same PAR photons, so its
    µmol/J ceiling is half the red peak's (Planck relation; the issue's worked case)."""
    wl = np.arange(600.0, 901.0, 1.0)
    red = np.exp(-0.5 * ((wl - 660.0) / 10.0) ** 2)
    nir = np.exp(-0.5 * ((wl - 850.0) / 10.0) ** 2)
    alone = spectrum_figures(wl, red)["ceiling_umol_j"]
    both = spectrum_figures(wl, red + nir)["ceiling_umol_j"]
    assert both == pytest.approx(alone / 2, rel=1e-3)
    with pytest.raises(ValueError, match="200-3000 nm"):
        spectrum_figures([100.0, 500.0], [1.0, 1.0])
