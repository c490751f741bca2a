"""Hypothesis strategies that build valid room files (for schemathesis and the stateful API run).

Each room starts from a sample and varies what a grower varies (fixture position, height, dimming, on/off,
photoperiod, name), staying inside the rules the room file enforces, so the API answers 2xx and the engine,
the analysis and the planner are reached with valid input.
"""

from __future__ import annotations

import copy
import math

from hypothesis import strategies as st

from app.room import layout
from app.room.models import Geometry
from tests.conftest import sample_doc

SAMPLE_NAMES = ("hobby-tent-peppers", "research-chamber-metric", "three-tier-greens-rack", "basement-two-benches")


@st.composite
def valid_room_docs(draw, names=SAMPLE_NAMES) -> dict:
    doc = copy.deepcopy(sample_doc(draw(st.sampled_from(names))))
    room = doc["room"]
    room["name"] = draw(st.text(st.characters(categories=("L", "N")), min_size=1, max_size=30).map(str.strip)) or "R"
    room["grid_spacing_m"] = max(room["grid_spacing_m"], 0.05)  # keep each example quick
    room["schedule"]["photoperiod_h"] = draw(st.floats(8, 18).map(lambda h: round(h, 2)))
    types = {t["id"]: t for t in room["fixture_types"]}
    zones = [_Zone(z) for z in room["zones"]]
    for f in room["fixtures"]:
        f["dimming_pct"] = draw(st.floats(10, 100).map(lambda d: round(d, 1)))
        f["on"] = draw(st.booleans())
        # Mostly hung straight down; now and then tilted, sideways or facing up, leaning any way.
        f["tilt_deg"] = draw(st.sampled_from([0.0, 0.0, 0.0, 35.0, 90.0, 180.0]))
        f["aim_deg"] = draw(st.floats(0, 359.9).map(lambda a: round(a, 1)))
        # The layout rule's own footprint of the validated geometry (a single bar is as wide as its bar), so the
        # walls rule the server applies agrees.
        size = layout.footprint_size_m(Geometry.model_validate(types[f["type_id"]]["geometry"]))
        hx, hy = layout.rotated_half_extent_m(*size, f["rotation_deg"])
        lit = layout.zone_lit_by(zones, _Fixture(f))
        # Move it within the zone it lights (or the room), keeping its footprint inside the walls.
        x0, x1 = (lit.x_m, lit.x_m + lit.width_m) if lit else (0.0, room["width_m"])
        y0, y1 = (lit.y_m, lit.y_m + lit.length_m) if lit else (0.0, room["length_m"])
        # Bounds on the 0.1 mm lattice the positions are rounded to, so rounding never crosses a wall.
        x0, x1 = math.ceil(max(x0, hx) * 1e4) / 1e4, math.floor(min(x1, room["width_m"] - hx) * 1e4) / 1e4
        y0, y1 = math.ceil(max(y0, hy) * 1e4) / 1e4, math.floor(min(y1, room["length_m"] - hy) * 1e4) / 1e4
        if x0 < x1:
            f["x_m"] = min(max(round(draw(st.floats(x0, x1)), 4), x0), x1)
        if y0 < y1:
            f["y_m"] = min(max(round(draw(st.floats(y0, y1)), 4), y0), y1)
    if room["fixtures"] and not any(f["on"] for f in room["fixtures"]):
        room["fixtures"][draw(st.integers(0, len(room["fixtures"]) - 1))]["on"] = True  # a lit room to analyse
    return doc


class _Zone:
    def __init__(self, z: dict) -> None:
        self.__dict__.update(z)


class _Fixture(_Zone):
    pass
