"""Analysis rules against their sources: crop targets, photoperiod rules, hot spots, energy and circuits."""

import copy

import pytest
from numpy.testing import assert_allclose

from app.room.library import crop_library
from app.room.roomfile import parse_room_file, to_json_bytes
from app.service.analysis import analyse
from tests.conftest import sample_doc


def run(doc, **kw):
    return analyse(parse_room_file(to_json_bytes(doc)), **kw)


def codes(result):
    return {w["code"] for w in result["warnings"]}


def test_crop_targets_quote_their_sources():
    crops = crop_library()
    # Lettuce about 17 mol m⁻² d⁻¹ (Brechner & Both, Cornell CEA hydroponic lettuce handbook).
    assert crops["lettuce"].stages["vegetative"].dli_max == 17
    assert "Cornell" in crops["lettuce"].stages["vegetative"].source
    # Microgreens grown at 6, 12 and 18 (Craver et al. 2017, J. Amer. Soc. Hort. Sci. 142(1):3-12).
    assert (crops["microgreens"].stages["vegetative"].dli_min, crops["microgreens"].stages["vegetative"].dli_max) == (
        6,
        18,
    )
    # Tomato injured by continuous light, pepper and lettuce not (Velez-Ramirez et al. 2014).
    assert crops["tomato"].continuous_light_injury and not crops["pepper"].continuous_light_injury
    assert not crops["lettuce"].continuous_light_injury
    for c in crops.values():
        assert c.source or all(s.source for s in c.stages.values())
        for s in c.stages.values():
            assert s.source, f"{c.id} has a stage without a source"
    required = {
        "lettuce",
        "leafy_greens",
        "microgreens",
        "basil",
        "herbs",
        "seedlings",
        "tomato",
        "pepper",
        "cucumber",
        "strawberry",
        "bedding_plants",
        "custom",
    }
    assert required <= set(crops)


def test_dli_map_is_ppfd_times_hours():
    doc = sample_doc("hobby-tent-peppers")
    z = run(doc)["zones"][0]
    # DLI = PPFD × photoperiod × 3600 / 10⁶ (Faust & Logan 2018), cell by cell.
    assert_allclose(z["grid"]["dli"][10][10], z["grid"]["ppfd"][10][10] * 14 * 0.0036, atol=0.006)
    assert_allclose(z["dli"]["avg"], z["ppfd"]["avg"] * 14 * 0.0036, rtol=1e-9)


def dim_tier(doc, zone_id, pct):
    """Dim the fixtures lighting one tier of the rack (the sample is a sound design: this makes it miss)."""
    from app.room.layout import fixture_zones

    rf = parse_room_file(to_json_bytes(doc))
    lit = fixture_zones(rf.room.zones, rf.room.fixtures)
    for f in doc["room"]["fixtures"]:
        if lit[f["id"]] == zone_id:
            f["dimming_pct"] = pct
    return doc


def test_photoperiod_needed_for_target():
    doc = dim_tier(sample_doc("three-tier-greens-rack"), "tier-2", 40)
    z = run(doc)["zones"][1]  # lettuce, dimmed below its band
    assert_allclose(z["photoperiod_for_target_h"], z["target"]["dli_min"] / (z["ppfd"]["avg"] * 0.0036), rtol=1e-9)
    assert z["photoperiod_for_target_h"] > 16


def test_continuous_light_injures_tomato():
    doc = sample_doc("research-chamber-metric")
    doc["room"]["zones"][0]["photoperiod_h"] = 24
    r = run(doc)
    w = [w for w in r["warnings"] if w["code"] == "continuous_light"]
    assert w and w[0]["severity"] == "error" and "dark period" in w[0]["fix"]


def test_lettuce_tolerates_continuous_light():
    doc = sample_doc("three-tier-greens-rack")
    doc["room"]["schedule"]["photoperiod_h"] = 24
    r = run(doc)
    assert "continuous_light" not in codes(r)
    # Microgreens need a dark period of 4-6 h (common practice, no source).
    assert "short_dark_period" in codes(r)


def test_short_day_flowering_needs_long_nights():
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["zones"][0].update(crop_id="strawberry", stage="flowering")
    doc["room"]["schedule"]["photoperiod_h"] = 14
    assert "short_day_night" in codes(run(doc))
    doc["room"]["schedule"]["photoperiod_h"] = 12  # 12 h of dark (Purdue HO-253)
    assert "short_day_night" not in codes(run(doc))


def test_hot_spot_over_leafy_crop():
    # About 700 µmol m⁻² s⁻¹ is a hot-spot level under a fixture over leafy crops (common practice, no source).
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["zones"][0].update(crop_id="lettuce", stage="vegetative")
    for f in doc["room"]["fixtures"]:
        f["dimming_pct"] = 100
    r = run(doc)
    z = r["zones"][0]
    assert z["ppfd"]["max"] > 700 and z["target"]["ppfd_stress"] == 700
    hot = [w for w in r["warnings"] if w["code"] == "hot_spot"][0]
    assert hot["fixture_id"] in {"F1", "F2"}
    # No photoperiod fits a hot spot, so the live analysis offers its one dimming: a checked, absolute setting
    # for both fixtures over the zone (tests/service/test_advice.py), the same one check-my-setup finds.
    (live,) = hot["fixes"]
    assert live["action"] == "set_dimming" and live["text"] in hot["fix"]
    assert set(live["fixtures"]) == {"F1", "F2"} and live["result"]["ppfd_max"] <= 700
    full = analyse(parse_room_file(to_json_bytes(doc)), with_fixes="all")
    hot = [w for w in full["warnings"] if w["code"] == "hot_spot"][0]
    dim = next(f for f in hot["fixes"] if f["action"] == "set_dimming")
    assert dim["fixtures"] == live["fixtures"]
    assert z["hot"]["area_m2"] > 0 and z["hot"]["outline"]


def test_dark_zone_is_reported_with_area_and_fix():
    r = run(dim_tier(sample_doc("three-tier-greens-rack"), "tier-2", 40))
    w = [w for w in r["warnings"] if w["code"] == "dark_zone"]
    assert w and all(x["where"] for x in w)
    z = r["zones"][1]
    assert 0 < z["dark"]["share"] <= 1 and z["dark"]["area_m2"] > 0
    assert z["dark"]["share"] + z["share_in_band"] <= 1 + 1e-9  # a cell is dark, in band or above it


def test_energy_cost_heat_and_circuits():
    doc = sample_doc("basement-two-benches")
    for f in doc["room"]["fixtures"]:
        f["dimming_pct"] = 100
    r = run(doc)
    e = r["energy"]
    watts = 6 * 210.0
    assert_allclose(e["power_w"], watts)
    assert_allclose(e["kwh_per_day"], watts * 16 / 1000)
    assert_allclose(e["cost_per_month"], watts * 16 / 1000 * 0.16 * 30)
    assert_allclose(r["heat"]["btu_h"], watts * 3.41214, rtol=1e-5)  # NIST SP 811
    a = next(c for c in r["circuits"] if c["name"] == "A")
    assert_allclose(a["current_a"], 630 / 120)
    assert_allclose(a["continuous_limit_a"], 12.0)  # 80 % of a 15 A breaker (NEC 210.20(A), from memory)
    assert_allclose(e["layout_umol_per_j"], 560 / 210)


def test_overloaded_circuit_warns():
    doc = sample_doc("basement-two-benches")
    for f in doc["room"]["fixtures"]:
        f["circuit"] = "A"
        f["dimming_pct"] = 100
    doc["room"]["schedule"]["supply_voltage_v"] = 100
    r = run(doc)
    assert "circuit_overload" in codes(r)
    assert not next(c for c in r["circuits"] if c["name"] == "A")["ok"]


@pytest.mark.parametrize(
    "field, value",
    [("photoperiod_h", -1), ("photoperiod_h", 25), ("electricity_price_per_kwh", -0.1), ("supply_voltage_v", 0)],
)
def test_bad_schedule_refused(field, value):
    from app.room.roomfile import RoomFileError

    doc = copy.deepcopy(sample_doc("hobby-tent-peppers"))
    doc["room"]["schedule"][field] = value
    with pytest.raises(RoomFileError) as exc:
        parse_room_file(to_json_bytes(doc))
    assert exc.value.problems[0].field == f"room.schedule.{field}"


def test_regions_compare_centre_and_edge():
    from app.service.analysis import Region

    doc = sample_doc("basement-two-benches")
    r = run(doc, regions=(Region("centre", 0.5, 1.5, 0.5, 0.6), Region("front end", 0.3, 0.3, 0.9, 0.2)))
    centre = next(x for x in r["regions"] if x["name"] == "centre")
    front = next(x for x in r["regions"] if x["name"] == "front end")
    assert centre["ppfd"]["avg"] > front["ppfd"]["avg"]


def test_light_use_efficiency_is_canopy_share():
    r = run(sample_doc("hobby-tent-peppers"), with_budget=True)
    assert 0.9 < r["energy"]["canopy_share_of_emitted"] <= 1.0
    assert_allclose(
        r["energy"]["canopy_share_of_emitted"],
        r["budget"]["zones_umol_s"]["tent-floor"] / r["emitted_umol_s"],
        rtol=0.01,
    )
