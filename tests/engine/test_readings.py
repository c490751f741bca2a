"""Model against meter: the least-squares output factor against numpy.linalg.lstsq and SciPy, lux factors
against Thimijan & Heins (1983), residuals and outliers on readings generated from a known model."""

import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.optimize import curve_fit

from app.engine.readings import FitError, fit_output_factors, lux_to_ppfd, outliers, residual_figures
from app.engine.spectrum import spectrum_figures

with warnings.catch_warnings():
    warnings.simplefilter("ignore")  # colour-science warns that matplotlib is absent
    import colour


def lambertian_point(x, y, fx, fy, h, flux):
    # E = Φ/π · h² / (h² + r²)² for a Lambertian point source (inverse-square and cosine laws).
    r2 = (x - fx) ** 2 + (y - fy) ** 2
    return flux / np.pi * h * h / (h * h + r2) ** 2


def two_type_model(rng, n):
    """Readings points over a 2 x 1.2 m bench lit by two fixture types (known closed-form model)."""
    x = rng.uniform(0, 2.0, n)
    y = rng.uniform(0, 1.2, n)
    a = lambertian_point(x, y, 0.5, 0.6, 0.6, 900.0) + lambertian_point(x, y, 1.5, 0.6, 0.6, 900.0) * 0.2
    b = lambertian_point(x, y, 1.5, 0.6, 0.45, 600.0)
    return x, y, np.column_stack([a, b])


def test_fit_matches_lstsq_and_scipy_curve_fit():
    rng = np.random.default_rng(7)
    _, _, A = two_type_model(rng, 40)
    k_true = np.array([0.88, 1.07])
    m = A @ k_true + rng.normal(0, 12.0, A.shape[0])
    fit = fit_output_factors(A, m)
    k_np = np.linalg.lstsq(A, m, rcond=None)[0]
    assert_allclose(fit.factors, k_np, rtol=1e-10)
    # scipy.optimize.curve_fit with absolute_sigma=False scales the covariance by s² = RSS / (n − p).
    popt, pcov = curve_fit(lambda X, ka, kb: ka * X[0] + kb * X[1], A.T, m, p0=[1, 1])
    assert_allclose(fit.factors, popt, rtol=1e-6)
    assert_allclose(fit.std_errors, np.sqrt(np.diag(pcov)), rtol=1e-5)
    assert fit.dof == 38


def test_known_factor_recovered_within_its_standard_error():
    # Readings = known model × known factor + noise: over many trials the estimate falls within
    # 1.96 standard errors of the truth about 95 % of the time (normal theory of least squares).
    rng = np.random.default_rng(2026)
    k_true = np.array([0.9, 1.1])
    inside = []
    for _ in range(400):
        _, _, A = two_type_model(rng, 25)
        m = A @ k_true + rng.normal(0, 15.0, A.shape[0])
        fit = fit_output_factors(A, m)
        inside.append(np.abs(fit.factors - k_true) <= 1.96 * fit.std_errors)
    share = np.mean(inside, axis=0)
    # 400 trials: the binomial standard deviation of a 95 % share is 1.1 %, so 91-99 % is a 3.5σ band.
    assert np.all((share > 0.91) & (share < 0.99)), share


def test_single_room_factor_is_the_ratio_of_sums():
    # One unknown: k = Σ A m / Σ A² (the normal equation of a one-column least squares).
    rng = np.random.default_rng(3)
    _, _, A = two_type_model(rng, 12)
    total = A.sum(axis=1)
    m = 0.93 * total + rng.normal(0, 5, total.size)
    fit = fit_output_factors(total, m)
    assert_allclose(fit.factors[0], (total @ m) / (total @ total), rtol=1e-12)


def test_fit_refuses_fewer_points_than_unknowns():
    with pytest.raises(FitError, match="1 reading.*2 unknown"):
        fit_output_factors([[100.0, 50.0]], [120.0])
    exact = fit_output_factors([[100.0, 0.0], [0.0, 50.0]], [90.0, 60.0])
    assert exact.std_errors is None and exact.dof == 0
    assert_allclose(exact.factors, [0.9, 1.2])


def test_fit_refuses_an_unknown_that_lights_no_reading():
    with pytest.raises(FitError, match="type B gives no light"):
        fit_output_factors([[100.0, 0.0], [80.0, 0.0], [60.0, 0.0]], [1, 2, 3], names=["type A", "type B"])


def test_residuals_rms_and_worst_point():
    fig = residual_figures([110, 95, 300], [100, 100, 250])
    assert_allclose(fig["diff_umol"], [10, -5, 50])
    assert_allclose(fig["diff_pct"], [10, -5, 20])
    assert_allclose(fig["rms_umol"], np.sqrt((100 + 25 + 2500) / 3))
    assert fig["worst_index"] == 2


def test_outlier_off_neighbours_and_model_is_flagged_but_a_shared_offset_is_not():
    rng = np.random.default_rng(11)
    gx, gy = np.meshgrid(np.linspace(0.1, 1.9, 7), np.linspace(0.1, 1.1, 5))
    x, y = gx.ravel(), gy.ravel()
    model = lambertian_point(x, y, 1.0, 0.6, 0.6, 1000.0)
    measured = 0.8 * model * (1 + rng.normal(0, 0.02, model.size))  # the whole room 20 % low: no outlier
    assert not outliers(x, y, measured, model).any()
    slip = measured.copy()
    slip[17] *= 0.45  # a hand over the sensor
    flags = outliers(x, y, slip, model)
    assert flags.tolist() == [i == 17 for i in range(model.size)]


@pytest.mark.parametrize(
    "illuminant, lux_per_ppfd, tol",
    [
        # Thimijan R.W. & Heins R.D. (1983), HortScience 18(6):818-822: lux per µmol m⁻² s⁻¹ (400-700 nm).
        ("D65", 54, 0.05),  # sunlight (CIE D65 stands in for their measured sun)
        ("HP1", 82, 0.06),  # high-pressure sodium (CIE HP1)
        ("HP3", 71, 0.03),  # metal halide (CIE HP3)
    ],
)
def test_lux_readings_convert_with_the_published_factors(illuminant, lux_per_ppfd, tol):
    sd = colour.SDS_ILLUMINANTS[illuminant]
    factor = spectrum_figures(sd.wavelengths, sd.values)["lux_per_ppfd"]
    lux = np.array([20000.0, 41000.0])
    assert_allclose(lux_to_ppfd(lux, factor), lux / lux_per_ppfd, rtol=tol)
    with pytest.raises(ValueError, match="factor"):
        lux_to_ppfd(lux, 0.0)
