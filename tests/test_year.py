"""Over the cycle and the year: weekly light from the real analysis, verified fixes, greenhouse months,
tariff placement and payback, each checked against an independent re-computation or by hand."""

from __future__ import annotations

import copy
import json

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from app.engine import metrics as mx
from app.room.roomfile import RoomFileError, parse_room_file
from app.service.analysis import analyse
from app.service.cycle import cycle_report, photoperiod_rule, week_settings
from app.service.greenhouse import greenhouse_report
from app.service.year import year_view
from app.service.zone_light import ZoneLightCache
from tests.conftest import sample_doc

GRID_ROUNDING = 0.05  # the analysis reports PPFD to 0.1 µmol m⁻² s⁻¹


@pytest.fixture(scope="module")
def bench_doc() -> dict:
    return sample_doc("greenhouse-lettuce-bench")


def _with_week(doc: dict, zone_id: str, canopy_m, fixture_m, dimming, photoperiod) -> dict:
    """The room as it would be set up in one week: a plain room file, analysed by the public analysis."""
    d = copy.deepcopy(doc)
    zone = next(z for z in d["room"]["zones"] if z["id"] == zone_id)
    zone.update(canopy_height_m=canopy_m, photoperiod_h=photoperiod, cycle=None, greenhouse=None)
    for f in d["room"]["fixtures"]:
        if fixture_m is not None:
            f["hanging_height_m"] = fixture_m
        if dimming is not None:
            f["dimming_pct"] = dimming
    return d


def test_dimming_scales_the_zone_light_linearly(bench_doc):
    # The cache's claim: PPFD at dimming d = own(100 %) × d/100 + spill. Compare with a real analysis at 55 %.
    rf = parse_room_file(bench_doc)
    zone = rf.room.zones[0]
    light = ZoneLightCache(rf, zone).light(zone.canopy_height_m, None)
    real = analyse(parse_room_file(_with_week(bench_doc, zone.id, zone.canopy_height_m, None, 55.0, 16)))
    ppfd = np.asarray(real["zones"][0]["grid"]["ppfd"])
    assert_allclose(light.ppfd(55.0), ppfd, atol=2 * GRID_ROUNDING + 1e-9)


def test_ramped_week_settings(bench_doc):
    # Steps at weeks 1, 3 (ramp) and 6: dimming 40 → 65 over weeks 3-5 (48.3, 56.7 to whole percent); canopy
    # 0.92 → 1.05 m; the cycle starts in November, so weeks 1-4 get November's sun and weeks 5-7 December's.
    rf = parse_room_file(bench_doc)
    s = week_settings(rf.room.zones[0])
    assert s["dimming_pct"] == [25, 25, 40, 48, 57, 65, 65]
    assert_allclose(s["canopy_height_m"], [0.9, 0.9, 0.92, 0.963, 1.007, 1.05, 1.05], atol=1e-9)
    assert s["stage"][:2] == ["propagation", "propagation"] and s["stage"][2] == "vegetative"


def test_every_offered_fix_meets_the_band_when_recomputed_independently(bench_doc):
    rf = parse_room_file(bench_doc)
    zone = rf.room.zones[0]
    report = cycle_report(rf, zone)
    flagged = [w for w in report["weeks"] if w["status"]]
    assert flagged, "the sample cycle is meant to have weeks above the band"
    for w in flagged:
        fix = w["fix"]
        assert fix is not None, f"week {w['week']} has no fix"
        d = _with_week(
            bench_doc, zone.id, w["canopy_height_m"], fix["fixture_height_m"], fix["dimming_pct"], fix["photoperiod_h"]
        )
        z = analyse(parse_room_file(d))["zones"][0]
        band = w["band"]
        total = z["dli"]["avg"] + w["dli_natural"]  # the fixtures' DLI from the analysis plus the week's sun
        assert band["dli_min"] <= total <= band["dli_max"], (w["week"], total)
        assert z["ppfd"]["max"] <= band["ppfd_stress"]
        assert_allclose(total, fix["verified"]["dli_avg"], atol=0.02)


def test_cycle_totals_by_hand(bench_doc):
    rf = parse_room_file(bench_doc)
    report = cycle_report(rf, rf.room.zones[0])
    weeks = report["weeks"]
    # kWh = Σ power × hours × 7 / 1000; the sample's four 430 W fixtures at each week's dimming.
    kwh = sum(4 * 430 * w["dimming_pct"] / 100 * w["photoperiod_h"] * 7 / 1000 for w in weeks)
    assert_allclose(report["totals"]["kwh"], kwh, rtol=1e-9)
    # Moles to the canopy = Σ (avg PPFD × area) × hours × 3600 × 7 / 10⁶ (Faust & Logan 2018, per day × 7).
    area = report["totals"]["area_m2"]
    mol = sum(w["ppfd_avg"] * area * w["photoperiod_h"] * 3600 * 7 / 1e6 for w in weeks)
    assert_allclose(report["totals"]["canopy_mol"], mol, rtol=1e-3)
    assert_allclose(report["totals"]["cost_per_mol"], report["totals"]["cost"] / report["totals"]["canopy_mol"])


def test_a_week_below_the_band_gets_a_verified_fix(bench_doc):
    doc = copy.deepcopy(bench_doc)
    doc["room"]["zones"][0]["cycle"] = {
        "weeks": 2,
        "steps": [{"week": 1, "stage": "vegetative", "photoperiod_h": 10, "fixture_height_m": 2.4, "dimming_pct": 20}],
    }
    rf = parse_room_file(doc)
    w = cycle_report(rf, rf.room.zones[0])["weeks"][0]
    assert "below" in w["status"]
    fix = w["fix"]
    d = _with_week(doc, "bench", 0.9, fix["fixture_height_m"], fix["dimming_pct"], fix["photoperiod_h"])
    z = analyse(parse_room_file(d))["zones"][0]
    assert z["dli"]["avg"] >= w["band"]["dli_min"]


def test_photoperiod_rules_of_the_crop_library():
    from app.room.library import crop_library

    crops = crop_library()
    # Short-day crops flowering need at least 12 h of dark (Purdue HO-253): at most 12 h of light.
    assert photoperiod_rule(crops["short_day_flowering"], "flowering").max_h == 12.0
    # Many long-day crops need nights under about 10 h (Purdue HO-253): at least 14 h of light.
    assert photoperiod_rule(crops["lettuce"], "vegetative").min_h < 14.0
    # Tomato is injured by continuous light (Velez-Ramirez et al. 2014): never 24 h.
    assert photoperiod_rule(crops["tomato"], "vegetative").max_h < 24.0


def test_greenhouse_with_typed_outdoor_dli_by_hand(bench_doc):
    doc = copy.deepcopy(bench_doc)
    typed = [5, 8, 14, 22, 30, 34, 33, 27, 18, 11, 6, 4]
    doc["room"]["zones"][0]["greenhouse"] = {"glazing": "custom", "transmission": 0.7, "outdoor_dli_by_month": typed}
    rf = parse_room_file(doc)
    r = greenhouse_report(rf, rf.room.zones[0])
    inside = np.array(typed) * 0.7
    assert_allclose(r["inside_dli"], inside, atol=0.005)
    need = np.maximum(0, 12.0 - inside)  # lettuce vegetative band starts at 12 (Brechner & Both)
    assert_allclose(r["supplemental_need_dli"], need, atol=0.005)
    # Hours = need × 10⁶ / (PPFD × 3600) (Faust & Logan 2018), PPFD from the real analysis of the bench.
    ppfd = analyse(rf)["zones"][0]["ppfd"]["avg"]
    assert_allclose(r["hours_per_day"], need * 1e6 / (ppfd * 3600), atol=0.01)
    # kWh in January: 4 × 430 W × 80 % × hours × 31 days.
    assert_allclose(r["kwh_by_month"][0], 4 * 430 * 0.8 * r["hours_per_day"][0] * 31 / 1000, atol=0.3)


def test_year_view_from_the_sample(bench_doc):
    rf = parse_room_file(bench_doc)
    v = year_view("bench", rf)
    gh = v["greenhouses"][0]
    # Amsterdam under glass: winter needs light, midsummer does not.
    assert gh["supplemental_dli"][0] > 0 and gh["supplemental_dli"][5] == 0
    t = v["tariff"]["zones"][0]
    assert t["best"]["dark_h"] == 24 - t["photoperiod_h"]
    assert t["saving_per_month"] >= 0
    p = v["payback"]
    # Matched light: the new fixtures are dimmed to give the canopy the photons it has now.
    assert_allclose(p["variant"]["canopy_flux_umol_s"], p["now"]["canopy_flux_umol_s"], rtol=0.01)
    assert p["purchase_cost"] == 4 * 380 + 200  # four fixtures at 380 and 200 to install
    assert p["years"] is not None and p["years"] == pytest.approx(p["simple_years"])


def test_tariff_keeps_a_short_day_night(bench_doc):
    doc = copy.deepcopy(bench_doc)
    z = doc["room"]["zones"][0]
    z.update(crop_id="short_day_flowering", stage="flowering", photoperiod_h=12, cycle=None, greenhouse=None)
    v = year_view("x", parse_room_file(doc))
    row = v["tariff"]["zones"][0]
    assert row["min_dark_h"] == 12.0 and row["best"]["dark_h"] >= 12.0
    z["photoperiod_h"] = 13
    row = year_view("x", parse_room_file(doc))["tariff"]["zones"][0]
    assert row["best"] is None and "needs at least 12 h" in row["problem"]


@pytest.mark.parametrize(
    "change, field",
    [
        (lambda d: d["room"]["zones"][0]["cycle"]["steps"][0].update(week=2), "room.zones[0].cycle"),
        (lambda d: d["room"]["zones"][0]["cycle"]["steps"][1].update(fixture_height_m=None), "fixture_height_m"),
        (lambda d: d["room"]["zones"][0]["cycle"]["steps"][2].update(fixture_height_m=3.5), "fixture_height_m"),
        (lambda d: d["room"]["zones"][0]["cycle"]["steps"][2].update(fixture_height_m=1.0), "fixture_height_m"),
        (lambda d: d["room"]["zones"][0]["cycle"]["steps"][0].update(stage="flowering"), "stage"),
        (lambda d: d["room"]["zones"][0]["greenhouse"].update(glazing="custom"), "greenhouse.transmission"),
        (lambda d: d["room"]["zones"][0]["greenhouse"].update(outdoor_dli_by_month=[1, 2]), "outdoor_dli_by_month"),
        (lambda d: d["room"]["payback"].update(variant_type_id="nope"), "room.payback.variant_type_id"),
        (lambda d: d["room"]["schedule"]["tariff"]["windows"][0].update(days=[7]), "days"),
    ],
)
def test_bad_year_fields_are_refused_with_their_path(bench_doc, change, field):
    doc = copy.deepcopy(bench_doc)
    change(doc)
    with pytest.raises(RoomFileError) as err:
        parse_room_file(doc)
    assert any(field in p.field for p in err.value.problems), err.value.problems


def test_year_page_and_api(client, bench_doc):
    r = client.post("/api/rooms", json=bench_doc)
    assert r.status_code in (200, 201), r.text
    room_id = r.json()["id"]
    page = client.get(f"/rooms/{room_id}/year")
    assert page.status_code == 200 and 'id="cycle-plot-0"' in page.text
    data = client.get(f"/rooms/{room_id}/year?format=json").json()
    assert data["cycles"][0]["zone_id"] == "bench"
    api = client.get(f"/api/rooms/{room_id}/year").json()
    assert api["tariff"]["saving_per_year"] == pytest.approx(data["tariff"]["saving_per_year"])
    assert client.get("/rooms/nope/year").status_code == 404


def test_dli_worked_example_on_the_page_data(bench_doc):
    # Every week's DLI is its average PPFD × photoperiod × 3600 / 10⁶ (Faust & Logan 2018), plus the sun's.
    rf = parse_room_file(bench_doc)
    for w in cycle_report(rf, rf.room.zones[0])["weeks"]:
        lights = float(mx.dli_mol_m2_d(w["ppfd_avg"], w["photoperiod_h"]))
        assert_allclose(w["dli_avg"], lights + w["dli_natural"], atol=0.01)


def test_schedule_table_for_the_sheet(bench_doc):
    from app.service.cycle import schedule_table

    rf = parse_room_file(bench_doc)
    t = schedule_table(cycle_report(rf, rf.room.zones[0]), "imperial")
    assert len(t["rows"]) == 7 and len(t["columns"]) == len(t["rows"][0])
    # Week 6 hangs the fixtures at 1.7 m = 66.9 in → 5′ 7″ to the half inch.
    assert t["rows"][5][4] == "5′ 7″"


def test_year_page_of_a_room_without_plans(client):
    doc = sample_doc("hobby-tent-peppers")  # a 0.1 room file: none of the new fields
    room_id = client.post("/api/rooms", json=doc).json()["id"]
    data = client.get(f"/rooms/{room_id}/year?format=json").json()
    assert data["cycles"] == [] and data["greenhouses"] == [] and data["tariff"] is None and data["payback"] is None
    assert client.get(f"/rooms/{room_id}/year").status_code == 200


def test_greenhouse_cycle_adds_the_sun_of_each_week(bench_doc):
    doc = copy.deepcopy(bench_doc)
    z = doc["room"]["zones"][0]
    typed = [5, 8, 14, 22, 30, 34, 33, 27, 18, 11, 6, 4]
    z["greenhouse"] = {"glazing": "custom", "transmission": 0.7, "outdoor_dli_by_month": typed}
    z["cycle"] = {
        "weeks": 6,
        "start_month": 11,
        "steps": [{"week": 1, "stage": "vegetative", "photoperiod_h": 12, "fixture_height_m": 1.9, "dimming_pct": 30}],
    }
    rf = parse_room_file(doc)
    report = cycle_report(rf, rf.room.zones[0])
    # Week middles at days 3.5, 10.5, ... 38.5: weeks 1-4 in November, 5-6 in December (mean month 30.44 days).
    assert [w["dli_natural"] for w in report["weeks"]] == pytest.approx([6 * 0.7] * 4 + [4 * 0.7] * 2)
    for w in report["weeks"]:
        lights = float(mx.dli_mol_m2_d(w["ppfd_avg"], w["photoperiod_h"]))
        assert_allclose(w["dli_avg"], lights + w["dli_natural"], atol=0.01)
        assert "below" in w["status"]
        fix = w["fix"]
        d = _with_week(
            doc, "bench", w["canopy_height_m"], fix["fixture_height_m"], fix["dimming_pct"], fix["photoperiod_h"]
        )
        got = analyse(parse_room_file(d))["zones"][0]["dli"]["avg"] + w["dli_natural"]
        assert w["band"]["dli_min"] <= got <= w["band"]["dli_max"]


def test_greenhouse_cycle_in_midsummer_cannot_be_fixed_by_the_lights(bench_doc):
    doc = copy.deepcopy(bench_doc)
    z = doc["room"]["zones"][0]
    z["greenhouse"] = {"glazing": "custom", "transmission": 0.7, "outdoor_dli_by_month": [34.0] * 12}
    z["cycle"] = {"weeks": 1, "start_month": 6, "steps": [{"week": 1, "stage": "vegetative", "photoperiod_h": 4}]}
    rf = parse_room_file(doc)
    w = cycle_report(rf, rf.room.zones[0])["weeks"][0]
    # 34 × 0.7 = 23.8 from the sun alone, above lettuce's 12-17 band: shade, not lighting, would fix it.
    assert "above" in w["status"] and w["fix"] is None


step_st = st.fixed_dictionaries(
    {
        "gap": st.integers(1, 4),
        "stage": st.sampled_from(["vegetative", "flowering"]),
        "photoperiod_h": st.sampled_from([8.0, 12.0, 16.0, 20.0, 24.0]),
        "canopy_height_m": st.one_of(st.none(), st.floats(0.3, 0.8)),
        "fixture_height_m": st.one_of(st.none(), st.floats(1.2, 2.0)),
        "dimming_pct": st.one_of(st.none(), st.integers(10, 100).map(float)),
        "ramp": st.booleans(),
    }
)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    steps=st.lists(step_st, min_size=1, max_size=4),
    tail=st.integers(0, 3),
    month=st.one_of(st.none(), st.integers(1, 12)),
)
def test_any_valid_cycle_gives_a_page_or_a_clear_refusal(steps, tail, month):
    doc = sample_doc("hobby-tent-peppers")
    week, out = 1, []
    for s in steps:
        out.append({k: v for k, v in s.items() if k != "gap"} | {"week": week})
        week += s["gap"]
    doc["room"]["zones"][0]["cycle"] = {"weeks": out[-1]["week"] + tail, "steps": out, "start_month": month}
    doc["room"]["zones"][0]["greenhouse"] = {"glazing": "film_double", "outdoor_dli_by_month": [20.0] * 12}
    try:
        rf = parse_room_file(doc)
    except RoomFileError as err:
        assert all(p.field.startswith("room.zones[0].cycle") for p in err.problems), err.problems
        return
    view = year_view("t", rf)
    json.dumps(view, allow_nan=False)
    report = view["cycles"][0]
    assert "problem" not in report, report
    for w in report["weeks"]:
        if w["fix"]:
            assert not _status_of(w["fix"]["verified"], w["band"])


def _status_of(fig, band):
    return [
        k
        for k, bad in (
            ("below", fig["dli_avg"] < band["dli_min"] - 0.01),
            ("above", fig["dli_avg"] > band["dli_max"] + 0.01),
            ("stress", fig["ppfd_max"] > band["ppfd_stress"] + 0.01),
        )
        if bad
    ]


def test_payback_takes_the_fixture_types_maintenance_record(bench_doc):
    doc = copy.deepcopy(bench_doc)
    plan = doc["room"]["payback"]
    plan.update(rated_hours_now=None, rated_hours_variant=None, hours_run_now=None)
    doc["room"]["fixture_types"][0]["maintenance"] = {"rated_percent": 90, "rated_hours_h": 36000}
    v = year_view("x", parse_room_file(doc))["payback"]
    assert v["maintenance_now"].startswith("rated L90 at 36,000 h")
    assert "assumed" in v["maintenance_variant"] and v["hours_run_now"] == 0.0
    # New fixtures at L90 36,000 h: year 1 (16 h × 365 = 5,840 h) keeps exp(−α t) on average, α = −ln 0.9 / 36,000
    # (IES TM-21 exponential): mean = (1 − e^{−α·5840}) / (α·5840).
    a = -np.log(0.9) / 36000
    hours = v["now"]["hours_per_day"] * 365
    assert_allclose(
        v["now"]["mol_by_year"][0], v["now"]["mol_year_first"] * (1 - np.exp(-a * hours)) / (a * hours), rtol=1e-6
    )


@pytest.mark.parametrize("path", ["/api/rooms/{id}/year", "/rooms/{id}/year?format=json", "/rooms/{id}/year"])
def test_year_with_a_payback_plan_and_every_fixture_off(client, bench_doc, path):
    # Bug: no photons made the cost per mole infinite, which JSON cannot carry; the page's JSON answered 500.
    doc = copy.deepcopy(bench_doc)
    assert doc["room"]["payback"] is not None
    for f in doc["room"]["fixtures"]:
        f["on"] = False
    room_id = client.post("/api/rooms", json=doc).json()["id"]
    r = client.get(path.format(id=room_id))
    assert r.status_code == 200, r.text[:300]
    if "html" not in r.headers["content-type"]:
        p = r.json()["payback"]
        # No light delivered: zero photons over the horizon, so no cost per mole (by hand: 0 mol).
        assert p["now"]["mol_by_year"] == [0.0] * p["horizon_years"]
        assert p["now"]["cost_per_mol"] is None and p["variant"]["cost_per_mol"] is None
        assert p["years"] is None  # nothing saved, the purchase never pays back


def test_a_replacement_too_large_for_where_the_fixtures_hang_says_so_in_words(tent_doc):
    """The 1.1 m array at the tent fixtures' centres would stick out past a wall: the comparison says so
    instead of showing the room file's field path."""
    doc = copy.deepcopy(tent_doc)
    doc["room"]["payback"] = {"variant_type_id": "bararray-8x1.1", "price_per_fixture": 300, "horizon_years": 5}
    v = year_view("x", parse_room_file(json.dumps(doc)))["payback"]
    assert v["problem"].startswith("The new type does not fit where the present fixtures hang")
    assert "room.fixtures" not in v["problem"]
