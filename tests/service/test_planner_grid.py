"""The hanging grid in the planner, check-my-setup and the printed sheet.

A grid's lines sit at origin + k × pitch (Leafcast issue 14's definition); whether a centre is on a line is
checked here with exact fractions of the decimal values, not with the planner's snapping. Gaps: the planner's
default 10 cm between footprints and to closed walls (common practice, no source). Lengths on the sheet follow
the display rule restated in tests/room/display_reference.py.
"""

import json
from fractions import Fraction

import pytest

from app.room.models import RoomFile
from app.room.roomfile import parse_room_file, to_json_bytes
from app.service.analysis import analyse
from app.service.hanging import grid_words, lines_m, snap_m
from app.service.planner import PlanOptions, check_setup, plan
from app.web.views import sheet
from tests.conftest import sample_doc
from tests.room import display_reference as ref

TENT_TYPES = ("bararray-6x1.0", "spot-90")
JSON = {"content-type": "application/json"}
RAILS = {"origin_x_m": 0.0, "origin_y_m": 0.2096, "pitch_y_m": 0.2}  # rails along x, every 20 cm
HOOKS = {"origin_x_m": 0.3048, "origin_y_m": 0.3048, "pitch_x_m": 0.3048, "pitch_y_m": 0.3048}  # a 1 ft grid


def tent(grid) -> RoomFile:
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["hanging_grid"] = grid
    return parse_room_file(to_json_bytes(doc))


def on_line(v: float, origin: float, pitch: float, tol_m=Fraction(1, 2000)) -> bool:
    """Within 0.5 mm of origin + k × pitch, in exact decimal fractions."""
    q = (Fraction(repr(v)) - Fraction(repr(origin))) / Fraction(repr(pitch))
    return abs(q - round(q)) * Fraction(repr(pitch)) <= tol_m


def footprints(rf):
    types = {t.id: t for t in rf.room.fixture_types}
    out = []
    for f in rf.room.fixtures:
        g = types[f.type_id].geometry
        a, b = (g.length_m, g.width_m) if f.rotation_deg % 180 == 0 else (g.width_m, g.length_m)
        out.append((f.x_m - a / 2, f.y_m - b / 2, f.x_m + a / 2, f.y_m + b / 2))
    return out


def test_lines_and_snapping_by_hand():
    # Lines at 0.2096 + 0.2 k inside 0..1.2192: 0.0096, 0.2096, ..., 1.2096 (hand-computed).
    assert lines_m(0.2096, 0.2, 0.0, 1.2192) == [0.0096, 0.2096, 0.4096, 0.6096, 0.8096, 1.0096, 1.2096]
    assert snap_m(0.61, 0.2096, 0.2, 0.0, 1.2192) == 0.6096  # nearest line
    assert snap_m(0.30, 0.2096, 0.2, 0.0, 1.2192) == 0.2096  # 0.0904 below beats 0.1096 above
    assert snap_m(0.25, 0.2096, 0.2, 0.35, 1.2192) == 0.4096  # the nearest is outside the range: the next one
    assert snap_m(0.25, 0.2096, 0.2, 0.22, 0.40) is None  # no line in the range: the candidate is dropped
    assert snap_m(0.25, 0.2096, None, 0.0, 1.2) == 0.25  # a free axis is left alone


@pytest.mark.parametrize("grid", [RAILS, HOOKS], ids=["rails", "hooks"])
def test_every_proposal_hangs_on_the_grid_with_the_gaps_and_says_so(grid):
    rf = tent(grid)
    result = plan(rf, PlanOptions(type_ids=TENT_TYPES))
    assert result["proposals"]
    assert result["hanging_grid"] == grid_words(rf.room)
    free_x = set()
    for p in result["proposals"]:
        cand = parse_room_file(to_json_bytes(p["room_file"]))
        assert cand.room.hanging_grid == rf.room.hanging_grid  # the grid stays in the applied file
        for f in cand.room.fixtures:
            assert on_line(f.y_m, grid["origin_y_m"], grid["pitch_y_m"])
            if grid.get("pitch_x_m"):
                assert on_line(f.x_m, grid["origin_x_m"], grid["pitch_x_m"])
            free_x.add(round(f.x_m, 3))
        boxes = footprints(cand)
        for i, (x0, y0, x1, y1) in enumerate(boxes):
            assert min(x0, y0) >= 0.1 - 1e-6 and x1 <= cand.room.width_m - 0.1 + 1e-6
            assert y1 <= cand.room.length_m - 0.1 + 1e-6
            for a0, b0, a1, b1 in boxes[i + 1 :]:
                assert max(a0 - x1, x0 - a1, b0 - y1, y0 - b1) >= 0.1 - 1e-6
        assert all(z["on_grid"] for z in p["zones"])
        assert all("on the hanging grid" in text for text in p["layouts"])
        assert analyse(cand, include_grids=False, with_fixes=False)["verdict"]["meets_target"]
    if "pitch_x_m" not in grid:
        assert any(not on_line(x, 0.0, 0.2) for x in free_x)  # along the rails the centres stay free


def test_without_a_grid_the_proposals_do_not_claim_one():
    result = plan(tent(None), PlanOptions(type_ids=TENT_TYPES))
    assert result["hanging_grid"] is None
    assert not any("hanging grid" in text for p in result["proposals"] for text in p["layouts"])


def test_a_grid_with_no_line_clear_of_the_walls_gets_nothing():
    """Rails only 5 cm from the front and back walls: no fixture can hang 10 cm clear of them on a rail."""
    rf = tent({"origin_x_m": 0.0, "origin_y_m": 0.05, "pitch_y_m": 1.1192})
    result = plan(rf, PlanOptions(type_ids=TENT_TYPES))
    assert result["proposals"] == [] and result["unmet_zones"] == ["Pepper pots"]


def test_check_my_setup_re_hangs_on_the_grid():
    """A tent whose one fixture is far too dim: no setting fixes it, so the re-hang comes from the search."""
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["hanging_grid"] = RAILS
    doc["room"]["fixtures"] = doc["room"]["fixtures"][:1]
    doc["room"]["fixtures"][0].update(dimming_pct=10, hanging_height_m=2.0)
    rf = parse_room_file(to_json_bytes(doc))
    out = check_setup(rf)
    layouts = [f for z in out["zones"] for f in z["fixes"] if f["kind"] == "layout"]
    assert layouts
    for fix in layouts:
        assert fix["fixtures"]
        for f in fix["fixtures"]:
            assert on_line(f["y_m"], RAILS["origin_y_m"], RAILS["pitch_y_m"])
        assert "on the hanging grid" in fix["summary"]


@pytest.mark.parametrize("units", ["imperial", "metric"])
def test_the_sheet_lists_the_grid(units):
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["hanging_grid"] = {**RAILS, "label": "Ceiling rails"}
    doc["room"]["display_units"] = units
    rf = parse_room_file(to_json_bytes(doc))
    page = sheet("x", rf, analyse(rf), "letter")
    words = page["room"]["hanging_grid"]
    expected = [ref.length(v, units, True) for v in (0.0096, 0.2096, 0.4096, 0.6096, 0.8096, 1.0096, 1.2096)]
    assert words.startswith("Ceiling rails: rails along x at " + ", ".join(expected) + " from the front wall")
    assert sheet("x", tent(None), analyse(tent(None)), "letter")["room"]["hanging_grid"] is None


def test_the_printed_sheet_shows_the_grid(client):
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["hanging_grid"] = HOOKS
    rid = client.post("/api/rooms", content=json.dumps(doc), headers=JSON).json()["id"]
    html = client.get(f"/rooms/{rid}/sheet").text
    assert "<dt>Hanging grid</dt>" in html
    assert "Hook points: hook rows at " + ref.length(0.0, "imperial", True) in html
    plain = sample_doc("hobby-tent-peppers")
    rid = client.post("/api/rooms", content=json.dumps(plain), headers=JSON).json()["id"]
    assert "Hanging grid" not in client.get(f"/rooms/{rid}/sheet").text


def test_a_fine_grid_is_summarised_not_listed():
    """1 mm rails over the 1.2192 m tent: lines at k mm for k = 0 ... 1219, 1,220 of them (hand count); the sheet
    gives the pitch, the first and the last instead of listing them, and a 1 µm pitch is worded as quickly."""
    rf = tent({"origin_x_m": 0.0, "origin_y_m": 0.0, "pitch_y_m": 0.001})
    words = grid_words(rf.room, "metric")
    first, last = ref.length(0.0, "metric", True), ref.length(1.219, "metric", True)
    assert f"rails along x every 0.1 cm from the front wall, first at {first}, last at {last} (1,220 lines)" in words
    assert "(1,219,201 lines)" in grid_words(tent({"origin_x_m": 0.0, "origin_y_m": 0.0, "pitch_y_m": 1e-6}).room)
    assert lines_m(0.0, 1e-6, 0.0, 1.2192) == [round(k * 1e-6, 4) for k in range(12)]


def test_a_fixture_off_the_grid_is_told_where_the_nearest_grid_place_is():
    doc = sample_doc("hobby-tent-peppers")
    f = doc["room"]["fixtures"][0]
    doc["room"]["hanging_grid"] = {"origin_x_m": 0.1, "origin_y_m": 0.1, "pitch_x_m": 0.2, "pitch_y_m": 0.2}
    f["x_m"], f["y_m"] = 0.5, 0.3  # on the grid
    on = [w for w in analyse(parse_room_file(json.dumps(doc)))["warnings"] if w["code"] == "fixture_off_grid"]
    assert all(w["fixture_id"] != f["id"] for w in on)
    f["x_m"] = 0.43  # 7 cm off the line at 0.5
    off = [w for w in analyse(parse_room_file(json.dumps(doc)))["warnings"] if w["code"] == "fixture_off_grid"]
    (w,) = [w for w in off if w["fixture_id"] == f["id"]]
    # The nearest grid place is (0.5, 0.3) m, said in the room's units by the one display rule.
    from app.room.units import format_length

    want = [format_length(v, doc["room"].get("display_units", "imperial"), fine=True) for v in (0.5, 0.3)]
    assert w["severity"] == "info" and all(t in w["fix"] for t in want), w
