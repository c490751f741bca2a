"""The meter API through the real app: reading sets saved with revision checks and clear refusals,
comparison, apply, output age and the fixture card."""

import json

from numpy.testing import assert_allclose


def tent(client, tent_doc):
    r = client.post("/api/rooms", content=json.dumps(tent_doc))
    return r.json()["id"], r.json()["revision"]


def grid_set(values, **kw):
    s = {
        "id": "nov",
        "zone_id": "tent-floor",
        "taken_on": "2026-11-30",
        "grid": {
            "origin_x_m": 0.1524,
            "origin_y_m": 0.1524,
            "spacing_x_m": 0.3048,
            "spacing_y_m": 0.3048,
            "values": values,
        },
    }
    s.update(kw)
    return s


def test_readings_saved_compared_applied(client, tent_doc):
    room_id, rev = tent(client, tent_doc)
    # Readings from the model itself, 10 % low: the fit must say 0.90.
    a = client.get(f"/api/rooms/{room_id}/analysis").json()
    z = a["zones"][0]["grid"]
    xs, ys = z["x_m"], z["y_m"]
    pick = lambda x, y: z["ppfd"][min(range(len(ys)), key=lambda j: abs(ys[j] - y))][  # noqa: E731
        min(range(len(xs)), key=lambda i: abs(xs[i] - x))
    ]
    values = [[round(0.9 * pick(0.1524 + c * 0.3048, 0.1524 + r * 0.3048), 1) for c in range(4)] for r in range(4)]
    r = client.post(f"/api/rooms/{room_id}/readings", json={"revision": rev, "reading_set": grid_set(values)})
    assert r.status_code == 200, r.text
    rev2 = r.json()["revision"]
    assert rev2 == rev + 1 and r.json()["room_file"]["room"]["readings"][0]["id"] == "nov"

    c = client.get(f"/api/rooms/{room_id}/readings/nov/compare").json()
    assert len(c["points"]) == 16 and c["fit"]["error"] is None
    assert_allclose(c["fit"]["factors"][0]["factor"], 0.9, rtol=0.01)
    assert_allclose(c["mean_pct"], -10, atol=1.0)

    stale = client.post(f"/api/rooms/{room_id}/readings/nov/apply", json={"revision": rev, "fit": "room"})
    assert stale.status_code == 409 and stale.json()["current_revision"] == rev2
    ok = client.post(f"/api/rooms/{room_id}/readings/nov/apply", json={"revision": rev2, "fit": "room"})
    assert ok.status_code == 200, ok.text
    assert_allclose(ok.json()["changed"][0]["new_ppf_umol_s"], 0.9 * 650, rtol=0.01)
    again = client.get(f"/api/rooms/{room_id}/readings/nov/compare").json()
    assert abs(again["mean_pct"]) < 1.0

    assert client.get(f"/api/rooms/{room_id}/readings/none/compare").status_code == 404
    gone = client.delete(f"/api/rooms/{room_id}/readings/nov?revision={ok.json()['revision']}")
    assert gone.status_code == 200 and gone.json()["room_file"]["room"]["readings"] == []


def test_bad_readings_are_refused_with_the_field(client, tent_doc):
    room_id, rev = tent(client, tent_doc)
    wide = [[400] * 6]  # 6 columns 1 ft apart from 6 in: reaches 5.5 ft in a 4 ft tent
    r = client.post(f"/api/rooms/{room_id}/readings", json={"revision": rev, "reading_set": grid_set(wide)})
    assert r.status_code == 422
    assert r.json()["problems"][0]["field"] == "room.readings[0].grid"
    assert "does not fit zone 'tent-floor'" in r.json()["message"]
    neg = client.post(f"/api/rooms/{room_id}/readings", json={"revision": rev, "reading_set": grid_set([[400, -1]])})
    assert neg.status_code == 422 and "greater than or equal to 0" in neg.json()["message"]
    nan = client.post(
        f"/api/rooms/{room_id}/readings",
        content=json.dumps({"revision": rev, "reading_set": grid_set([[400, float("nan")]])}),
        headers={"Content-Type": "application/json"},
    )
    assert nan.status_code == 422
    pt = {
        "id": "p",
        "zone_id": "tent-floor",
        "taken_on": "2026-11-30",
        "points": [{"x_m": 1.5, "y_m": 0.5, "value": 3}],
    }
    out = client.post(f"/api/rooms/{room_id}/readings", json={"revision": rev, "reading_set": pt})
    assert out.status_code == 422 and "outside zone 'tent-floor'" in out.json()["message"]
    stale = client.post(f"/api/rooms/{room_id}/readings", json={"revision": rev + 5, "reading_set": grid_set([[1]])})
    assert stale.status_code == 409
    assert client.get(f"/api/rooms/{room_id}").json()["revision"] == rev  # nothing was saved


def test_output_age_changes_every_figure(client, tent_doc):
    room_id, rev = tent(client, tent_doc)
    before = client.get(f"/api/rooms/{room_id}/analysis").json()
    body = {
        "revision": rev,
        "output_age": {"hours_in_service_h": 36000, "dirt_factor": 0.9},
        "maintenance": {"bararray-4x0.6": {"rated_percent": 90, "rated_hours_h": 36000, "source": "datasheet"}},
    }
    r = client.post(f"/api/rooms/{room_id}/output-age", json=body)
    assert r.status_code == 200, r.text
    assert "maintained at 36,000 h" in r.json()["output_basis"]["words"]
    after = client.get(f"/api/rooms/{room_id}/analysis").json()
    # L90 at 36,000 h and dirt 0.9: 0.9 × 0.9 of the output (IES TM-21 exponential through the rated point).
    assert_allclose(after["emitted_umol_s"], 0.81 * before["emitted_umol_s"], rtol=1e-9)
    assert_allclose(after["zones"][0]["ppfd"]["avg"], 0.81 * before["zones"][0]["ppfd"]["avg"], rtol=1e-4)
    assert after["output_basis"]["types"][0]["factor"] == 0.81
    bad = dict(body, revision=r.json()["revision"], output_age={"shown_at": "chosen_age"})
    r2 = client.post(f"/api/rooms/{room_id}/output-age", json=bad)
    assert r2.status_code == 422 and "chosen_age_h" in r2.json()["message"]
    unknown = dict(body, revision=r.json()["revision"], maintenance={"nope": None})
    assert client.post(f"/api/rooms/{room_id}/output-age", json=unknown).status_code == 422


def test_fixture_card_and_zone_squares(client, tent_doc):
    room_id, _ = tent(client, tent_doc)
    card = client.get("/api/fixture-card", params={"type_id": "panel-0.6", "height_m": 0.45}).json()
    assert len(card["squares"]) == 5 and card["display_units"] == "imperial"
    assert client.get("/api/fixture-card", params={"type_id": "nope", "height_m": 0.45}).status_code == 404
    assert client.get("/api/fixture-card", params={"type_id": "panel-0.6", "height_m": 0}).status_code == 422
    sq = client.get(f"/api/rooms/{room_id}/zones/tent-floor/squares", params={"x_m": 0.6096, "y_m": 0.6096}).json()
    assert [round(r["side_m"], 4) for r in sq["squares"]] == [0.3048, 0.6096, 0.9144, 1.2192, 1.524]
    # The 4 ft and 5 ft squares both hold the whole 4 x 4 ft tent: clipped to the zone.
    assert_allclose([sq["squares"][3]["area_m2"], sq["squares"][4]["area_m2"]], 1.2192**2, rtol=1e-9)
    assert sq["squares"][0]["avg"] > sq["squares"][3]["avg"]
    far = client.get(f"/api/rooms/{room_id}/zones/tent-floor/squares", params={"x_m": 2.0, "y_m": 0.6})
    assert far.status_code == 422


def test_meter_page_and_its_json(client, tent_doc):
    room_id, _ = tent(client, tent_doc)
    html = client.get(f"/rooms/{room_id}/meter")
    assert html.status_code == 200 and "Model against meter" in html.text
    data = client.get(f"/rooms/{room_id}/meter?format=json").json()
    assert data["units"] == "imperial" and any(p["lux_per_ppfd"] == 82.0 for p in data["lux_presets"])


def test_sheet_prints_the_readings_beside_the_model_and_the_output_age(client, tent_doc):
    room_id, rev = tent(client, tent_doc)
    pts = [{"x_m": 0.3, "y_m": 0.6, "value": 500}, {"x_m": 0.9, "y_m": 0.6, "value": 510}]
    s = {"id": "spot-check", "zone_id": "tent-floor", "taken_on": "2026-11-30", "points": pts}
    rev = client.post(f"/api/rooms/{room_id}/readings", json={"revision": rev, "reading_set": s}).json()["revision"]
    body = {
        "revision": rev,
        "output_age": {"hours_in_service_h": 12000},
        "maintenance": {"bararray-4x0.6": {"rated_percent": 90, "rated_hours_h": 36000}},
    }
    assert client.post(f"/api/rooms/{room_id}/output-age", json=body).status_code == 200
    data = client.get(f"/rooms/{room_id}/sheet?format=json").json()
    (m,) = data["meter"]
    assert m["id"] == "spot-check" and len(m["points"]) == 2 and m["factor"]["factor"] > 0
    html = client.get(f"/rooms/{room_id}/sheet").text
    assert "Meter readings beside the model" in html and "spot-check" in html
    assert "maintained at 12,000 h in service" in html


def test_moving_a_zone_away_from_its_readings_is_refused_with_the_remedy(client, tent_doc):
    room_id, rev = tent(client, tent_doc)
    pt = {
        "id": "edge",
        "zone_id": "tent-floor",
        "taken_on": "2026-11-30",
        "points": [{"x_m": 1.1, "y_m": 1.1, "value": 300}],
    }
    client.post(f"/api/rooms/{room_id}/readings", json={"revision": rev, "reading_set": pt})
    doc = client.get(f"/api/rooms/{room_id}").json()
    doc["room"]["zones"][0]["width_m"] = 0.9  # the editor shrinks the zone
    r = client.put(f"/api/rooms/{room_id}", content=json.dumps(doc))
    assert r.status_code == 422
    p = r.json()["problems"][0]
    assert p["field"] == "room.readings[0].points[0]" and "fix reading set 'edge' on the meter page" in p["message"]
