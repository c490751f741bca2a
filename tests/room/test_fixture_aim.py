"""Fixture tilt and aim in the room file: optional, range-checked with messages naming the field, carried to
the engine."""

import json

import pytest

from app.room.roomfile import RoomFileError, parse_room_file
from app.service.scene_builder import build_scene


def problems(doc) -> list[tuple[str, str]]:
    with pytest.raises(RoomFileError) as exc:
        parse_room_file(json.dumps(doc))
    return [(p.field, p.message) for p in exc.value.problems]


def test_files_without_aim_hang_straight_down(tent_doc):
    for f in tent_doc["room"]["fixtures"]:
        f.pop("tilt_deg", None)
        f.pop("aim_deg", None)
    room = parse_room_file(json.dumps(tent_doc)).room
    assert all(f.tilt_deg == 0.0 and f.aim_deg == 0.0 for f in room.fixtures)
    assert all(e.tilt_deg == 0.0 and not e.tilted for e in build_scene(room).emitters)


@pytest.mark.parametrize(
    "field, value, reason",
    [
        ("tilt_deg", -1, "greater than or equal to 0"),
        ("tilt_deg", 180.5, "less than or equal to 180"),
        ("aim_deg", -0.1, "greater than or equal to 0"),
        ("aim_deg", 360, "less than 360"),
        ("tilt_deg", "up", "valid number"),
    ],
)
def test_out_of_range_aim_is_named(tent_doc, field, value, reason):
    tent_doc["room"]["fixtures"][0][field] = value
    ((where, msg),) = problems(tent_doc)
    assert where == f"room.fixtures[0].{field}"
    assert reason in msg


@pytest.mark.parametrize("tilt", [0.0, 90.0, 180.0])
def test_tilt_and_aim_reach_the_engine(tent_doc, tilt):
    tent_doc["room"]["fixtures"][0].update(tilt_deg=tilt, aim_deg=270.0)
    room = parse_room_file(json.dumps(tent_doc)).room
    e = build_scene(room).emitters[0]
    assert e.tilt_deg == tilt
    # A level fixture's aim means nothing: the engine gets 0, so level fixtures share footprints.
    assert e.aim_deg == (270.0 if tilt else 0.0)


def test_the_sheet_says_where_a_tilted_fixture_leans(tent_doc):
    from app.service.sheet_data import fixtures_to_hang

    tent_doc["room"]["fixtures"][0].update(tilt_deg=30, aim_deg=45)
    rows = fixtures_to_hang(parse_room_file(json.dumps(tent_doc)).room)
    assert rows[0]["rotation"].endswith(", tilted 30° toward 45°")
    assert "tilted" not in rows[1]["rotation"]
