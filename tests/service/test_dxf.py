"""The DXF plan read back with ezdxf: layers per tier and circuit, room units, coordinates equal to the room file.

The expected coordinates are computed here from the room file alone (rotation of the fixture's rectangle about
its centre, counter-clockwise as the room file defines it), not with Leafcast's drawing code.
"""

from __future__ import annotations

import io
import json
import math

import ezdxf
import numpy as np
import pytest
from numpy.testing import assert_allclose

from app.cli import main
from app.room.roomfile import parse_room_file
from app.service.dxf_export import plan_dxf
from tests.conftest import SAMPLES

TOL_MM = 0.1
M_PER_IN = 0.0254  # exact, by definition of the inch (1959)


def _read(data: bytes):
    return ezdxf.read(io.StringIO(data.decode("utf-8")))


def _units(doc) -> tuple[str, float]:
    code = doc.header["$INSUNITS"]
    assert code in (1, 4), f"$INSUNITS {code}: expected inches (1) or millimetres (4)"
    return ("imperial", 1 / M_PER_IN) if code == 1 else ("metric", 1000.0)


def _expected_corners(f: dict, t: dict) -> np.ndarray:
    g = t["geometry"]
    L = g["length_m"]
    W = g["bar_width_m"] if g["kind"] == "bar" else g["width_m"]
    a = math.radians(f["rotation_deg"])
    rot = np.array([[math.cos(a), -math.sin(a)], [math.sin(a), math.cos(a)]])
    local = np.array([[-L / 2, -W / 2], [L / 2, -W / 2], [L / 2, W / 2], [-L / 2, W / 2]])
    return local @ rot.T + [f["x_m"], f["y_m"]]


def _same_points(a: np.ndarray, b: np.ndarray) -> bool:
    """Same set of corners, in any order, within the tolerance (in metres)."""
    return all(np.min(np.hypot(*(b - p).T)) <= TOL_MM / 1000 for p in a)


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_dxf_reads_back_with_the_room_files_geometry(sample):
    doc_json = json.loads(sample.read_text(encoding="utf-8"))
    room = doc_json["room"]
    types = {t["id"]: t for t in room["fixture_types"]}
    dxf = _read(plan_dxf(parse_room_file(sample.read_bytes()).room))
    units, per_m = _units(dxf)
    assert units == room.get("display_units", "imperial")
    msp = dxf.modelspace()
    layers = {layer.dxf.name for layer in dxf.layers}
    assert "ROOM" in layers
    # The room outline: its four corners at the room's size.
    outline = [e for e in msp.query("LWPOLYLINE") if e.dxf.layer == "ROOM"]
    assert len(outline) == 1
    pts = np.array([p[:2] for p in outline[0].get_points()]) / per_m
    assert _same_points(np.array([[0, 0], [room["width_m"], 0], [room["width_m"], room["length_m"]], [0, room["length_m"]]]), pts)
    # Every fixture: its outline on a circuit layer of some tier, corners where the room file puts them.
    polys = [e for e in msp.query("LWPOLYLINE") if "-CIRCUIT-" in e.dxf.layer]
    texts = {e.dxf.text: e for e in msp.query("TEXT")}
    for f in room["fixtures"]:
        t = types[f["type_id"]]
        want = _expected_corners(f, t)
        hits = [
            p for p in polys
            if p.dxf.layer.endswith("-CIRCUIT-" + f.get("circuit", "A").upper())
            and _same_points(want, np.array([q[:2] for q in p.get_points()]) / per_m)
            and abs(p.dxf.elevation / per_m - f["hanging_height_m"]) <= TOL_MM / 1000
        ]  # fmt: skip
        assert hits, f"fixture {f['id']}: no outline at its corners and height on a circuit {f.get('circuit', 'A')} layer"
        assert f["id"] in texts
        p = texts[f["id"]].dxf.align_point
        centre = np.array([p.x, p.y]) / per_m
        assert_allclose(centre, [f["x_m"], f["y_m"]], atol=TOL_MM / 1000)
    # Bars of a bar array: bar_count rectangles per fixture.
    for f in room["fixtures"]:
        g = types[f["type_id"]]["geometry"]
        if g["kind"] == "bar_array":
            tier_layer = next(p.dxf.layer for p in polys if _same_points(_expected_corners(f, types[f["type_id"]]), np.array([q[:2] for q in p.get_points()]) / per_m))
            inside = [
                p for p in polys
                if p.dxf.layer == tier_layer
                and all(np.hypot(*(np.array(q[:2]) / per_m - [f["x_m"], f["y_m"]])) <= math.hypot(g["length_m"], g["width_m"]) / 2 + 1e-6 for q in p.get_points())
            ]  # fmt: skip
            assert len(inside) == 1 + g["bar_count"], f"{f['id']}: {len(inside) - 1} bars drawn, {g['bar_count']} expected"
    # Hanging points: two per bar, four per panel or bar array (the defaults; no sample records its own).
    points = [e for e in msp.query("POINT") if e.dxf.layer.endswith("-HANGING")]
    want_points = sum(2 if types[f["type_id"]]["geometry"]["kind"] == "bar" else 4 for f in room["fixtures"])
    assert len(points) == want_points


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.stem)
def test_dxf_dimensions_measure_the_room_file(sample):
    room = json.loads(sample.read_text(encoding="utf-8"))["room"]
    dxf = _read(plan_dxf(parse_room_file(sample.read_bytes()).room))
    _, per_m = _units(dxf)
    got = sorted(round(d.get_measurement() / per_m, 4) for d in dxf.modelspace().query("DIMENSION"))
    assert round(room["width_m"], 4) in got and round(room["length_m"], 4) in got
    # Each tier's chain from the left wall through the distinct fixture centres to the right wall sums to the width.
    xs = sorted({round(f["x_m"], 4) for f in room["fixtures"]})
    for a, b in zip([0.0, *xs], [*xs, round(room["width_m"], 4)], strict=True):
        if b - a > 0.001:
            assert any(abs(g - (b - a)) <= TOL_MM / 1000 for g in got), f"no dimension of {b - a:.4f} m"


def test_one_file_per_tier_has_only_that_tiers_layers(tmp_path):
    rack = next(p for p in SAMPLES if "rack" in p.stem)
    assert main(["export", str(rack), "--dxf", str(tmp_path / "out")]) == 0
    files = sorted((tmp_path / "out").glob("*.dxf"))
    assert len(files) == 3
    for n, path in enumerate(files, start=1):
        doc = ezdxf.readfile(path)
        tier_layers = {layer.dxf.name for layer in doc.layers if layer.dxf.name.startswith("TIER-")}
        assert tier_layers == {f"TIER-{n}", f"TIER-{n}-HANGING", f"TIER-{n}-CIRCUIT-A"}
        # Two strips per tier, hung at that tier's height.
        polys = [e for e in doc.modelspace().query("LWPOLYLINE") if e.dxf.layer == f"TIER-{n}-CIRCUIT-A"]
        assert len(polys) == 2
        want_h = {1: 0.64, 2: 1.24, 3: 1.84}[n]
        assert_allclose([p.dxf.elevation * M_PER_IN for p in polys], [want_h, want_h], atol=TOL_MM / 1000)


def test_export_refuses_a_missing_file(tmp_path, capsys):
    assert main(["export", str(tmp_path / "nope.json"), "--dxf", str(tmp_path)]) == 1
    assert "no such file" in capsys.readouterr().err


def test_dxf_route_and_its_tier_query(client, tent_doc):
    rid = client.post("/api/rooms", json=tent_doc).json()["id"]
    r = client.get(f"/api/rooms/{rid}/plan.dxf")
    assert r.status_code == 200 and r.headers["content-type"].startswith("application/dxf")
    assert "attachment" in r.headers["content-disposition"]
    doc = _read(r.content)
    assert "TIER-1-CIRCUIT-A" in {layer.dxf.name for layer in doc.layers}
    bad = client.get(f"/api/rooms/{rid}/plan.dxf?tier=2")
    assert bad.status_code == 422 and "tier" in bad.json()["message"]
    assert client.get("/api/rooms/nope/plan.dxf").status_code == 404
