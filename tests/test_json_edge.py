"""Non-finite figures at the JSON edge: an undefined figure (inf, NaN) is answered as null, never as a 500.

The undefined figure used here is real: a spectrum with all its power at 800-900 nm has no luminous flux, since
the CIE 1924 photopic luminosity function V(λ) is tabulated for 380-780 nm only (CIE 018:2019, "The Basis of
Physical Photometry"), so its lumens per watt are 0 and µmol per lumen (Thimijan & Heins 1983, HortScience
18(6):818-822) is infinite. Python's json module refuses such a value with "Out of range float values are not
JSON compliant", which a plain JSONResponse turns into a 500.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from app.engine.spectrum import spectrum_figures
from app.web.json_edge import FiniteJSONResponse, finite_or_null

INFRARED_CSV = "800,1\n850,1\n900,1"


def infrared_figures() -> dict[str, float]:
    return spectrum_figures(np.array([800.0, 850.0, 900.0]), np.ones(3))


def test_the_engine_really_gives_infinity_for_a_spectrum_without_visible_light():
    f = infrared_figures()
    assert math.isinf(f["umol_per_lumen"]) and math.isinf(f["lux_per_ppfd"])
    with pytest.raises(ValueError, match="Out of range float"):
        json.dumps(f, allow_nan=False)  # what a plain JSONResponse does


def test_a_typed_route_answers_null_for_an_undefined_figure(client):
    r = client.post("/api/photometry/spectrum", json={"csv": INFRARED_CSV})
    assert r.status_code == 200
    body = r.json()
    assert body["umol_per_lumen"] is None and body["ppfd_per_klux"] is None and body["lux_per_ppfd"] is None
    assert body["blue_400_500"] == 0.0  # no photon in 400-700 nm: every PAR band share is 0


def test_the_schema_says_these_figures_can_be_null(client):
    schema = client.get("/openapi.json").json()["components"]["schemas"]["SpectrumFigures"]["properties"]
    for name in ("umol_per_lumen", "ppfd_per_klux", "lux_per_ppfd"):
        assert {"type": "null"} in schema[name]["anyOf"], name


def test_a_page_answer_built_by_hand_writes_null(client, tent_doc, monkeypatch):
    # The meter page's ?format=json is built by hand (no response model): give it a lux preset computed from
    # the infrared spectrum, as a grower's own spectrum could be.
    import app.web.routes.meter as meter_routes

    def presets():
        return [{"id": "ir", "label": "Infrared", "lux_per_ppfd": infrared_figures()["lux_per_ppfd"], "source": "x"}]

    monkeypatch.setattr(meter_routes, "lux_factor_presets", presets)
    room_id = client.post("/api/rooms", json=tent_doc).json()["id"]
    r = client.get(f"/rooms/{room_id}/meter?format=json")
    assert r.status_code == 200
    assert r.json()["lux_presets"][0]["lux_per_ppfd"] is None


def test_finite_or_null_reaches_every_level():
    doc = {"a": [1.0, float("nan"), {"b": (float("-inf"), 2)}], "c": "inf", "d": None, "e": True}
    assert finite_or_null(doc) == {"a": [1.0, None, {"b": [None, 2]}], "c": "inf", "d": None, "e": True}
    assert json.loads(FiniteJSONResponse(doc).body) == {
        "a": [1.0, None, {"b": [None, 2]}],
        "c": "inf",
        "d": None,
        "e": True,
    }
