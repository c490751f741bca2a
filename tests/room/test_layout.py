"""The one layout rule (app.room.layout) on stacked racks, edges and shelves, and its users agreeing with it."""

from __future__ import annotations

import json
from types import SimpleNamespace as NS

import pytest

from app.engine.compute import covering_height_m
from app.room import layout
from app.room.roomfile import parse_room_file
from app.service.analysis import analyse
from app.service.scene_builder import room_boxes, zone_grid
from tests.conftest import SAMPLES, sample_doc


def _zone(zid, z, x=0.0, y=0.0, w=1.0, l=1.0):
    return NS(id=zid, x_m=x, y_m=y, width_m=w, length_m=l, canopy_height_m=z)


def _fixture(fid, x, y, h, rot=0.0):
    return NS(id=fid, type_id="t", x_m=x, y_m=y, hanging_height_m=h, rotation_deg=rot)


TIERS = [_zone("low", 0.1), _zone("mid", 0.8), _zone("top", 1.4)]


@pytest.mark.parametrize(
    ("height_m", "expected"),
    [(0.6, "low"), (0.81, "mid"), (1.39, "mid"), (1.8, "top"), (0.1, None), (0.05, None)],
)
def test_a_fixture_lights_the_highest_canopy_below_its_face(height_m, expected):
    z = layout.zone_lit_by(TIERS, _fixture("F", 0.5, 0.5, height_m))
    assert (z.id if z else None) == expected


def test_zone_edges_count_and_outside_lights_nothing():
    assert layout.zone_lit_by(TIERS, _fixture("F", 1.0, 1.0, 0.6)).id == "low"  # the corner itself
    assert layout.zone_lit_by(TIERS, _fixture("F", 1.0001, 0.5, 0.6)) is None


def test_three_tier_rack_two_strips_per_tier_under_each_shelf():
    """The sample rack: every tier is lit by exactly the two strips hung under the shelf above it."""
    rf = parse_room_file(json.dumps(sample_doc("three-tier-greens-rack")).encode())
    room = rf.room
    by_zone = {z.id: [f.id for f in layout.fixtures_lighting(room.zones, room.fixtures, z.id)] for z in room.zones}
    assert all(len(ids) == 2 for ids in by_zone.values()), by_zone
    assert len({fid for ids in by_zone.values() for fid in ids}) == len(room.fixtures)
    for z in room.zones:
        shelf = layout.covering_obstacle(room.obstacles, z)
        assert shelf is not None, z.id
        for f in layout.fixtures_lighting(room.zones, room.fixtures, z.id):
            assert z.canopy_height_m < f.hanging_height_m <= shelf.z_m
        assert layout.highest_hanging_m(room, z) == pytest.approx(shelf.z_m - 0.01)


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_engine_cover_agrees_with_the_layout_rule(path):
    room = parse_room_file(path.read_bytes()).room
    boxes = room_boxes(room)
    for z in room.zones:
        shelf = layout.covering_obstacle(room.obstacles, z)
        engine = covering_height_m(zone_grid(z, room.grid_spacing_m), boxes)
        assert engine == (shelf.z_m if shelf else float("inf"))


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_analysis_hands_the_browser_the_rule_answer(path):
    rf = parse_room_file(path.read_bytes())
    result = analyse(rf, include_grids=False)
    assert result["fixture_zones"] == layout.fixture_zones(rf.room.zones, rf.room.fixtures)
    assert set(result["fixture_zones"]) == {f.id for f in rf.room.fixtures}


@pytest.mark.parametrize(("rot", "hx", "hy"), [(0, 0.6, 0.05), (90, 0.05, 0.6), (45, 0.459619, 0.459619)])
def test_rotated_extent(rot, hx, hy):
    """Half sizes of a 1.2 x 0.1 m rectangle turned about the vertical: 0.5 (L |cos| + W |sin|), plane geometry."""
    got = layout.rotated_half_extent_m(1.2, 0.1, rot)
    assert got == pytest.approx((hx, hy), abs=1e-6)


def test_a_single_bar_is_as_wide_as_its_bar():
    """The footprint the engine integrates and the one validation and the sheet use are the same rectangle."""
    bar = NS(kind="bar", length_m=1.2, width_m=0.3, bar_width_m=0.025)
    panel = NS(kind="panel", length_m=0.6, width_m=0.6, bar_width_m=0.03)
    assert layout.footprint_size_m(bar) == (1.2, 0.025)
    assert layout.footprint_size_m(panel) == (0.6, 0.6)


def test_a_fixture_among_the_plants_is_found_and_warned_but_not_one_under_a_shelf():
    zone = NS(x_m=0.0, y_m=0.0, width_m=1.0, length_m=1.0, canopy_height_m=0.6)
    upper = NS(x_m=0.0, y_m=0.0, width_m=1.0, length_m=1.0, canopy_height_m=1.3)
    board = NS(x_m=0.0, y_m=0.0, z_m=0.95, width_m=1.0, length_m=1.0, height_m=0.03)  # the upper tier's shelf

    def fixture(h):
        return NS(x_m=0.5, y_m=0.5, hanging_height_m=h)

    assert layout.zones_among([zone], [], fixture(0.3)) == [zone]  # buried in the floor crop
    assert layout.zones_among([zone], [], fixture(0.7)) == []  # above it
    # Under the upper tier's shelf, lighting the lower tier: below the upper canopy, but not among its plants.
    assert layout.zones_among([zone, upper], [board], fixture(0.9)) == []
    assert layout.zones_among([zone, upper], [board], fixture(1.1)) == [upper]
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["fixtures"][0]["hanging_height_m"] = 0.3048
    (w,) = [w for w in analyse(parse_room_file(json.dumps(doc)))["warnings"] if w["code"] == "fixture_among_plants"]
    assert w["severity"] == "warning" and w["fixture_id"] == "F1" and "among the plants" in w["message"]
