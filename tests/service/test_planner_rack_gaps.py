"""The least gap follows the zone: a rack tier's fixtures keep it to the tier's own closed sides (walls, uprights,
side panels) and stay under its shelf; open sides need no gap.

Checked on the three-tier rack sample (sample_rooms/three-tier-greens-rack.json, a 0.6096 × 1.2192 m rack, its
shelves covering every tier) by computing each candidate's footprint here from the fixture's length and width.
The 10 cm gap is the planner's default (common practice, no source).
"""

import threading

import pytest

from app.room.library import fixture_library
from app.room.roomfile import parse_room_file, to_json_bytes
from app.service.planner import PlanOptions
from app.service.planner.search import arrangements, zone_search
from tests.conftest import sample_doc

RACK_W, RACK_L = 0.6096, 1.2192
GAP = 0.10
TYPES = ("strip-0.6", "panel-1.2x0.3", "bararray-4x0.6")
TOL = 1e-6


def footprints(t, rot, pos):
    g = t.geometry
    a, b = (g.length_m, g.width_m) if rot % 180 == 0 else (g.width_m, g.length_m)
    return [(x - a / 2, y - b / 2, x + a / 2, y + b / 2) for x, y in pos]


def every_candidate(rf):
    types = [fixture_library()[i] for i in TYPES]
    for zone in rf.room.zones:
        for t, rot, *_, pos in arrangements(rf.room, zone, types, PlanOptions()):
            yield zone, footprints(t, rot, pos), pos


def rack_in_a_room(*obstacles) -> dict:
    """The sample rack standing in a 1.5 × 2 m room, against its left and front walls (film, closed)."""
    doc = sample_doc("three-tier-greens-rack")
    doc["room"].update(width_m=1.5, length_m=2.0)
    doc["room"]["obstacles"] += list(obstacles)
    return doc


SIDE_PANEL = {
    "id": "panel-right",
    "name": "Side panel",
    "x_m": RACK_W,
    "y_m": 0.0,
    "z_m": 0.0,
    "width_m": 0.01,
    "length_m": RACK_L,
    "height_m": 1.88,
}


def test_the_sample_rack_keeps_the_gap_to_its_closed_film_walls():
    """The rack is the room, wrapped in film: its shelf edges are the walls, every side closed."""
    rf = parse_room_file(to_json_bytes(sample_doc("three-tier-greens-rack")))
    seen = 0
    for _zone, boxes, _pos in every_candidate(rf):
        for x0, y0, x1, y1 in boxes:
            seen += 1
            assert x0 >= GAP - TOL and y0 >= GAP - TOL and x1 <= RACK_W - GAP + TOL and y1 <= RACK_L - GAP + TOL
    assert seen


def test_open_sides_of_the_sample_rack_need_no_gap():
    doc = sample_doc("three-tier-greens-rack")
    doc["room"]["open_sides"] = ["front", "back"]
    rf = parse_room_file(to_json_bytes(doc))
    reach = 0.0
    for _zone, boxes, _pos in every_candidate(rf):
        for x0, y0, x1, y1 in boxes:
            assert x0 >= GAP - TOL and x1 <= RACK_W - GAP + TOL  # left and right still closed
            assert y0 >= -TOL and y1 <= RACK_L + TOL  # front and back open: up to the edge, not past it
            reach = max(reach, y1 - (RACK_L - GAP), GAP - y0)
    assert reach > 0.05  # some candidates really use the open sides' room


def test_a_rack_standing_in_a_room_hangs_each_tier_under_its_own_shelf():
    """Against the closed left and front walls: the gap; its inner sides are open (no panel, no upright): the
    footprints reach the shelf's edge but never past it (they hang under that shelf). Before, the gap was taken
    to the room's far walls and a fixture could stick out of the rack."""
    rf = parse_room_file(to_json_bytes(rack_in_a_room()))
    seen = 0
    for _zone, boxes, _pos in every_candidate(rf):
        for x0, y0, x1, y1 in boxes:
            seen += 1
            assert x0 >= GAP - TOL and y0 >= GAP - TOL
            assert x1 <= RACK_W + TOL and y1 <= RACK_L + TOL
    assert seen


def test_a_side_panel_closes_the_tiers_side():
    """A panel along the rack's right side, from the floor past the top shelf: 10 cm to it on every tier."""
    rf = parse_room_file(to_json_bytes(rack_in_a_room(SIDE_PANEL)))
    seen = 0
    for _zone, boxes, _pos in every_candidate(rf):
        for x0, y0, x1, y1 in boxes:
            seen += 1
            assert x0 >= GAP - TOL and y0 >= GAP - TOL and x1 <= RACK_W - GAP + TOL and y1 <= RACK_L + TOL
    assert seen


def test_a_panel_beside_only_the_top_tier_closes_only_that_tier():
    """How a zone's tier is found (app.room.layout): the shelf covering it; a panel from 1.25 m (shelf 3) up
    stands beside tier 3 only, so tiers 1 and 2 keep their open right side."""
    short = {**SIDE_PANEL, "z_m": 1.28, "height_m": 0.6}
    rf = parse_room_file(to_json_bytes(rack_in_a_room(short)))
    widest = {}
    for zone, boxes, _pos in every_candidate(rf):
        widest[zone.id] = max([widest.get(zone.id, 0.0)] + [x1 for _x0, _y0, x1, _y1 in boxes])
    assert widest["tier-3"] <= RACK_W - GAP + TOL
    assert widest["tier-1"] > RACK_W - GAP + 0.05 and widest["tier-2"] > RACK_W - GAP + 0.05


@pytest.mark.parametrize("doc", [rack_in_a_room(), rack_in_a_room(SIDE_PANEL)], ids=["open", "panel"])
def test_zone_search_layouts_obey_the_tiers_sides(doc):
    """The microgreen tier's layouts (a 5 cm gap, so that strips fit) keep to the tier's sides."""
    gap = 0.05
    rf = parse_room_file(to_json_bytes(doc))
    right = RACK_W - (gap if len(rf.room.obstacles) > 4 else 0.0)
    zone = rf.room.zones[0]
    t = fixture_library()["strip-0.6"]
    lays = zone_search(rf, zone, [t], PlanOptions(min_gap_m=gap), lambda *_: None, threading.Event())
    assert lays
    for lay in lays:
        for x0, y0, x1, y1 in footprints(t, lay.rotation_deg, lay.positions):
            assert x0 >= gap - TOL and y0 >= gap - TOL and x1 <= right + TOL and y1 <= RACK_L + TOL
