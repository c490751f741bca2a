"""Intensity distributions carry exactly their flux (zonal method, SciPy integration)."""

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import integrate

from app.engine import distributions as d


@pytest.mark.parametrize("n", [1.0, 2.0, 5.3, 40.0])
def test_cosine_power_integrates_to_one_scipy(n):
    # Φ = ∫₀^{2π} ∫₀^{π/2} I(θ) sin θ dθ dφ, by SciPy's adaptive quadrature (general-purpose reference).
    dist = d.cosine_power(n)
    val, _ = integrate.dblquad(
        lambda t, p: float(d.intensity_per_flux(dist, np.cos(t))) * np.sin(t), 0, 2 * np.pi, 0, np.pi / 2
    )
    assert_allclose(val, 1.0, rtol=1e-8)


def test_lambertian_peak_is_one_over_pi():
    # Lambert's cosine law: I = I₀ cos θ with Φ = π I₀.
    assert_allclose(d.intensity_per_flux(d.lambertian(), 1.0), 1 / np.pi, rtol=1e-12)
    assert d.intensity_per_flux(d.lambertian(), -0.2) == 0.0


@pytest.mark.parametrize("beam, n", [(120.0, 1.0), (90.0, np.log(0.5) / np.log(np.cos(np.radians(45))))])
def test_beam_angle_to_exponent(beam, n):
    # Half intensity at half the beam angle: cosⁿ(β/2) = 1/2. 120° is Lambertian (cos 60° = 1/2).
    assert_allclose(d.cosine_exponent_from_beam_angle(beam), n, rtol=1e-12)
    m = d.cosine_exponent_from_beam_angle(beam)
    assert_allclose(np.cos(np.radians(beam / 2)) ** m, 0.5, rtol=1e-12)


def test_zonal_flux_of_lambertian_table_is_exact():
    # A synthetic table of I = 100 cos θ cd-like units: total flux is exactly π·100 (Lambert).
    polar = np.arange(0, 91, 5.0)
    table = [100 * np.cos(np.radians(polar))]
    flux = d.zonal_flux(np.radians(polar), np.radians([0.0]), np.array(table))
    assert_allclose(flux, np.pi * 100, rtol=2e-3)  # linear interpolation between 5° samples


def test_tabulated_normalised_and_matches_cosine_law():
    polar = np.arange(0, 91, 1.0)
    az = np.arange(0, 360, 30.0)
    table = np.tile(np.cos(np.radians(polar)), (az.size, 1))
    dist = d.tabulated(polar, az, table)
    # Normalised: the interpolant integrates to 1 (SciPy reference).
    val, _ = integrate.dblquad(
        lambda t, p: float(d.intensity_per_flux(dist, np.cos(t), p)) * np.sin(t),
        0,
        2 * np.pi,
        0,
        np.pi / 2,
        epsabs=1e-4,
        epsrel=1e-4,
    )
    assert_allclose(val, 1.0, rtol=2e-3)
    assert_allclose(d.intensity_per_flux(dist, np.cos(np.radians(30)), 1.0), np.cos(np.radians(30)) / np.pi, rtol=3e-3)


def test_tabulated_azimuth_is_honoured():
    polar = np.arange(0, 91, 10.0)
    az = np.array([0.0, 90.0, 180.0, 270.0])
    table = np.ones((4, polar.size))
    table[1] *= 3.0  # three times brighter towards 90°
    dist = d.tabulated(polar, az, table)
    i0 = d.intensity_per_flux(dist, np.cos(np.radians(40)), 0.0)
    i90 = d.intensity_per_flux(dist, np.cos(np.radians(40)), np.pi / 2)
    assert_allclose(i90 / i0, 3.0, rtol=1e-9)


def test_bad_tables_refused():
    with pytest.raises(ValueError, match="shape"):
        d.tabulated([0, 90], [0], [[1, 1, 1]])
    with pytest.raises(ValueError, match="no light"):
        d.tabulated([0, 90], [0], [[0, 0]])
