"""A fixture fitted to a PPFD map recovers a panel from a closed-form map and flags maps that cannot be true."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.engine.fitting import PAR_CEILING_UMOL_J, fit_findings, fit_ppfd_map, plausibility, predict_at_heights
from tests.engine.test_direct import rect_factor


def _lambertian_panel_map(shape, cell_m, height_m, side_m, ppf_umol_s):
    """PPFD under a square Lambertian panel centred over the map, E = M * F with M = PPF / area (closed form)."""
    ny, nx = shape
    xs = (np.arange(nx) - (nx - 1) / 2) * cell_m
    ys = (np.arange(ny) - (ny - 1) / 2) * cell_m
    h = side_m / 2
    # E = M * F, F of the panel by Howell B-3 corner rectangles (tests/engine/test_direct.py)
    out = np.array([[rect_factor(-h - x, h - x, -h - y, h - y, height_m) for x in xs] for y in ys])
    out *= ppf_umol_s / side_m**2
    return out


@pytest.mark.parametrize("side, ppf, h", [(0.6, 560.0, 0.45), (0.3, 900.0, 0.3), (0.45, 300.0, 0.6)])
def test_fit_recovers_a_lambertian_panel_from_its_closed_form_map(side, ppf, h):
    """A map made by Howell's B-3 closed form (not by the engine) is fitted back to the panel's PPF and beam."""
    readings = _lambertian_panel_map((11, 11), 0.1, h, side, ppf)
    fit = fit_ppfd_map(readings, 0.1, h)
    assert fit["rms_error"] < 0.02
    assert_allclose(fit["ppf_umol_s"], ppf, rtol=0.03)
    assert_allclose(fit["exponent"], 1.0, atol=0.15)  # Lambertian: cos^1
    assert fit["at_bound"] == [] and fit_findings(fit, 0.1, (11, 11)) == []


def test_a_map_no_single_fixture_makes_is_flagged_not_fitted_silently():
    """A flat map (the same PPFD in every cell, as from a wall of fixtures or a reflective box) is no one
    fixture in open air: the fit runs to its widest beam and largest emitter and says so."""
    fit = fit_ppfd_map(np.full((9, 9), 500.0), 0.15, 0.45)
    assert 0.3 * (1 - 1e-9) <= fit["exponent"] <= 30.0 * (1 + 1e-9)  # stays inside the range it tries
    assert {"widest_beam", "largest_emitter"} & set(fit["at_bound"])
    (finding,) = fit_findings(fit, 0.15, (9, 9))
    assert finding["code"] == "fit_at_bound" and finding["level"] == "suspicious"
    # A very narrow spot (a single bright cell) hits the other end of the beam range.
    spot = np.full((9, 9), 1.0)
    spot[4, 4] = 5000.0
    assert "narrowest_beam" in fit_ppfd_map(spot, 0.15, 0.45)["at_bound"]


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


def test_one_efficacy_threshold_for_code_page_and_readme():
    """The flag sits at one value, quoted by the message and the README (the 3.1/3.41 mismatch)."""
    from pathlib import Path

    from app.engine.fitting import BEST_MEASURED_UMOL_J, SUSPICIOUS_ABOVE_UMOL_J

    assert SUSPICIOUS_ABOVE_UMOL_J == 3.41  # 10 % over 3.1 µmol/J (Kusuma, Pattison & Bugbee 2020; from memory)
    r = np.ones((3, 3))
    just_below = {f["code"]: f for f in plausibility(r, 0.1, 3.40 * 100.0, 100.0)}
    just_above = {f["code"]: f for f in plausibility(r, 0.1, 3.42 * 100.0, 100.0)}
    assert "above_best_measured" not in just_below and "efficacy" in just_below
    assert f"{SUSPICIOUS_ABOVE_UMOL_J:g} µmol/J" in just_above["above_best_measured"]["message"]
    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text(encoding="utf-8")
    assert f"above {SUSPICIOUS_ABOVE_UMOL_J:g} µmol/J" in readme and f"about {BEST_MEASURED_UMOL_J:g} µmol/J" in readme


def test_impossible_map_is_not_also_called_plausible():
    readings = np.full((5, 5), 1000.0)  # 1,000 µmol/s on 1 m², from a fixture said to emit 600 µmol/s
    found = {f["code"]: f for f in plausibility(readings, 0.2, 600.0, 250.0)}  # 2.4 µmol/J claimed
    assert found["more_photons_than_emitted"]["level"] == "impossible"
    msg = found["efficacy"]["message"]
    assert msg.startswith("The claimed figures alone give 2.40 µmol/J") and "does not fit them" in msg
