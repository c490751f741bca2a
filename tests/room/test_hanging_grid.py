"""The room file's optional hanging grid: a 0.1 file opens unchanged, bad grids are refused naming the field.

The grid's definition (lines at origin + k × pitch, a missing pitch free along that axis) is Leafcast issue 14's.
"""

import json

import pytest

from app.room.roomfile import RoomFileError, parse_room_file, to_json_bytes
from app.service.analysis import analyse
from tests.conftest import sample_doc


def problems(doc) -> list[tuple[str, str]]:
    with pytest.raises(RoomFileError) as exc:
        parse_room_file(json.dumps(doc))
    return [(p.field, p.message) for p in exc.value.problems]


def test_a_file_without_a_grid_opens_and_analyses_as_before(tent_doc):
    assert "hanging_grid" not in tent_doc["room"]
    rf = parse_room_file(json.dumps(tent_doc))
    assert rf.room.hanging_grid is None
    with_grid = json.loads(json.dumps(tent_doc))
    with_grid["room"]["hanging_grid"] = {"origin_x_m": 0.3, "origin_y_m": 0.2, "pitch_x_m": None, "pitch_y_m": 0.4}
    a = analyse(rf, include_grids=False, with_fixes=False)
    b = analyse(parse_room_file(json.dumps(with_grid)), include_grids=False, with_fixes=False)
    assert a["zones"] == b["zones"]  # the grid says where fixtures may hang; it does not change their light


def test_a_grid_round_trips_through_the_file(tent_doc):
    tent_doc["room"]["hanging_grid"] = {"origin_x_m": 0.3, "origin_y_m": 0.2, "pitch_y_m": 0.4, "label": "Rails"}
    rf = parse_room_file(json.dumps(tent_doc))
    again = parse_room_file(to_json_bytes(rf.model_dump(mode="json")))
    assert again.room.hanging_grid == rf.room.hanging_grid
    assert (again.room.hanging_grid.pitch_x_m, again.room.hanging_grid.pitch_y_m) == (None, 0.4)


@pytest.mark.parametrize("pitch", [0, -0.3])
def test_pitch_must_be_positive(tent_doc, pitch):
    tent_doc["room"]["hanging_grid"] = {"origin_x_m": 0.3, "origin_y_m": 0.2, "pitch_x_m": pitch}
    got = problems(tent_doc)
    assert got[0][0] == "room.hanging_grid.pitch_x_m"
    assert "greater than 0" in got[0][1]


def test_a_grid_needs_a_pitch(tent_doc):
    tent_doc["room"]["hanging_grid"] = {"origin_x_m": 0.3, "origin_y_m": 0.2}
    field, message = problems(tent_doc)[0]
    assert field == "room.hanging_grid"
    assert "pitch_x_m or pitch_y_m" in message


@pytest.mark.parametrize("axis, value", [("x", 1.5), ("y", 2.0)])
def test_origin_must_be_inside_the_room(tent_doc, axis, value):
    # The sample tent is 1.2192 m (4 ft) square.
    tent_doc["room"]["hanging_grid"] = {"origin_x_m": 0.3, "origin_y_m": 0.2, "pitch_x_m": 0.3}
    tent_doc["room"]["hanging_grid"][f"origin_{axis}_m"] = value
    field, message = problems(tent_doc)[0]
    assert field == f"room.hanging_grid.origin_{axis}_m"
    assert "outside the room" in message and "1.2192" in message


def test_negative_origin_is_named(tent_doc):
    tent_doc["room"]["hanging_grid"] = {"origin_x_m": -0.1, "origin_y_m": 0.2, "pitch_x_m": 0.3}
    assert problems(tent_doc)[0][0] == "room.hanging_grid.origin_x_m"


def test_the_api_names_the_field(client):
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["hanging_grid"] = {"origin_x_m": 9.0, "origin_y_m": 0.2, "pitch_y_m": 0.3}
    r = client.post("/api/rooms", content=to_json_bytes(doc), headers={"content-type": "application/json"})
    assert r.status_code in (400, 422), r.text
    assert "room.hanging_grid.origin_x_m" in r.text
