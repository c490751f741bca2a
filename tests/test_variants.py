"""Rooms and variants over HTTP: duplicate, rename with the old address redirecting, trash and restore, compare."""

from tests.conftest import sample_doc


def make(client, name="Variant tent"):
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["name"] = name
    r = client.post("/api/rooms", json=doc)
    assert r.status_code == 201
    return r.json()["id"]


def test_duplicate_as_a_variant_keeps_the_layout(client):
    rid = make(client)
    r = client.post(f"/api/rooms/{rid}/duplicate", json={})
    assert r.status_code == 201
    new = r.json()
    assert new["name"] == "Variant tent (variant)" and new["id"] == "variant-tent-variant"
    a, b = client.get(f"/api/rooms/{rid}").json(), client.get(f"/api/rooms/{new['id']}").json()
    assert a["room"]["fixtures"] == b["room"]["fixtures"] and b["revision"] == 1


def test_rename_moves_the_id_and_the_old_address_redirects(client):
    rid = make(client, "Old name tent")
    r = client.post(f"/api/rooms/{rid}/rename", json={"name": "Pepper tent, spring"})
    assert r.status_code == 200 and r.json()["id"] == "pepper-tent-spring"
    assert client.get(f"/api/rooms/{rid}").status_code == 404
    page = client.get(f"/rooms/{rid}?format=json", follow_redirects=False)
    assert page.status_code == 308 and page.headers["location"] == "/rooms/pepper-tent-spring?format=json"
    assert (
        client.get(f"/rooms/{rid}/plan", follow_redirects=False).headers["location"] == "/rooms/pepper-tent-spring/plan"
    )
    assert (
        client.get("/rooms/pepper-tent-spring?format=json").json()["room_file"]["room"]["name"] == "Pepper tent, spring"
    )
    # Renamed twice: the first address still finds it.
    client.post("/api/rooms/pepper-tent-spring/rename", json={"name": "Pepper tent, summer"})
    assert client.get(f"/rooms/{rid}", follow_redirects=False).headers["location"] == "/rooms/pepper-tent-summer"


def test_rename_refuses_a_blank_name(client):
    rid = make(client, "Blank rename tent")
    r = client.post(f"/api/rooms/{rid}/rename", json={"name": "   "})
    assert r.status_code == 422 and "name" in r.text


def test_trash_and_restore(client):
    rid = make(client, "Trash tent")
    assert client.post(f"/api/rooms/{rid}/trash").status_code == 200
    assert client.get(f"/api/rooms/{rid}").status_code == 404
    assert rid not in [s["id"] for s in client.get("/api/rooms").json()]
    assert [t["id"] for t in client.get("/api/trash").json()] == [rid]
    r = client.post(f"/api/trash/{rid}/restore")
    assert r.status_code == 200 and r.json()["id"] == rid
    assert client.get(f"/api/rooms/{rid}").status_code == 200 and client.get("/api/trash").json() == []
    assert client.post(f"/api/trash/{rid}/restore").status_code == 404


def test_restore_under_a_new_id_when_the_old_one_is_taken(client):
    rid = make(client, "Taken tent")
    client.post(f"/api/rooms/{rid}/trash")
    make(client, "Taken tent")
    r = client.post(f"/api/trash/{rid}/restore")
    assert r.json()["id"] == "taken-tent-2"


def test_compare_puts_both_rooms_on_one_colour_range(client):
    a = make(client, "Compare A")
    b = client.post("/api/rooms", json=sample_doc("basement-two-benches")).json()["id"]
    data = client.get(f"/compare?a={a}&b={b}&format=json").json()
    assert [r["id"] for r in data["rooms"]] == [a, b]
    stress = max(z["target"]["ppfd_stress"] for r in data["rooms"] for z in r["zones"])
    rng = data["range"]
    assert rng["zmax"] >= stress and rng["zmax"] % rng["step"] == 0 and rng["step"] in (5, 10, 25, 50, 100, 250, 500)
    assert all(r["energy"]["power_w"] > 0 for r in data["rooms"])
    assert client.get(f"/compare?a={a}&b=nope").status_code == 404
