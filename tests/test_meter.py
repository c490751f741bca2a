"""Readings in the room file, model against meter, maintained output and core areas, through the service layer.

The model is checked against the closed form of a Lambertian point source in a dark room
(E = Φ/π · h² / (h² + r²)², inverse-square and cosine laws); readings are generated from it times a
known factor plus noise, and the least-squares factor must come back within its standard error.
"""

import copy
import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.room.library import fixture_library
from app.room.roomfile import RoomFileError, dump_room_file, parse_room_file, to_json_bytes
from app.service import meter
from app.service.analysis import analyse
from app.service.core_areas import fixture_card
from app.service.maintained import output_basis
from tests.conftest import sample_doc

H = 0.6  # fixture drop above the canopy [m]
FIXTURES = {"A1": ("lamb-a", 0.6, 0.6), "A2": ("lamb-a", 1.8, 0.6), "B1": ("lamb-b", 1.2, 0.9)}


def point_type(tid, ppf):
    return {
        "id": tid,
        "name": f"Point {tid}",
        "geometry": {"kind": "point"},
        "beam": {"kind": "lambertian"},
        "ppf_umol_s": ppf,
        "power_w": ppf / 2.5,
    }


def dark_room_doc():
    """A 2.4 x 1.5 m room with dark walls, one bench, Lambertian point fixtures of two types."""
    return {
        "format": "leafcast-room",
        "version": 1,
        "room": {
            "name": "Meter test",
            "width_m": 2.4,
            "length_m": 1.5,
            "height_m": 2.5,
            "wall_finish": {"kind": "absorbing", "reflectance": 0.0},
            "zones": [
                {
                    "id": "bench",
                    "name": "Bench",
                    "x_m": 0.0,
                    "y_m": 0.0,
                    "width_m": 2.4,
                    "length_m": 1.5,
                    "canopy_height_m": 0.9,
                }
            ],
            "fixture_types": [point_type("lamb-a", 800.0), point_type("lamb-b", 500.0)],
            "fixtures": [
                {"id": fid, "type_id": t, "x_m": x, "y_m": y, "hanging_height_m": 0.9 + H}
                for fid, (t, x, y) in FIXTURES.items()
            ],
        },
    }


def closed_form(x, y, ppf_by_type, dimming=1.0):
    out = {"lamb-a": np.zeros_like(x), "lamb-b": np.zeros_like(x)}
    for t, fx, fy in FIXTURES.values():
        r2 = (x - fx) ** 2 + (y - fy) ** 2
        out[t] = out[t] + ppf_by_type[t] * dimming / math.pi * H * H / (H * H + r2) ** 2
    return out


def with_points(doc, x, y, values, **extra):
    d = copy.deepcopy(doc)
    pts = [{"x_m": float(a), "y_m": float(b), "value": float(v)} for a, b, v in zip(x, y, values, strict=True)]
    d["room"]["readings"] = [{"id": "r1", "zone_id": "bench", "taken_on": "2026-11-30", "points": pts, **extra}]
    return parse_room_file(to_json_bytes(d))


def test_model_at_reading_points_matches_the_closed_form():
    rng = np.random.default_rng(5)
    x, y = rng.uniform(0.05, 2.35, 30), rng.uniform(0.05, 1.45, 30)
    rf = with_points(dark_room_doc(), x, y, np.full(30, 100.0))
    out = meter.compare(rf, "r1")
    ref = closed_form(x, y, {"lamb-a": 800.0, "lamb-b": 500.0})
    model = np.array([p["model"] for p in out["points"]])
    # Bilinear interpolation of the 1 inch map: within 0.3 % of the exact value at every point.
    assert_allclose(model, ref["lamb-a"] + ref["lamb-b"], rtol=3e-3)


def test_known_factors_recovered_within_the_standard_error():
    rng = np.random.default_rng(9)
    x, y = rng.uniform(0.05, 2.35, 60), rng.uniform(0.05, 1.45, 60)
    ref = closed_form(x, y, {"lamb-a": 800.0, "lamb-b": 500.0})
    measured = 0.82 * ref["lamb-a"] + 1.12 * ref["lamb-b"] + rng.normal(0, 8.0, x.size)
    rf = with_points(dark_room_doc(), x, y, np.maximum(measured, 0))
    out = meter.compare(rf, "r1", fit="type")
    assert out["fit"]["error"] is None and out["fit"]["left_out"] == 0
    got = {f["type_ids"][0]: f for f in out["fit"]["factors"]}
    for tid, k in (("lamb-a", 0.82), ("lamb-b", 1.12)):
        assert abs(got[tid]["factor"] - k) < 3 * got[tid]["std_error"], got[tid]
        assert 0 < got[tid]["std_error"] < 0.05
    # One factor for the room lands between the two.
    room_fit = meter.compare(rf, "r1", fit="room")["fit"]["factors"][0]
    assert 0.82 < room_fit["factor"] < 1.12


def test_dimming_at_the_time_of_the_readings_is_modelled():
    x, y = np.array([0.6, 1.2, 1.8]), np.array([0.6, 0.9, 0.6])
    ref = closed_form(x, y, {"lamb-a": 800.0, "lamb-b": 500.0}, dimming=0.5)
    rf = with_points(dark_room_doc(), x, y, ref["lamb-a"] + ref["lamb-b"], dimming_pct=50)
    out = meter.compare(rf, "r1")
    assert_allclose([p["diff_pct"] for p in out["points"]], 0, atol=0.3)
    assert_allclose(out["fit"]["factors"][0]["factor"], 1.0, atol=3e-3)


def test_lux_readings_are_converted_with_the_sets_factor():
    # 82 lx per µmol m⁻² s⁻¹: high-pressure sodium, Thimijan & Heins (1983), HortScience 18(6):818-822.
    x, y = np.array([0.6, 1.2, 1.8, 0.3]), np.array([0.6, 0.9, 0.6, 1.2])
    ref = closed_form(x, y, {"lamb-a": 800.0, "lamb-b": 500.0})
    ppfd = 0.9 * (ref["lamb-a"] + ref["lamb-b"])
    rf = with_points(dark_room_doc(), x, y, 82.0 * ppfd, sensor="lux", lux_per_ppfd=82.0)
    out = meter.compare(rf, "r1")
    assert_allclose([p["measured"] for p in out["points"]], ppfd, rtol=1e-9)
    assert_allclose(out["fit"]["factors"][0]["factor"], 0.9, rtol=4e-3)


def test_fit_refuses_fewer_points_than_unknowns():
    rf = with_points(dark_room_doc(), [1.2], [0.9], [300.0])
    out = meter.compare(rf, "r1", fit="type")
    assert out["fit"]["factors"] == [] and "1 reading(s) cannot fit 2 unknown" in out["fit"]["error"]
    with pytest.raises(meter.MeterError, match="cannot fit"):
        meter.apply_factors(rf, "r1", fit="type")


def test_outlier_is_flagged_and_left_out_of_the_fit():
    gx, gy = np.meshgrid(np.linspace(0.15, 2.25, 8), np.linspace(0.15, 1.35, 5))
    x, y = gx.ravel(), gy.ravel()
    ref = closed_form(x, y, {"lamb-a": 800.0, "lamb-b": 500.0})
    measured = 0.9 * (ref["lamb-a"] + ref["lamb-b"])
    measured[13] *= 0.4  # a shadow of the hand over the sensor
    out = meter.compare(with_points(dark_room_doc(), x, y, measured), "r1")
    assert [i for i, p in enumerate(out["points"]) if p["outlier"]] == [13]
    assert out["fit"]["left_out"] == 1
    assert_allclose(out["fit"]["factors"][0]["factor"], 0.9, rtol=4e-3)
    assert out["worst_index"] == 13


def test_apply_scales_the_types_and_the_model_then_agrees():
    rng = np.random.default_rng(1)
    x, y = rng.uniform(0.05, 2.35, 40), rng.uniform(0.05, 1.45, 40)
    ref = closed_form(x, y, {"lamb-a": 800.0, "lamb-b": 500.0})
    rf = with_points(dark_room_doc(), x, y, 0.8 * ref["lamb-a"] + 1.1 * ref["lamb-b"])
    new, changed = meter.apply_factors(rf, "r1", fit="type")
    ppf = {t.id: t.ppf_umol_s for t in new.room.fixture_types}
    assert_allclose([ppf["lamb-a"], ppf["lamb-b"]], [640.0, 550.0], rtol=4e-3)
    assert {c["type_id"] for c in changed} == {"lamb-a", "lamb-b"}
    assert "from readings 'r1' (2026-11-30)" in new.room.fixture_types[0].notes
    again = meter.compare(parse_room_file(to_json_bytes(dump_room_file(new))), "r1")
    assert abs(again["mean_pct"]) < 0.5 and again["rms_pct"] < 0.6


def test_apply_refuses_an_implausible_factor():
    x, y = np.array([0.6, 1.2, 1.8]), np.array([0.6, 0.9, 0.6])
    ref = closed_form(x, y, {"lamb-a": 800.0, "lamb-b": 500.0})
    rf = with_points(dark_room_doc(), x, y, 4.0 * (ref["lamb-a"] + ref["lamb-b"]))
    with pytest.raises(meter.MeterError, match="check the sensor kind"):
        meter.apply_factors(rf, "r1")


def test_grid_readings_round_trip_through_the_room_file():
    doc = sample_doc("basement-two-benches")
    doc["room"]["readings"] = [
        {
            "id": "nov-grid",
            "zone_id": "bench-1",
            "taken_on": "2026-11-28",
            "sensor": "quantum",
            "dimming_pct": 80,
            "grid": {
                "origin_x_m": 0.4,
                "origin_y_m": 0.4,
                "spacing_x_m": 0.3048,
                "spacing_y_m": 0.3048,
                "values": [[410, 455, None], [430, 470, 440]],
            },
            "notes": "sensor at canopy top",
        },
        {
            "id": "nov-lux",
            "zone_id": "bench-2",
            "taken_on": "2026-11-29",
            "sensor": "lux",
            "lux_per_ppfd": 74,
            "lux_factor_source": "cool white fluorescent, Thimijan & Heins (1983)",
            "points": [{"x_m": 2.2, "y_m": 1.0, "value": 30000}],
        },
    ]
    doc["room"]["fixture_types"][0]["maintenance"] = {
        "rated_percent": 90,
        "rated_hours_h": 36000,
        "source": "datasheet",
    }
    doc["room"]["output_age"] = {"hours_in_service_h": 9000, "dirt_factor": 0.95}
    rf = parse_room_file(to_json_bytes(doc))
    back = parse_room_file(to_json_bytes(dump_room_file(rf)))
    assert back == rf
    assert back.room.readings[0].grid.values[0][2] is None
    assert back.room.readings[1].taken_on.isoformat() == "2026-11-29"
    pts = meter.reading_points(back.room.readings[0])
    assert pts["raw"].tolist() == [410, 455, 430, 470, 440]
    assert_allclose(pts["x_m"], [0.4, 0.7048, 0.4, 0.7048, 1.0096])
    assert meter.reading_points(back.room.readings[1])["ppfd"][0] == pytest.approx(30000 / 74)


def test_a_file_without_the_new_fields_still_opens():
    rf = parse_room_file(to_json_bytes(sample_doc("hobby-tent-peppers")))
    assert rf.room.readings == [] and rf.room.output_age.hours_in_service_h is None
    assert output_basis(rf.room)["age_h"] is None


def bad(doc_change):
    doc = dark_room_doc()
    doc["room"]["readings"] = [
        {"id": "r1", "zone_id": "bench", "taken_on": "2026-11-30", "points": [{"x_m": 1.0, "y_m": 1.0, "value": 200}]}
    ]
    doc_change(doc["room"]["readings"][0])
    with pytest.raises(RoomFileError) as ei:
        parse_room_file(to_json_bytes(doc))
    return {p.field: p.message for p in ei.value.problems}


def test_readings_outside_the_zone_negative_nan_and_a_grid_that_does_not_fit_are_refused():
    probs = bad(lambda r: r["points"][0].update(value=-3))
    assert "greater than or equal to 0" in probs["room.readings[0].points[0].value"]
    doc = dark_room_doc()
    doc["room"]["readings"] = [
        {"id": "r1", "zone_id": "bench", "taken_on": "2026-11-30", "points": [{"x_m": 1.0, "y_m": 1.0, "value": "NaN"}]}
    ]
    raw = to_json_bytes(doc).decode().replace('"NaN"', "NaN")
    with pytest.raises(RoomFileError, match="NaN is not allowed"):
        parse_room_file(raw)
    doc["room"]["zones"].append(
        {
            "id": "small",
            "name": "Small",
            "x_m": 0.0,
            "y_m": 0.0,
            "width_m": 0.5,
            "length_m": 0.5,
            "canopy_height_m": 0.5,
        }
    )
    doc["room"]["readings"] = [
        {"id": "r1", "zone_id": "small", "taken_on": "2026-11-30", "points": [{"x_m": 1.0, "y_m": 0.2, "value": 5}]},
        {
            "id": "r2",
            "zone_id": "small",
            "taken_on": "2026-11-30",
            "grid": {
                "origin_x_m": 0.1,
                "origin_y_m": 0.1,
                "spacing_x_m": 0.3048,
                "spacing_y_m": 0.3048,
                "values": [[1, 2, 3], [4, 5, 6]],
            },
        },
        {"id": "r3", "zone_id": "nowhere", "taken_on": "2026-11-30", "points": [{"x_m": 0.1, "y_m": 0.1, "value": 5}]},
    ]
    with pytest.raises(RoomFileError) as ei:
        parse_room_file(to_json_bytes(doc))
    msgs = {p.field: p.message for p in ei.value.problems}
    assert "is outside zone 'small'" in msgs["room.readings[0].points[0]"]
    assert "2 rows x 3 columns does not fit zone 'small'" in msgs["room.readings[1].grid"]
    assert "unknown zone 'nowhere'" in msgs["room.readings[2].zone_id"]


@pytest.mark.parametrize(
    "change, field, words",
    [
        (lambda r: r.update(points=[], grid=None), "room.readings[0]", "either as a grid or as points"),
        (lambda r: r.update(sensor="lux"), "room.readings[0]", "need lux_per_ppfd"),
        (lambda r: r["points"][0].update(value=40000), "room.readings[0]", "sensor 'lux'"),
        (
            lambda r: r.update(
                points=[],
                grid={
                    "origin_x_m": 0,
                    "origin_y_m": 0,
                    "spacing_x_m": 0.3,
                    "spacing_y_m": 0.3,
                    "values": [[1, 2], [3]],
                },
            ),
            "room.readings[0].grid",
            "same number of readings",
        ),
        (lambda r: r.update(taken_on="30/11/2026"), "room.readings[0].taken_on", "date"),
    ],
)
def test_reading_set_shape_errors_name_the_field(change, field, words):
    probs = bad(change)
    assert field in probs and words in probs[field], probs


def maintained_doc(**age):
    doc = dark_room_doc()
    for t in doc["room"]["fixture_types"]:
        t["maintenance"] = {"rated_percent": 90, "rated_hours_h": 36000, "test_duration_h": 6000}
    doc["room"]["output_age"] = age
    return parse_room_file(to_json_bytes(doc))


def test_maintained_output_scales_every_figure():
    # L90 at 36,000 h: at 18,000 h the exponential gives √0.9 (Φ = exp(−α t), IES TM-21 form); dirt 0.95.
    new = analyse(maintained_doc())
    aged = analyse(maintained_doc(hours_in_service_h=18000, dirt_factor=0.95))
    k = math.sqrt(0.9) * 0.95
    assert_allclose(aged["emitted_umol_s"], k * new["emitted_umol_s"], rtol=1e-9)
    assert_allclose(aged["zones"][0]["ppfd"]["avg"], k * new["zones"][0]["ppfd"]["avg"], rtol=1e-5)
    assert_allclose(aged["zones"][0]["dli"]["avg"], k * new["zones"][0]["dli"]["avg"], rtol=1e-5)
    assert aged["output_basis"]["age_h"] == 18000 and "maintained at 18,000 h" in aged["output_basis"]["words"]
    # Shown at installation on request, whatever the recorded age.
    inst = analyse(maintained_doc(hours_in_service_h=18000, dirt_factor=0.95, shown_at="installation"))
    assert_allclose(inst["emitted_umol_s"], new["emitted_umol_s"])


def test_age_beyond_six_times_the_test_is_held_and_warned():
    # 6,000 h test: no projection beyond 36,000 h (IES TM-21 six-times rule).
    far = analyse(maintained_doc(shown_at="chosen_age", chosen_age_h=50000))
    at_limit = analyse(maintained_doc(shown_at="chosen_age", chosen_age_h=36000))
    assert_allclose(far["emitted_umol_s"], at_limit["emitted_umol_s"])
    assert "maintenance_beyond_projection" in {w["code"] for w in far["warnings"]}
    assert "maintenance_beyond_projection" not in {w["code"] for w in at_limit["warnings"]}
    b = far["output_basis"]["types"][0]
    assert b["beyond_limit"] and b["limit_h"] == 36000 and b["l70_capped"] and b["l70_h"] == 36000


def test_fixture_card_averages_fall_with_square_size_in_feet_and_metres():
    t = fixture_library()["panel-0.6"]
    card = fixture_card(t, 0.45, "imperial", threshold_umol=300)
    sides = [r["side_m"] for r in card["squares"]]
    assert_allclose(sides, [0.3048 * n for n in range(1, 6)])
    avgs = [r["avg"] for r in card["squares"]]
    assert all(a > b for a, b in zip(avgs, avgs[1:], strict=False))
    shares = [r["share_of_output"] for r in card["squares"]]
    assert all(0 < s < 1 for s in shares) and shares == sorted(shares)
    metric = fixture_card(t, 0.45, "metric")
    assert_allclose([r["side_m"] for r in metric["squares"]], [0.3, 0.6, 0.9, 1.2, 1.5])


def test_planner_curves_use_the_maintained_output():
    # The height and dimming curves scale with the output at the shown age, like the analysis:
    # L90 at 36,000 h at 36,000 h in service is 0.9 of the output (IES TM-21 exponential form).
    from app.service.planner import curves

    new = curves(maintained_doc(), "bench")
    aged = curves(maintained_doc(hours_in_service_h=36000), "bench")
    assert_allclose([r["avg"] for r in aged["heights"]], [0.9 * r["avg"] for r in new["heights"]], rtol=1e-5)
    assert_allclose([r["avg"] for r in aged["dimming"]], [0.9 * r["avg"] for r in new["dimming"]], rtol=1e-5)


def test_payback_does_not_age_the_fixtures_twice():
    # The payback ages the fixtures year by year itself; which age the room's figures are shown at
    # (a display choice) must not change it, or the ageing would be applied twice.
    from app.service.payback import payback_report

    doc = sample_doc("greenhouse-lettuce-bench")
    for t in doc["room"]["fixture_types"]:
        t["maintenance"] = {"rated_percent": 90, "rated_hours_h": 36000}
    runs = []
    for shown in ("installation", "recorded_age"):
        doc["room"]["output_age"] = {"hours_in_service_h": 30000, "dirt_factor": 0.9, "shown_at": shown}
        runs.append(payback_report(parse_room_file(to_json_bytes(doc))))
    assert_allclose(runs[1]["now"]["mol_by_year"], runs[0]["now"]["mol_by_year"], rtol=1e-9)
    assert_allclose(runs[1]["variant"]["mol_by_year"], runs[0]["variant"]["mol_by_year"], rtol=1e-9)
