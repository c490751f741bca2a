"""The sheet's page data and drawings checked against the room file and an independent display rule.

Expected values are computed here from the room file (sums of weights, currents I = P / V, the chain of
distinct fixture centres) and formatted with :mod:`tests.room.display_reference`, not with the sheet's code.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from functools import cache

import pytest

from app.room.roomfile import parse_room_file
from app.service.analysis import analyse
from app.web.views import sheet
from tests.conftest import SAMPLES
from tests.room import display_reference as ref

SVG = "{http://www.w3.org/2000/svg}"
PT_MM = 25.4 / 72  # one point (1/72 in) in mm
MIN_PT = 7.0


@cache
def _page(path):
    rf = parse_room_file(path.read_bytes())
    return json.loads(path.read_text(encoding="utf-8"))["room"], sheet("x", rf, analyse(rf), "letter")


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_figures_follow_the_display_rule(sample):
    room, page = _page(sample)
    a = analyse(parse_room_file(sample.read_bytes()), include_grids=False)
    u = room["display_units"]
    for row, f in zip(page["fixtures"], room["fixtures"], strict=True):
        assert row["from_left"] == ref.length(f["x_m"], u, True)
        assert row["from_front"] == ref.length(f["y_m"], u, True)
        assert row["height"] == ref.length(f["hanging_height_m"], u, True)
    for row, z in zip(page["zones"], a["zones"], strict=True):
        assert row["avg"] == ref.number(z["ppfd"]["avg"], 0) and row["max"] == ref.number(z["ppfd"]["max"], 0)
        assert row["dli_avg"] == ref.number(z["dli"]["avg"], 1)
        assert row["dark_area"] == ref.area(z["dark"]["area_m2"], u)
    for w in page["warnings"]:
        if u == "imperial":
            assert " m²" not in w["message"], w["message"]


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_bill_of_materials_and_circuit_loads(sample):
    room, page = _page(sample)
    u = room["display_units"]
    types = {t["id"]: t for t in room["fixture_types"]}
    bom = page["bill_of_materials"]
    total_kg = sum(types[f["type_id"]]["weight_kg"] for f in room["fixtures"])
    assert bom["weight_total"] == ref.weight(total_kg, u)
    assert bom["count"] == len(room["fixtures"])
    # Default hanging points: two per bar, four per panel or bar array.
    want_points = sum(2 if types[f["type_id"]]["geometry"]["kind"] == "bar" else 4 for f in room["fixtures"])
    assert bom["hanging_points"] == want_points
    v = room["schedule"]["supply_voltage_v"]
    for c in page["circuits"]:
        on = [f for f in room["fixtures"] if f.get("circuit", "A") == c["name"]]
        full_w = sum(types[f["type_id"]]["power_w"] for f in on)
        set_w = sum(types[f["type_id"]]["power_w"] * f.get("dimming_pct", 100) / 100 for f in on if f.get("on", True))
        assert c["full_w"] == f"{ref.number(full_w, 0)} W" and c["full_a"] == ref.current(full_w / v)
        assert c["set_w"] == f"{ref.number(set_w, 0)} W" and c["set_a"] == ref.current(set_w / v)


def _plans(page):
    return [ET.fromstring(t["plan_svg"]) for t in page["tiers"]]


def _chain(values, wall):
    stops = [0.0]
    for p in sorted(values):
        if p - stops[-1] > 0.001:
            stops.append(p)
    if wall - stops[-1] > 0.001:
        stops.append(wall)
    return [b - a for a, b in zip(stops, stops[1:], strict=False)]


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_plan_dimensions_are_the_room_files(sample):
    room, page = _page(sample)
    u = room["display_units"]
    seen_ids = []
    for svg in _plans(page):
        ids = [t.text for t in svg.iter(SVG + "text") if t.get("class") == "sp-fixture-id"]
        seen_ids += ids
        fx = [f for f in room["fixtures"] if f["id"] in ids]
        dims = [t.text for t in svg.iter(SVG + "text") if t.get("class") == "sp-dim-text"]
        want = _chain([f["x_m"] for f in fx], room["width_m"]) + _chain([f["y_m"] for f in fx], room["length_m"])
        want += [room["width_m"], room["length_m"]]
        assert sorted(dims) == sorted(ref.length(w, u, True) for w in want)
    assert sorted(seen_ids) == sorted(f["id"] for f in room["fixtures"]), "each fixture on exactly one plan"


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_plan_text_sizes_and_scale_bar(sample):
    room, page = _page(sample)
    for svg in _plans(page):
        # The SVG is sized in mm and its viewBox is in mm: one user unit is one millimetre on paper.
        vb = [float(v) for v in svg.get("viewBox").split()]
        assert svg.get("width") == f"{vb[2]:.2f}mm" and svg.get("height") == f"{vb[3]:.2f}mm"
        sizes = [float(t.get("font-size")) / PT_MM for t in svg.iter(SVG + "text")]
        assert min(sizes) >= MIN_PT, f"{min(sizes):.2f} pt"
        ratio = int(svg.get("data-ratio"))
        bar = next(g for g in svg.iter(SVG + "g") if g.get("class") == "sp-scale-bar")
        body = next(r for r in bar if r.get("class") == "sp-scale-bar-body")
        label = [t.text for t in svg.iter(SVG + "text") if t.get("class") == "sp-scale-text"][-1]
        value, unit = label.split()
        metres = float(value) * {"ft": 0.3048, "in": 0.0254, "m": 1.0, "cm": 0.01}[unit]
        assert abs(float(body.get("width")) - metres * 1000 / ratio) <= 0.01 * metres * 1000 / ratio
        ratio_text = next(t.text for t in svg.iter(SVG + "text") if t.get("class") == "sp-scale-ratio")
        assert f"1:{ratio}" in ratio_text


def test_rack_has_one_plan_per_tier_with_its_shelves():
    rack = next(p for p in SAMPLES if "rack" in p.stem)
    room, page = _page(rack)
    assert len(page["tiers"]) == 3
    ids = [sorted(t["fixture_ids"]) for t in page["tiers"]]
    assert ids == [["S1", "S2"], ["S3", "S4"], ["S5", "S6"]]
    # Tier 2 stands on shelf 2 (top 0.65 + 0.03 m) and its strips hang under shelf 3 (underside 1.25 m).
    facts = page["tiers"][1]["facts"]
    assert f"shelf top {ref.length(0.68, 'imperial', True)}" in facts
    assert f"under Shelf 3 at {ref.length(1.25, 'imperial', True)}" in facts
    assert f"canopy {ref.length(0.83, 'imperial', True)}" in facts


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_one_colour_scale_whose_top_is_the_highest_value(sample):
    room, page = _page(sample)
    a = analyse(parse_room_file(sample.read_bytes()), include_grids=False)
    top = max(max(z["target"]["ppfd_max"], z["ppfd"]["max"]) for z in a["zones"])
    low = max(0.0, min(min(z["target"]["ppfd_min"], z["ppfd"]["min"]) for z in a["zones"]))
    legend = ET.fromstring(page["colour_scale"]["svg"])
    steps = [r for r in legend.iter(SVG + "rect") if r.get("class") == "legend-step"]
    assert len(steps) == 10 and len({r.get("fill") for r in steps}) == 10, "each step drawn once"
    mx = next(t for t in legend.iter(SVG + "text") if t.get("class") == "legend-max")
    mn = next(t for t in legend.iter(SVG + "text") if t.get("class") == "legend-min")
    assert mx.text == ref.number(top, 0) and mn.text == ref.number(low, 0)
    # The brightest cell of the brightest zone is drawn in the top step's colour.
    best = max(a["zones"], key=lambda z: z["ppfd"]["max"])
    if best["ppfd"]["max"] >= top - 1e-9:
        m = next(m for t in page["tiers"] for m in t["maps"] if m["zone_id"] == best["id"])
        fills = {r.get("fill") for r in ET.fromstring(m["svg"]).iter(SVG + "rect")}
        assert steps[-1].get("fill") in fills


def test_recorded_hanging_points_entry_notes_and_price(tent_doc):
    import copy
    import io
    import math

    import ezdxf

    from app.service.dxf_export import plan_dxf

    doc = copy.deepcopy(tent_doc)
    t = doc["room"]["fixture_types"][0]
    t.update(hanging_points_m=[[-0.25, 0.0], [0.25, 0.0]], cord_note="1.8 m, grounded plug", driver_note="remote", price=120)
    doc["room"]["entry"] = {"side": "left", "offset_m": 0.3, "label": "Zip"}
    rf = parse_room_file(json.dumps(doc))
    page = sheet("x", rf, analyse(rf), "a4")
    row = page["bill_of_materials"]["rows"][0]
    assert row["hanging_each"] == 2 and row["hanging_recorded"] and row["hanging_total"] == 4
    assert row["notes"] == "cord: 1.8 m, grounded plug; driver: remote"
    assert row["price_each"] == "120.00" and page["bill_of_materials"]["price_total"] == "240.00"
    svg = ET.fromstring(page["tiers"][0]["plan_svg"])
    assert sum(1 for g in svg.iter(SVG + "g") if g.get("class") == "sp-hanging") == 4
    assert any(t.text == "Zip (left wall)" for t in svg.iter(SVG + "text"))
    # In the DXF the points sit at the recorded offsets, turned with the fixture (90°: local x becomes +y).
    dxf = ezdxf.read(io.StringIO(plan_dxf(rf.room).decode()))
    pts = sorted((round(p.dxf.location.x * 0.0254, 4), round(p.dxf.location.y * 0.0254, 4)) for p in dxf.modelspace().query("POINT"))
    want = []
    for f in doc["room"]["fixtures"]:
        a = math.radians(f["rotation_deg"])
        for u, v in t["hanging_points_m"]:
            want.append((round(f["x_m"] + u * math.cos(a) - v * math.sin(a), 4), round(f["y_m"] + u * math.sin(a) + v * math.cos(a), 4)))
    assert pts == sorted(want)


def test_an_entry_that_does_not_fit_its_wall_is_refused(client, tent_doc):
    tent_doc["room"]["entry"] = {"side": "front", "width_m": 5}
    r = client.post("/api/rooms", json=tent_doc)
    assert r.status_code == 422
    assert any(p["field"] == "room.entry.width_m" for p in r.json()["problems"])


def test_sheet_prints_the_grow_cycle_week_by_week(client):
    """A zone with a grow cycle gets its weeks on the sheet, as the cycle page computes them."""
    from app.service.cycle import cycle_report

    rid = next(r["id"] for r in client.get("/api/rooms").json() if "greenhouse" in r["id"])
    page = client.get(f"/rooms/{rid}/sheet?format=json").json()
    rf = parse_room_file(client.get(f"/api/rooms/{rid}/file").content)
    zone = next(z for z in rf.room.zones if z.cycle is not None)
    weeks = cycle_report(rf, zone)["weeks"]
    (table,) = page["schedules"]
    assert [r[0] for r in table["rows"]] == [str(w["week"]) for w in weeks]
    assert [r[6] for r in table["rows"]] == [f"{w['dli_avg']:.1f}" for w in weeks]
    html = client.get(f"/rooms/{rid}/sheet").text
    assert "Grow cycle by week" in html


def test_walls_line_states_each_surface_finish():
    """The title block's Walls line: one finish for a 0.1 room, every surface's own once it has any."""
    path = next(p for p in SAMPLES if p.stem == "hobby-tent-peppers")
    doc = json.loads(path.read_text(encoding="utf-8"))
    wf = doc["room"]["wall_finish"]
    rf = parse_room_file(json.dumps(doc).encode())
    assert (
        sheet("x", rf, analyse(rf), "letter")["room"]["walls"] == f"{wf['label']} ({wf['kind']}, {wf['reflectance']:g})"
    )
    doc["room"]["surface_finishes"] = {
        "ceiling": {"kind": "absorbing"},
        "back": {"kind": "diffuse", "reflectance": 0.5},
    }
    doc["room"]["open_sides"] = ["left"]
    rf = parse_room_file(json.dumps(doc).encode())
    walls = sheet("x", rf, analyse(rf), "letter")["room"]["walls"]
    # Listed surfaces take their own finish; the rest keep the open side or the room-wide finish (Room.finish_of).
    own = f"{wf['label']} ({wf['kind']}, {wf['reflectance']:g})"
    assert walls == f"left: open; right, front: {own}; back: diffuse, 0.5; ceiling: absorbing", walls
