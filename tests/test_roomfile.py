"""Room files: clear messages naming the field, limits, and the refusal of what is not a room file."""

import copy
import json

import pytest

from app.room import limits
from app.room.roomfile import RoomFileError, parse_room_file
from tests.conftest import SAMPLES, sample_doc


def problems(doc) -> list[tuple[str, str]]:
    with pytest.raises(RoomFileError) as exc:
        parse_room_file(doc if isinstance(doc, bytes | str) else json.dumps(doc))
    return [(p.field, p.message) for p in exc.value.problems]


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_sample_rooms_load(path):
    rf = parse_room_file(path.read_bytes())
    assert rf.room.fixtures and rf.room.zones


def test_fixture_outside_the_room(tent_doc):
    tent_doc["room"]["fixtures"][0]["x_m"] = 1.2
    got = problems(tent_doc)
    assert got[0][0] == "room.fixtures[0]"
    assert "outside the room" in got[0][1]


def test_negative_height_named(tent_doc):
    tent_doc["room"]["fixtures"][1]["hanging_height_m"] = -0.5
    assert problems(tent_doc) == [("room.fixtures[1].hanging_height_m", "Input should be greater than 0")]


@pytest.mark.parametrize("value, reason", [(5, "greater than or equal to 10"), (101, "less than or equal to 100")])
def test_dimming_out_of_range(tent_doc, value, reason):
    tent_doc["room"]["fixtures"][0]["dimming_pct"] = value
    ((field, msg),) = problems(tent_doc)
    assert field == "room.fixtures[0].dimming_pct" and reason in msg


def test_unknown_fixture_type(tent_doc):
    tent_doc["room"]["fixtures"][0]["type_id"] = "nowhere"
    ((field, msg),) = problems(tent_doc)
    assert field == "room.fixtures[0].type_id" and "unknown fixture type 'nowhere'" in msg


def test_missing_embedded_fixture_type(tent_doc):
    tent_doc["room"]["fixture_types"] = []
    got = problems(tent_doc)
    assert all("must embed it" in m for _, m in got) and len(got) == 2


def test_duplicate_ids(tent_doc):
    tent_doc["room"]["fixtures"][1]["id"] = tent_doc["room"]["fixtures"][0]["id"]
    assert ("room.fixtures[1].id", "duplicate id 'F1'") in problems(tent_doc)


def test_nan_refused_by_name(tent_doc):
    text = json.dumps(tent_doc).replace('"x_m": 0.3148', '"x_m": NaN')
    ((field, msg),) = problems(text)
    assert "NaN is not allowed" in msg


def test_nan_value_refused_after_decoding(tent_doc):
    from app.room.models import RoomFile

    tent_doc["room"]["fixtures"][0]["x_m"] = float("nan")
    with pytest.raises(Exception, match="finite"):
        RoomFile.model_validate(tent_doc)


def test_newer_version_refused_with_its_own_message(tent_doc):
    tent_doc["version"] = 7
    with pytest.raises(RoomFileError) as exc:
        parse_room_file(json.dumps(tent_doc))
    assert exc.value.kind == "newer_version"
    assert "newer Leafcast" in exc.value.problems[0].message


@pytest.mark.parametrize("raw", [b"[1, 2, 3]", b'{"format": "something-else"}', b"\xff\xfe", b"{not json"])
def test_not_a_room_file(raw):
    with pytest.raises(RoomFileError) as exc:
        parse_room_file(raw)
    assert exc.value.kind == "not_a_room_file"


def test_wrong_types_named(tent_doc):
    tent_doc["room"]["zones"][0]["canopy_height_m"] = "high"
    ((field, msg),) = problems(tent_doc)
    assert field == "room.zones[0].canopy_height_m" and "number" in msg


def test_fixture_in_the_canopy(tent_doc):
    tent_doc["room"]["fixtures"][0]["hanging_height_m"] = tent_doc["room"]["zones"][0]["canopy_height_m"]
    assert any("sits in the canopy" in m for _, m in problems(tent_doc))


def test_zero_size_emitter(tent_doc):
    tent_doc["room"]["fixture_types"][0]["geometry"]["length_m"] = 0
    assert any("zero-size emitter" in m for _, m in problems(tent_doc))


def test_fixture_inside_obstacle():
    doc = sample_doc("three-tier-greens-rack")
    doc["room"]["fixtures"][0]["hanging_height_m"] = 0.665
    assert any("inside obstacle 'shelf-2'" in m for _, m in problems(doc))


def test_limits_each_have_a_message(tent_doc):
    many = copy.deepcopy(tent_doc)
    f = many["room"]["fixtures"][0]
    many["room"]["fixtures"] = [dict(f, id=f"F{k}") for k in range(limits.MAX_FIXTURES + 1)]
    assert any("at most 5000" in m for _, m in problems(many))
    big = copy.deepcopy(tent_doc)
    big["room"]["width_m"] = 1000
    assert any("less than or equal to 300" in m for f, m in problems(big))
    fine = copy.deepcopy(tent_doc)
    fine["room"].update(width_m=120.0, length_m=120.0, grid_spacing_m=0.05)
    fine["room"]["zones"][0].update(width_m=120.0, length_m=120.0)
    assert any("grid would have" in m for _, m in problems(fine))


def test_huge_file_refused_by_size():
    with pytest.raises(RoomFileError) as exc:
        parse_room_file(b" " * (limits.MAX_BODY_BYTES + 1))
    assert exc.value.kind == "too_large"


def test_a_0_1_room_keeps_its_one_finish_and_open_sides(tent_doc):
    # Files written by 0.1 have wall_finish + open_sides only: every surface derives from them.
    tent_doc["room"]["open_sides"] = ["front"]
    room = parse_room_file(json.dumps(tent_doc)).room
    assert room.surface_finishes == {}
    assert room.finish_of("front").kind == "open"
    for s in ("left", "right", "back", "ceiling"):
        assert (room.finish_of(s).kind, room.finish_of(s).reflectance) == ("specular", 0.95)


def test_per_surface_finishes_round_trip_and_reach_the_engine(tent_doc):
    from app.room.roomfile import dump_room_file
    from app.service.scene_builder import build_scene

    tent_doc["room"]["surface_finishes"] = {
        "front": {"kind": "open"},
        "left": {"kind": "diffuse", "reflectance": 0.8, "label": "White board"},
    }
    rf = parse_room_file(json.dumps(tent_doc))
    again = parse_room_file(json.dumps(dump_room_file(rf)))
    assert again.room.surface_finishes == rf.room.surface_finishes
    enc = build_scene(rf.room).enclosure
    assert enc.surface("front") == ("open", 0.0)
    assert enc.surface("left") == ("diffuse", 0.8)
    assert enc.surface("back") == ("specular", 0.95)  # not listed: the room's wall_finish


def test_unknown_surface_and_kind_are_named(tent_doc):
    tent_doc["room"]["surface_finishes"] = {"roof": {"kind": "open"}, "left": {"kind": "glass"}}
    fields = {f for f, _ in problems(tent_doc)}
    assert any("surface_finishes" in f and "roof" in f for f in fields)
    assert any("surface_finishes.left.kind" in f for f in fields)


def test_a_floor_is_matt_or_absorbing_and_a_white_floor_adds_light(tent_doc):
    from app.service.analysis import analyse

    tent_doc["room"]["surface_finishes"] = {"floor": {"kind": "specular", "reflectance": 0.9}}
    ((field, msg),) = problems(tent_doc)
    assert field == "room.surface_finishes" and "floor" in msg and "specular" in msg
    # Matt walls and a matt floor beside two benches: light the floor takes between the benches returns by
    # way of walls and ceiling (in the tent the canopy covers the whole floor, so it would change nothing).
    doc = sample_doc("basement-two-benches")
    dark = analyse(parse_room_file(json.dumps(doc)))["zones"][0]["ppfd"]["avg"]
    doc["room"]["surface_finishes"] = {"floor": {"kind": "diffuse", "reflectance": 0.8}}
    rf = parse_room_file(json.dumps(doc))
    assert rf.room.finish_of("floor").kind == "diffuse"
    white = analyse(rf)["zones"][0]["ppfd"]["avg"]
    assert white > dark * 1.001
