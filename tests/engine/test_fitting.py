"""A fixture fitted to a PPFD map reproduces the engine's own map and flags maps that cannot be true."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.fitting import PAR_CEILING_UMOL_J, fit_ppfd_map, model_map, plausibility, predict_at_heights


@pytest.mark.parametrize("n, side, ppf, h", [(1.0, 0.6, 560.0, 0.45), (4.0, 0.0, 240.0, 0.6), (2.5, 0.3, 900.0, 0.3)])
def test_round_trip_recovers_the_fixture(n, side, ppf, h):
    readings = model_map((11, 11), 0.1, h, n, side, ppf)
    fit = fit_ppfd_map(readings, 0.1, h)
    assert fit["rms_error"] < 0.01  # the fitted map reproduces the forward map within 1 %
    assert_allclose(fit["ppf_umol_s"], ppf, rtol=0.01)
    again = model_map((11, 11), 0.1, h, fit["exponent"], fit["side_m"], fit["ppf_umol_s"])
    assert np.max(np.abs(again - readings)) / readings.max() < 0.01


def test_prediction_follows_inverse_square_far_away():
    fit = {"exponent": 1.0, "side_m": 0.0, "ppf_umol_s": 1000.0}
    p = predict_at_heights(fit, (5, 5), 0.01, [2.0, 4.0])
    # A point source: centre PPFD = Φ/π / h² (Lambert; inverse-square law).
    assert_allclose([x["centre"] for x in p], [1000 / np.pi / 4, 1000 / np.pi / 16], rtol=1e-4)


def test_map_with_more_photons_than_emitted_is_impossible():
    readings = np.full((5, 5), 1000.0)  # 1000 µmol m⁻² s⁻¹ over 1 m²: 1000 µmol/s
    codes = {f["code"]: f["level"] for f in plausibility(readings, 0.2, 600.0, None)}
    assert codes["more_photons_than_emitted"] == "impossible"


def test_efficacy_checks():
    r = np.ones((3, 3))
    assert_allclose(PAR_CEILING_UMOL_J, 700 * 0.0083593, rtol=1e-4)  # shared/REFERENCES.md
    levels = {f["code"]: f["level"] for f in plausibility(r, 0.1, 1200.0, 200.0)}
    assert levels["above_photon_ceiling"] == "impossible"  # 6.0 µmol/J > 5.85
    levels = {f["code"]: f["level"] for f in plausibility(r, 0.1, 720.0, 200.0)}
    assert levels["above_best_measured"] == "suspicious"  # 3.6 µmol/J
    levels = {f["code"]: f["level"] for f in plausibility(r, 0.1, 540.0, 200.0)}
    assert levels["efficacy"] == "info"


def test_bad_maps_refused():
    with pytest.raises(ValueError, match="3 × 3"):
        fit_ppfd_map([[1, 2]], 0.1, 0.5)
    with pytest.raises(ValueError, match="non-negative"):
        fit_ppfd_map(-np.ones((3, 3)), 0.1, 0.5)
