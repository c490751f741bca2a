"""Layout cautions from the server (one rule for the editor and the sheet): touching fixtures, walls, shelves.

The 5 mm touch and 5 cm same-level thresholds are Leafcast's own (common practice, no source); the cases below
are laid out by hand so each answer is known.
"""

from __future__ import annotations

import json

from app.room.roomfile import parse_room_file
from app.service.analysis import analyse
from app.service.layout_cautions import layout_cautions
from app.web.views import sheet
from tests.conftest import sample_doc


def _codes(doc):
    return [(w["code"], w["fixture_id"]) for w in layout_cautions(parse_room_file(json.dumps(doc)).room)]


def test_touching_fixtures_walls_and_shelves_are_found_by_hand_made_cases():
    doc = sample_doc("hobby-tent-peppers")
    f1, f2 = doc["room"]["fixtures"][:2]
    t = next(t for t in doc["room"]["fixture_types"] if t["id"] == f1["type_id"])
    length, width = t["geometry"]["length_m"], t["geometry"]["width_m"]
    f1.update(x_m=0.6, y_m=width / 2 + 0.03, rotation_deg=0)
    h = f1["hanging_height_m"]
    f2.update(x_m=0.6, y_m=f1["y_m"] + width - 0.01, rotation_deg=0, hanging_height_m=h)
    assert ("fixtures_touch", f2["id"]) in _codes(doc)  # 1 cm overlap side by side
    f2["hanging_height_m"] = h + 0.2  # one above the other: no collision
    assert ("fixtures_touch", f2["id"]) not in _codes(doc)
    f2.update(hanging_height_m=h, y_m=f1["y_m"] + width + 0.05)  # 5 cm apart
    assert ("fixtures_touch", f2["id"]) not in _codes(doc)
    f1["x_m"] = length / 2  # its end against the left wall
    assert ("fixture_touches_wall", f1["id"]) in _codes(doc)
    doc["room"]["open_sides"] = ["left"]  # an open side is no wall
    assert ("fixture_touches_wall", f1["id"]) not in _codes(doc)
    doc["room"]["obstacles"] = [
        {
            "id": "shelf",
            "name": "Shelf",
            "x_m": 0.0,
            "y_m": 0.0,
            "z_m": f1["hanging_height_m"],
            "width_m": 0.5,
            "length_m": 1.2,
            "height_m": 0.03,
        }
    ]
    assert ("fixture_touches_obstacle", f1["id"]) in _codes(doc)


def test_the_cautions_reach_the_analysis_and_the_printed_sheet():
    doc = sample_doc("research-chamber-metric")  # its 1.2 m panels run end to end and meet the walls
    rf = parse_room_file(json.dumps(doc))
    result = analyse(rf)
    assert {"fixtures_touch", "fixture_touches_wall"} <= {w["code"] for w in result["warnings"]}
    page = sheet("research-chamber-metric", rf, result, "letter")
    text = json.dumps(page, default=str)
    assert "touch at the same height" in text
