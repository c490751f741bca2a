"""Footprints for the drag preview: the peak under a point source against the inverse-square law, and the
composed preview (exact answer − footprint at the old place + footprint at the new) against the exact answer."""

import copy
import math

import numpy as np
from numpy.testing import assert_allclose

from app.room.roomfile import parse_room_file, to_json_bytes
from app.service.analysis import analyse
from app.service.footprints import footprint
from tests.conftest import sample_doc


def dark_open_room(doc):
    """No walls to reflect: only direct light reaches the canopy."""
    r = doc["room"]
    r["wall_finish"] = {"kind": "absorbing", "reflectance": 0.0, "label": "Dark or open"}
    r["open_sides"] = ["front", "back", "left", "right"]
    return doc


def test_peak_under_a_spot_follows_the_inverse_square_law():
    doc = dark_open_room(sample_doc("hobby-tent-peppers"))
    room = doc["room"]
    spot = {
        "id": "spot-90",
        "name": "Spot, 90°",
        "geometry": {"kind": "point"},
        "beam": {"kind": "cosine_power", "beam_angle_deg": 90.0},
        "ppf_umol_s": 240.0,
        "power_w": 100.0,
    }
    room["fixture_types"] = [spot]
    z = room["zones"][0]
    drop = 0.6
    room["fixtures"] = [
        {
            "id": "S1",
            "type_id": "spot-90",
            "x_m": z["x_m"] + z["width_m"] / 2,
            "y_m": z["y_m"] + z["length_m"] / 2,
            "hanging_height_m": z["canopy_height_m"] + drop,
            "rotation_deg": 0,
            "dimming_pct": 50,
            "on": True,
            "circuit": room["circuits"][0]["name"],
        }
    ]
    fp = footprint(parse_room_file(to_json_bytes(doc)).room, "S1")
    r = fp["radius_cells"]
    # I(θ) = I0 cosⁿθ with half intensity at 45° (n = ln 0.5 / ln cos 45° = 2); Φ = 2π I0 / (n + 1) over the
    # hemisphere, so I0 = Φ (n + 1) / 2π; straight below, E = I0 / d² (inverse-square law), at 100 % output.
    n = math.log(0.5) / math.log(math.cos(math.radians(45)))
    i0 = 240.0 * (n + 1) / (2 * math.pi)
    assert_allclose(fp["ppfd"][r][r], i0 / drop**2, rtol=2e-3)
    # One grid step away horizontally: E = I0 cosⁿθ cos θ / (d² + x²), cos θ = d / √(d² + x²) (Lambert's cosine law).
    x = fp["spacing_m"]
    c = drop / math.hypot(drop, x)
    assert_allclose(fp["ppfd"][r][r + 1], i0 * c**n * c / (drop**2 + x**2), rtol=2e-3)


def test_composed_preview_matches_the_exact_answer_in_open_air():
    doc = dark_open_room(sample_doc("hobby-tent-peppers"))
    room = doc["room"]
    s = room["grid_spacing_m"]
    before = analyse(parse_room_file(to_json_bytes(doc)))
    f = room["fixtures"][0]
    fp = footprint(parse_room_file(to_json_bytes(doc)).room, f["id"])
    moved = copy.deepcopy(doc)
    steps = (4, -3)  # whole grid cells, as the browser shifts
    moved["room"]["fixtures"][0]["x_m"] = round(f["x_m"] + steps[0] * s, 6)
    moved["room"]["fixtures"][0]["y_m"] = round(f["y_m"] + steps[1] * s, 6)
    after = analyse(parse_room_file(to_json_bytes(moved)))

    zb = next(z for z in before["zones"] if z["id"] == fp["zone_id"])
    za = next(z for z in after["zones"] if z["id"] == fp["zone_id"])
    xs, ys = np.array(zb["grid"]["x_m"]), np.array(zb["grid"]["y_m"])
    stamp = np.array(fp["ppfd"]) * f["dimming_pct"] / 100
    r = fp["radius_cells"]

    def add(values, x_m, y_m, sign):
        ic, jc = int(round((x_m - xs[0]) / s)), int(round((y_m - ys[0]) / s))
        for j in range(stamp.shape[0]):
            for i in range(stamp.shape[1]):
                gi, gj = ic + i - r, jc + j - r
                if 0 <= gi < xs.size and 0 <= gj < ys.size:
                    values[gj, gi] += sign * stamp[j, i]

    preview = np.array(zb["grid"]["ppfd"], dtype=float)
    add(preview, f["x_m"], f["y_m"], -1)
    add(preview, f["x_m"] + steps[0] * s, f["y_m"] + steps[1] * s, +1)
    exact = np.array(za["grid"]["ppfd"], dtype=float)
    # The fixture sits off the grid points by less than half a cell, so the shifted stamp is close, not exact.
    assert np.abs(preview - exact).max() < 0.03 * exact.max()
    assert abs(preview.mean() - exact.mean()) < 0.005 * exact.mean()
