"""The planner against a brute-force baseline, and the rules an installer needs: gaps, circuits at 100 %,
distinct proposals, names, revision-safe apply, stacked racks."""

import math
import threading
from dataclasses import replace

import numpy as np
import pytest

from app.engine.compute import compute_scene
from app.engine.metrics import ppfd_for_dli
from app.room.library import fixture_library
from app.room.models import WALL_FINISHES
from app.room.roomfile import parse_room_file, to_json_bytes
from app.service.analysis import analyse
from app.service.planner import PlanOptions, apply_layouts, plan
from app.service.planner.apply import CircuitsFull
from app.service.planner.light import PlanningLight
from app.service.planner.search import arrangements, heights_for
from app.service.scene_builder import build_scene
from tests.conftest import sample_doc

TENT_TYPES = ("bararray-6x1.0", "spot-90")


def white_tent(width_m=1.5, length_m=3.0) -> dict:
    """A 1.5 × 3 m tent with matt white walls (reflectance 0.90, Lighting Research Center), peppers in flower."""
    doc = sample_doc("hobby-tent-peppers")
    r = doc["room"]
    r.update(width_m=width_m, length_m=length_m, wall_finish=WALL_FINISHES["white_paint"].model_dump(),
             fixtures=[], grid_spacing_m=0.05)
    r["zones"][0].update(width_m=width_m, length_m=length_m)
    r["circuits"] = [{"name": "A", "breaker_a": 20}, {"name": "B", "breaker_a": 20}]
    return doc


def baseline_power_w(rf, type_id: str) -> float:
    """Brute force: every uniform grid of the type (centres at the cell centres of an n × m split of the zone,
    10 cm gaps between fixtures and to the walls), hung every 5 cm, each computed with the full model on the
    room's own grid, dimmed in whole per cent to the least that meets the target. Written independently of
    the planner's search (no edge weighting, no stagger, no estimates)."""
    room = rf.room
    zone = room.zones[0]
    t = fixture_library()[type_id]
    stage_ppfd = ppfd_for_dli(20.0, 14.0), ppfd_for_dli(30.0, 14.0)  # peppers in flower, 20-30 mol (crops.json)
    best = math.inf
    for rot in (0.0, 90.0):
        hx = 0.5 * (t.geometry.length_m if rot == 0 else t.geometry.width_m)
        hy = 0.5 * (t.geometry.width_m if rot == 0 else t.geometry.length_m)
        for n in range(1, 4):
            for m in range(1, 7):
                xs = [zone.width_m * (i + 0.5) / n for i in range(n)]
                ys = [zone.length_m * (j + 0.5) / m for j in range(m)]
                if xs[0] - hx < 0.1 - 1e-6 or (n > 1 and xs[1] - xs[0] < 2 * hx + 0.1 - 1e-6):
                    continue
                if ys[0] - hy < 0.1 - 1e-6 or (m > 1 and ys[1] - ys[0] < 2 * hy + 0.1 - 1e-6):
                    continue
                fixtures = [
                    {"id": f"B{k}", "type_id": type_id, "x_m": x, "y_m": y, "hanging_height_m": 1.0,
                     "rotation_deg": rot, "dimming_pct": 100}
                    for k, (x, y) in enumerate((x, y) for y in ys for x in xs)
                ]
                for h in np.arange(zone.canopy_height_m + 0.15, room.height_m - 0.3, 0.05):
                    for f in fixtures:
                        f["hanging_height_m"] = float(h)
                    candidate = room.model_copy(update={"fixtures": [], "fixture_types": [t]})
                    from app.room.models import Fixture

                    candidate = candidate.model_copy(update={"fixtures": [Fixture(**f) for f in fixtures]})
                    scene = build_scene(candidate)
                    zl = compute_scene(scene.emitters, scene.grids, scene.enclosure, scene.boxes)[0]
                    p, a = zl.ppfd.astype(float).ravel(), zl.grid.cell_area_m2.ravel()
                    for d in range(10, 101):
                        q = p * d / 100
                        dark = a[q < stage_ppfd[0]].sum() / a.sum()
                        avg = (q * a).sum() / a.sum()
                        if dark <= 0.10 and avg <= stage_ppfd[1] and q.max() <= 1200:
                            best = min(best, len(fixtures) * t.power_w * d / 100)
                            break
    return best


@pytest.mark.parametrize("type_id", ["bararray-4x0.6"])
def test_white_room_gets_proposals_within_5_percent_of_the_uniform_grid_baseline(type_id):
    rf = parse_room_file(to_json_bytes(white_tent()))
    result = plan(rf, PlanOptions(type_ids=(type_id,)))
    assert result["proposals"], result["not_offered"]
    ours = result["proposals"][0]["figures"]["energy"]["power_w"]
    base = baseline_power_w(rf, type_id)
    assert base < math.inf
    assert ours <= 1.05 * base, (ours, base)


def test_planning_estimate_of_the_walls_light_is_close_to_the_full_model():
    """The cheap estimate (direct light + wall light scaled from one reference) against the full model."""
    rf = parse_room_file(to_json_bytes(white_tent()))
    room, zone = rf.room, rf.room.zones[0]
    opts = PlanOptions(type_ids=("bararray-4x0.6",))
    heights = heights_for(room, zone, opts)
    light = PlanningLight(room, zone, heights)
    t = fixture_library()["bararray-4x0.6"]
    errors = []
    for t_, rot, *_, pos in arrangements(room, zone, [t], opts)[::3]:
        for h in heights:
            est, full = light.estimate(t_, rot, h, pos), light.full(t_, rot, h, pos)
            errors.append(abs(est.mean() - full.mean()) / full.mean())
    assert len(errors) >= 6
    # Measured: median 0.5 %, worst 13 % (a layout crowded against one wall); the full model ranks the leaders.
    assert max(errors) < 0.15 and np.median(errors) < 0.02, errors
    # Leaving the walls out would be far off: that is what the estimate is for.
    direct = light.direct(t, 0.0, heights[-1], [(0.75, 1.5)])
    assert light.full(t, 0.0, heights[-1], [(0.75, 1.5)]).mean() > 1.2 * direct.mean()


def footprints(rf):
    types = {t.id: t for t in rf.room.fixture_types}
    out = []
    for f in rf.room.fixtures:
        g = types[f.type_id].geometry
        a, b = (g.length_m, g.width_m) if f.rotation_deg % 180 == 0 else (g.width_m, g.length_m)
        out.append((f.x_m - a / 2, f.y_m - b / 2, f.x_m + a / 2, f.y_m + b / 2))
    return out


@pytest.mark.parametrize("name, types", [("hobby-tent-peppers", TENT_TYPES), ("basement-two-benches", ("panel-0.6",))])
def test_proposals_hang_with_gaps_circuits_at_full_output_distinct_and_named(name, types):
    rf = parse_room_file(to_json_bytes(sample_doc(name)))
    result = plan(rf, PlanOptions(type_ids=types))
    assert len(result["proposals"]) >= 2
    seen = set()
    for p in result["proposals"]:
        cand = parse_room_file(to_json_bytes(p["room_file"]))
        room = cand.room
        boxes = footprints(cand)
        for i, (x0, y0, x1, y1) in enumerate(boxes):  # 10 cm to closed walls and between footprints
            assert x0 >= 0.1 - 1e-6 and y0 >= 0.1 - 1e-6
            assert x1 <= room.width_m - 0.1 + 1e-6 and y1 <= room.length_m - 0.1 + 1e-6
            for a0, b0, a1, b1 in boxes[i + 1 :]:
                gap = max(a0 - x1, x0 - a1, b0 - y1, y0 - b1)
                assert gap >= 0.1 - 1e-6
        # Every circuit carries its fixtures at 100 % (what the dimmer can reach) within 80 % of the breaker
        # (US NEC 210.19(A)(1)/210.20(A), continuous load), whatever the set dimming.
        types_by_id = {t.id: t for t in room.fixture_types}
        for c in room.circuits:
            watts = sum(types_by_id[f.type_id].power_w for f in room.fixtures if f.circuit == c.name)
            assert watts / room.schedule.supply_voltage_v <= 0.8 * c.breaker_a + 1e-9
        # Names like the room's own, never its ids.
        prefix = rf.room.fixtures[0].id.rstrip("0123456789")
        assert all(f.id.startswith(prefix) and f.id[len(prefix):].isdigit() for f in room.fixtures)
        assert not any(z.id in " ".join(p["layouts"]) for z in rf.room.zones)
        # Distinct in count, type or arrangement, not only height.
        arrangement = tuple(sorted((f.type_id, round(f.x_m, 2), round(f.y_m, 2), f.rotation_deg) for f in room.fixtures))
        assert arrangement not in seen
        seen.add(arrangement)
        assert meets(analyse(cand, include_grids=False, with_fixes=False))


def meets(a) -> bool:
    return a["verdict"]["meets_target"]


def test_a_circuit_that_cannot_carry_the_layout_at_full_output_is_refused():
    doc = sample_doc("basement-two-benches")
    doc["room"]["circuits"] = [{"name": "A", "breaker_a": 15}]  # 12 A continuous at 120 V: 1,440 W
    for f in doc["room"]["fixtures"]:
        f["circuit"] = "A"
    rf = parse_room_file(to_json_bytes(doc))
    result = plan(rf, PlanOptions(type_ids=("bararray-6x1.0",)))
    for p in result["proposals"]:
        watts = sum(430 for f in p["room_file"]["room"]["fixtures"])
        assert watts <= 1440
    from app.service.planner.search import zone_search

    lays = zone_search(rf, rf.room.zones[0], [fixture_library()["bararray-6x1.0"]], PlanOptions(), lambda *_: None,
                       threading.Event())
    assert lays
    # Four arrays draw 1,720 W at 100 %, though only 4 × 430 × 0.3 = 516 W at 30 %: refused all the same.
    zone = rf.room.zones[0]
    four = replace(lays[0], rows=4, cols=1, dimming=0.3,
                   positions=[(zone.x_m + zone.width_m / 2, zone.y_m + (k + 0.5) * zone.length_m / 4) for k in range(4)])
    with pytest.raises(CircuitsFull):
        apply_layouts(rf, [four])


def test_stacked_rack_plan_replaces_only_the_planned_tiers_fixtures():
    rf = parse_room_file(to_json_bytes(sample_doc("three-tier-greens-rack")))
    from app.service.planner.search import zone_search

    tier1 = rf.room.zones[0]
    lays = zone_search(rf, tier1, [fixture_library()["strip-0.6"]], PlanOptions(), lambda *_: None, threading.Event())
    assert lays
    changed = apply_layouts(rf, [lays[0]])
    ids = [f.id for f in changed.room.fixtures]
    assert {"S3", "S4", "S5", "S6"} <= set(ids) and "S1" not in ids and "S2" not in ids
    new = [f for f in changed.room.fixtures if f.id not in {"S3", "S4", "S5", "S6"}]
    assert all(tier1.canopy_height_m < f.hanging_height_m < 0.65 for f in new)  # under tier 1's shelf
    assert [f.id for f in new][:2] == ["S7", "S8"]


def test_apply_is_refused_when_the_room_changed_since_the_job_started(client):
    room_id = client.get("/api/rooms").json()[1]["id"]
    start = client.post(f"/api/rooms/{room_id}/plan", json={"type_ids": list(TENT_TYPES)}).json()
    job = start["job_id"]
    for _ in range(400):
        j = client.get(f"/api/plan-jobs/{job}").json()
        if j["done"]:
            break
        threading.Event().wait(0.05)
    assert j["revision"] == start["revision"] and j["result"]["proposals"]
    proposal = j["result"]["proposals"][0]["room_file"]
    assert proposal["revision"] == start["revision"]
    current = client.get(f"/api/rooms/{room_id}").json()
    current["room"]["name"] = "Edited meanwhile"
    assert client.put(f"/api/rooms/{room_id}", json=current).status_code == 200
    stale = client.put(f"/api/rooms/{room_id}", json=proposal)
    assert stale.status_code == 409 and stale.json()["current_revision"] == start["revision"] + 1
    assert client.get(f"/api/rooms/{room_id}").json()["room"]["name"] == "Edited meanwhile"
