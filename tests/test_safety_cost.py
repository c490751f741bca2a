"""The cost model: refuses over budget with what to change, mirrors the engine's own work, and the time
budget really stops an analysis that runs late."""

from __future__ import annotations

import json
import multiprocessing

import pytest

from app.bench_safety import big_room, grid_of_fixtures
from app.engine import cache as engine_cache
from app.engine import direct
from app.room.consistency import grid_point_count
from app.room.roomfile import parse_room_file
from app.service.analysis import analyse
from app.service.cost import OverBudget, check_budget, estimate
from app.service.guarded import AnalysisRunner, AnalysisTimeout
from tests.conftest import sample_doc


def _rf(doc):
    return parse_room_file(json.dumps(doc))


@pytest.fixture(scope="module")
def room_at_the_limits():
    """Within every documented limit: 4,900 fixtures over a 100 x 50 m zone at 3.2 cm (4.9 million points)."""
    return _rf(big_room(100, 50, 70, 0.032))


def test_a_room_at_the_documented_limits_is_refused_up_front(client, room_at_the_limits):
    r = client.post("/api/analyze", json=room_at_the_limits.model_dump(mode="json"))
    assert r.status_code == 422
    body = r.json()
    assert body["error"] == "too_much_work"
    assert body["estimate"]["seconds"] > 20 and f"{body['estimate']['seconds']:,.0f} s" in body["message"]
    assert "coarser map spacing" in body["message"] or "fewer fixtures" in body["message"]
    assert "the limit is 20 s" in body["message"]


def test_a_saved_room_over_budget_is_refused_on_every_route_that_computes(client, room_at_the_limits):
    store = client.app.state.store
    room_id, _ = store.create(room_at_the_limits)
    for method, url in (
        ("GET", f"/api/rooms/{room_id}/analysis"),
        ("GET", f"/rooms/{room_id}"),
        ("GET", f"/api/rooms/{room_id}/check"),
        ("POST", f"/api/rooms/{room_id}/plan"),
    ):
        r = client.request(method, url, json={} if method == "POST" else None)
        assert r.status_code == 422, (url, r.status_code)
        assert r.json()["error"] == "too_much_work"


def test_memory_refusal_names_the_memory():
    rf = _rf(big_room(100, 50, 1, 0.032))  # one fixture: little time, but 4.9 million points
    with pytest.raises(OverBudget, match="GiB of memory"):
        check_budget(rf.room, budget_s=1e9, memory_budget_bytes=1536 * 2**20)


def test_point_count_is_the_room_files_own():
    for name in ("hobby-tent-peppers", "basement-two-benches", "three-tier-greens-rack"):
        rf = _rf(sample_doc(name))
        assert estimate(rf.room).grid_points == grid_point_count(rf.room)


def test_finer_maps_and_more_fixtures_cost_more():
    tent = sample_doc("hobby-tent-peppers")
    coarse = estimate(_rf(grid_of_fixtures(tent, 3, spacing_m=0.03)).room)
    fine = estimate(_rf(grid_of_fixtures(tent, 3, spacing_m=0.01)).room)
    more = estimate(_rf(grid_of_fixtures(tent, 6, spacing_m=0.03)).room)
    assert fine.seconds > coarse.seconds and more.seconds > coarse.seconds
    assert fine.memory_bytes > coarse.memory_bytes


@pytest.mark.parametrize("n_side,spacing", [(4, 0.25), (8, 0.2), (3, 0.1)])
def test_shared_footprints_are_counted_as_the_engine_computes_them(n_side, spacing):
    """The model's count of distinct open-air footprints equals the engine's own footprint computations."""
    rf = _rf(big_room(12, 8, n_side, spacing, finish="diffuse"))
    rf.room.wall_finish.reflectance = 0.0
    engine_cache.clear_all()
    analyse(rf, include_grids=False, with_fixes=False)  # the model estimates the analysis, not its fix checks
    engine_footprints = direct._stamp.cache.stats().misses
    assert engine_footprints >= 1
    assert estimate(rf.room).footprints == engine_footprints


def test_identical_fixtures_on_the_map_lattice_share_one_footprint_in_model_and_engine():
    doc = big_room(60, 60, 3, 0.25)
    for k, f in enumerate(doc["room"]["fixtures"]):  # 2 m apart: whole multiples of the 25 cm spacing
        f["x_m"], f["y_m"] = 28.0 + 2.0 * (k // 3), 28.0 + 2.0 * (k % 3)
    rf = _rf(doc)
    rf.room.wall_finish.reflectance = 0.0
    engine_cache.clear_all()
    analyse(rf, include_grids=False, with_fixes=False)
    assert direct._stamp.cache.stats().misses == 1
    assert estimate(rf.room).footprints == 1


def test_a_late_analysis_is_stopped_and_its_work_really_ends():
    rf = _rf(grid_of_fixtures(sample_doc("basement-two-benches"), 6, spacing_m=0.02))
    runner = AnalysisRunner(budget_s=0.2, in_process_below_s=0.0, start_allowance_s=0.0)
    runner.estimate = lambda room_file: estimate(room_file.room)  # pass the gate: exercise the stop itself
    with pytest.raises(AnalysisTimeout, match="did not finish"):
        runner.run(rf)
    assert not [p for p in multiprocessing.active_children() if p.name == "leafcast-analysis"]


def test_an_analysis_in_a_child_process_gives_the_same_answer():
    rf = _rf(sample_doc("hobby-tent-peppers"))
    runner = AnalysisRunner(budget_s=60, in_process_below_s=0.0)
    child = runner.run(rf, include_grids=False)
    here = analyse(rf, include_grids=False)
    assert child["zones"][0]["ppfd"] == here["zones"][0]["ppfd"]


def test_a_stopped_analysis_answers_503_with_a_message(client, tent_doc):
    runner = client.app.state.runner
    runner.budget_s, runner.in_process_below_s, runner.start_allowance_s = 0.2, 0.0, 0.0
    r = client.post("/api/analyze", json=tent_doc)
    assert r.status_code in (422, 503)  # refused up front (estimate over 0.2 s) or stopped late
    assert r.json()["error"] in ("too_much_work", "analysis_stopped")
    assert r.json()["message"]
