"""The JSON API through the ASGI client: rooms, revisions, imports, exports, guards."""

import json

from tests.conftest import SAMPLES, sample_doc

JSON = {"Content-Type": "application/json"}


def test_room_list_has_the_samples(client):
    rooms = client.get("/api/rooms").json()
    assert len(rooms) == len(SAMPLES)
    assert {"id", "name", "revision", "fixtures", "zones"} <= set(rooms[0])


def test_create_read_update_delete(client, tent_doc):
    r = client.post("/api/rooms", content=json.dumps(tent_doc), headers=JSON)
    assert r.status_code == 201
    room_id, rev = r.json()["id"], r.json()["revision"]
    doc = client.get(f"/api/rooms/{room_id}").json()
    assert doc["revision"] == rev
    doc["room"]["fixtures"][0]["dimming_pct"] = 55
    r = client.put(f"/api/rooms/{room_id}", content=json.dumps(doc), headers=JSON)
    assert r.status_code == 200 and r.json()["revision"] == rev + 1
    assert client.get(f"/api/rooms/{room_id}").json()["room"]["fixtures"][0]["dimming_pct"] == 55
    assert client.delete(f"/api/rooms/{room_id}").status_code == 204
    assert client.get(f"/api/rooms/{room_id}").status_code == 404


def test_stale_revision_gets_409_and_changes_nothing(client, tent_doc):
    room_id = client.post("/api/rooms", content=json.dumps(tent_doc), headers=JSON).json()["id"]
    a = client.get(f"/api/rooms/{room_id}").json()
    b = json.loads(json.dumps(a))
    a["room"]["name"] = "Saved first"
    assert client.put(f"/api/rooms/{room_id}", content=json.dumps(a), headers=JSON).status_code == 200
    b["room"]["name"] = "Saved second, from a stale copy"
    r = client.put(f"/api/rooms/{room_id}", content=json.dumps(b), headers=JSON)
    assert r.status_code == 409
    assert r.json()["error"] == "stale_revision" and r.json()["current_revision"] == 2
    assert client.get(f"/api/rooms/{room_id}").json()["room"]["name"] == "Saved first"


def test_validation_error_names_field(client, tent_doc):
    tent_doc["room"]["fixtures"][0]["dimming_pct"] = 3
    r = client.post("/api/rooms", content=json.dumps(tent_doc), headers=JSON)
    assert r.status_code == 422
    body = r.json()
    assert body["problems"][0]["field"] == "room.fixtures[0].dimming_pct"
    assert "room.fixtures[0].dimming_pct" in body["message"]


def test_import_collision_gets_a_new_name(client, tent_doc):
    first = client.post("/api/rooms/import", content=json.dumps(tent_doc), headers=JSON).json()
    assert first["name"] == tent_doc["room"]["name"] + " (2)"  # the sample is already there
    second = client.post("/api/rooms/import", content=json.dumps(tent_doc), headers=JSON).json()
    assert second["id"] != first["id"] and second["name"].endswith("(3)")


def test_export_import_gives_the_same_analysis(client):
    rooms = client.get("/api/rooms").json()
    for r in rooms:
        exported = client.get(f"/api/rooms/{r['id']}/file")
        assert exported.headers["content-disposition"].startswith("attachment")
        new = client.post("/api/rooms/import", content=exported.content, headers=JSON).json()
        a = client.get(f"/api/rooms/{r['id']}/analysis").json()
        b = client.get(f"/api/rooms/{new['id']}/analysis").json()
        for za, zb in zip(a["zones"], b["zones"], strict=True):
            assert za["grid"]["ppfd"] == zb["grid"]["ppfd"]  # to the last digit
            assert za["ppfd"] == zb["ppfd"]


def test_hostile_files(client, tent_doc):
    cases = {
        "not json": b"{{{{",
        "array": b"[]",
        "wrong type": json.dumps({**tent_doc, "room": {**tent_doc["room"], "zones": "many"}}).encode(),
        "huge array": json.dumps(
            {**tent_doc, "room": {**tent_doc["room"], "fixtures": [tent_doc["room"]["fixtures"][0]] * 6000}}
        ).encode(),
        "missing type": json.dumps({**tent_doc, "room": {**tent_doc["room"], "fixture_types": []}}).encode(),
        "newer": json.dumps({**tent_doc, "version": 99}).encode(),
    }
    before = client.get("/api/rooms").json()
    for name, body in cases.items():
        r = client.post("/api/rooms/import", content=body, headers=JSON)
        assert r.status_code == 422, name
        assert r.json()["message"], name
    assert client.get("/api/rooms").json() == before


def test_body_size_limit(client):
    r = client.post("/api/rooms/import", content=b"x" * (9 * 1024 * 1024), headers=JSON)
    assert r.status_code == 413 and r.json()["error"] == "too_large"


def test_foreign_host_refused(client):
    r = client.get("/api/rooms", headers={"Host": "evil.example:8000"})
    assert r.status_code == 421
    assert client.get("/api/rooms", headers={"Host": "localhost:8000"}).status_code == 200


def test_analysis_of_a_posted_room(client, tent_doc):
    r = client.post(
        "/api/analyze",
        content=json.dumps(tent_doc),
        headers=JSON,
        params={"budget": "true", "region": ["centre,0.45,0.45,0.3,0.3", "edge,0,0,0.2,1.2"]},
    )
    assert r.status_code == 200
    a = r.json()
    z = a["zones"][0]
    assert len(z["grid"]["ppfd"]) == 49 and len(z["grid"]["ppfd"][0]) == 49
    assert a["budget"]["accounted_umol_s"] > 0.99 * a["emitted_umol_s"]
    centre, edge = a["regions"]
    assert centre["ppfd"]["avg"] > edge["ppfd"]["avg"]


def test_bad_region_is_422(client, tent_doc):
    r = client.post("/api/analyze", content=json.dumps(tent_doc), params={"region": ["oops,1,2"]}, headers=JSON)
    assert r.status_code == 422 and "region[0]" in r.json()["message"]


def test_csv_and_svg_exports(client):
    room = client.get("/api/rooms").json()[0]["id"]
    doc = client.get(f"/api/rooms/{room}").json()
    zone = doc["room"]["zones"][0]["id"]
    csv_text = client.get(f"/api/rooms/{room}/zones/{zone}/grid.csv").text
    lines = csv_text.strip().splitlines()
    assert lines[0] == "zone_id,x_m,y_m,ppfd_umol_m2_s,dli_mol_m2_d"
    svg = client.get(f"/api/rooms/{room}/zones/{zone}/map.svg")
    assert svg.headers["content-type"].startswith("image/svg+xml") and svg.text.startswith("<svg")


def test_pages_and_their_json_agree(client):
    room = client.get("/api/rooms").json()[0]["id"]
    html = client.get(f"/rooms/{room}").text
    data = client.get(f"/rooms/{room}", params={"format": "json"}).json()
    assert data["room_id"] == room and data["room_file"]["room"]["name"] in html
    assert "/static-lib/plotly.min.js" in html and "cdn" not in html.lower()
    assert client.get("/static-lib/plotly.min.js").status_code == 200
    sheet = client.get(f"/rooms/{room}/sheet").text
    assert "Cautions" in sheet and "licensed electrician" in sheet


def test_library_endpoints(client):
    assert any(c["id"] == "lettuce" for c in client.get("/api/library/crops").json())
    assert len(client.get("/api/library/fixtures").json()) >= 5


def test_sample_doc_helper_matches_files():
    assert sample_doc("hobby-tent-peppers")["format"] == "leafcast-room"
