"""Bad input, every time a clear 4xx naming the field and the reason: never a 500 or Python's own wording."""

from __future__ import annotations

import json

import pytest

from app.room import limits
from app.room.roomfile import RoomFileError, nesting_depth, parse_room_file
from app.room.storage import MAX_ID_CHARS


def _room(client) -> str:
    return client.get("/api/rooms").json()[0]["id"]


JSON_ROUTES = ["/api/rooms", "/api/rooms/import", "/api/analyze", "/api/photometry/spectrum", "/api/photometry/fit"]


def test_nesting_depth_counts_outside_strings():
    assert nesting_depth('{"a": [1, {"b": "[[[[{{{{"}]}') == 3
    assert nesting_depth("[" * 70 + "]" * 70) == 70


@pytest.mark.parametrize("route", JSON_ROUTES)
def test_deep_nesting_is_refused_before_parsing_on_every_json_route(client, route):
    r = client.post(route, content="[" * 5000 + "]" * 5000)
    assert r.status_code == 422
    assert "nested 5,000 deep" in r.json()["message"] and str(limits.MAX_NESTING_DEPTH) in r.json()["message"]


def test_deep_nesting_in_a_file_is_a_room_file_error_not_a_recursion_error(tmp_path):
    with pytest.raises(RoomFileError) as exc:
        parse_room_file("[" * 100_000)
    assert exc.value.kind == "not_a_room_file" and "nested" in str(exc.value)


def test_leafcast_check_reports_a_deep_file(tmp_path, capsys):
    from app.cli import main

    path = tmp_path / "deep.json"
    path.write_text('{"format": "leafcast-room", "x": ' + "[" * 3000 + "]" * 3000 + "}")
    assert main(["check", str(path)]) == 1
    assert "nested" in capsys.readouterr().err


@pytest.mark.parametrize("route", JSON_ROUTES)
def test_a_5000_digit_number_gets_our_message(client, route, tent_doc):
    body = json.dumps(tent_doc).replace('"revision": 0', '"revision": ' + "7" * 5000, 1)
    r = client.post(route, content=body)
    assert r.status_code == 422
    msg = r.json()["message"]
    assert "5,000 digits" in msg and "Exceeds the limit" not in msg and "int_max_str_digits" not in msg


def test_infinite_number_spelled_out_is_refused_in_a_room_file(tent_doc):
    raw = json.dumps(tent_doc).replace('"revision": 0', '"revision": 1e999', 1)
    with pytest.raises(RoomFileError, match="1e999 is not allowed"):
        parse_room_file(raw)


@pytest.mark.parametrize("version", ['"1"', "1.5", "true", "null", "[1]", '"two"', "0"])
def test_a_version_that_is_not_a_whole_number_says_what_the_file_is(client, tent_doc, version):
    body = json.dumps(tent_doc).replace('"version": 1', f'"version": {version}', 1)
    r = client.post("/api/rooms", content=body)
    assert r.status_code == 422
    assert r.json()["error"] == "not_a_room_file"
    assert "not a Leafcast room file, or it was made by a newer Leafcast" in r.json()["message"]


def test_a_newer_version_keeps_its_own_wording(client, tent_doc):
    r = client.post("/api/rooms", json={**tent_doc, "version": 7})
    assert r.status_code == 422 and r.json()["error"] == "newer_version" and "Update Leafcast" in r.json()["message"]


@pytest.mark.parametrize("name", ["   ", "\t", "\u3000"])
def test_blank_names_are_refused(client, tent_doc, name):
    tent_doc["room"]["name"] = name
    r = client.post("/api/rooms", json=tent_doc)
    assert r.status_code == 422
    assert r.json()["problems"][0] == {"field": "room.name", "message": "must not be blank (only spaces)"}


@pytest.mark.parametrize("bad", ["\x00", "\x07", "\x1b[31m", "\u0085"])
def test_control_characters_are_refused_with_the_field(client, tent_doc, bad):
    tent_doc["room"]["zones"][0]["name"] = f"bench{bad}one"
    r = client.post("/api/rooms", json=tent_doc)
    assert r.status_code == 422
    assert r.json()["problems"][0]["field"] == "room.zones[0].name"
    assert "control character" in r.json()["problems"][0]["message"]


def test_a_room_saved_before_the_name_rule_still_opens(client, tent_doc):
    store = client.app.state.store
    created = client.post("/api/rooms", json=tent_doc).json()
    path = store.rooms_dir / f"{created['id']}.json"
    doc = json.loads(path.read_text())
    doc["room"]["name"] = "   "  # as Leafcast 0.1 accepted it
    path.write_text(json.dumps(doc))
    assert client.get(f"/api/rooms/{created['id']}").status_code == 200


@pytest.mark.parametrize("method", ["GET", "PUT", "DELETE"])
def test_a_very_long_id_is_a_404_not_a_file_system_error(client, tent_doc, method):
    long_id = "a" * 300
    r = client.request(method, f"/api/rooms/{long_id}", json=tent_doc if method == "PUT" else None)
    assert r.status_code == 404
    assert len(r.json()["message"]) < 40 + MAX_ID_CHARS
    assert client.get(f"/rooms/{long_id}").status_code == 404


def _chunks(total: int, size: int = 256 * 1024):
    sent = 0
    while sent < total:
        yield b" " * size
        sent += size


@pytest.mark.parametrize("route", JSON_ROUTES + ["/api/photometry/import"])
def test_chunked_oversize_bodies_are_413_on_every_route(client, route):
    ctype = "application/octet-stream" if route.endswith("/import") and "photometry" in route else "application/json"
    r = client.post(route, content=_chunks(limits.MAX_BODY_BYTES + 1024 * 1024), headers={"Content-Type": ctype})
    assert r.status_code == 413, r.text
    assert "larger than" in r.json()["message"]


def test_chunked_oversize_put_is_413(client):
    r = client.put(f"/api/rooms/{_room(client)}", content=_chunks(limits.MAX_BODY_BYTES + 1024 * 1024))
    assert r.status_code == 413


def test_delete_while_a_save_is_arriving_is_a_404_not_a_500(client, tent_doc):
    room_id = client.post("/api/rooms", json=tent_doc).json()["id"]
    doc = client.get(f"/api/rooms/{room_id}").json()

    def body():
        yield json.dumps(doc)[:100].encode()
        client.app.state.store.delete(room_id)  # a DELETE from another tab lands while we are sending
        yield json.dumps(doc)[100:].encode()

    r = client.put(f"/api/rooms/{room_id}", content=body())
    assert r.status_code == 404
    assert "deleted" in r.json()["message"] or "no room" in r.json()["message"]
