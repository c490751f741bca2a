"""An independent statement of the display rule, and the table of every figure the samples' sheets print.

The rule: round half away from zero on the number's shortest decimal form; a current always rounded up.
This module implements it with exact rational arithmetic (``fractions.Fraction`` on the decimal text), not
with Leafcast's code, so the tests compare two implementations. Lengths: imperial to the ½″ (⅛″ where the
sheet says "fine"), metric in cm below 1 m (one decimal) and m above (three decimals, trailing zeros dropped).

``python -m tests.room.display_reference`` rewrites ``tests/data/display_strings.json``: the figures of every
sample (values from the analysis) with the strings this rule gives. The editor's JavaScript units module is
checked against the same table in ``tests/browser/test_units_js.py``.
"""

from __future__ import annotations

import json
import math
from fractions import Fraction
from pathlib import Path

TABLE = Path(__file__).resolve().parent.parent / "data" / "display_strings.json"
IN_PER_M = 1 / Fraction("0.0254")  # exact: 1 in = 25.4 mm (1959)
FT2_PER_M2 = 1 / Fraction("0.3048") ** 2
LB_PER_KG = 1 / Fraction("0.45359237")  # exact (1959)
EIGHTHS = {0: "", 1: "⅛", 2: "¼", 3: "⅜", 4: "½", 5: "⅝", 6: "¾", 7: "⅞"}


def exact(v: float) -> Fraction:
    return Fraction(repr(float(v)))


def half_away(x: Fraction, digits: int) -> Fraction:
    k = Fraction(10) ** digits
    n = math.floor(abs(x) * k + Fraction(1, 2))
    return Fraction(n if x >= 0 else -n) / k


def up(x: Fraction, digits: int) -> Fraction:
    k = Fraction(10) ** digits
    return Fraction(math.ceil(x * k)) / k


def fixed(x: Fraction, digits: int) -> str:
    neg = x < 0
    k = 10**digits
    n = abs(x) * k
    assert n.denominator == 1
    n = int(n)
    text = str(n // k) + (("." + str(n % k).rjust(digits, "0")) if digits else "")
    return ("-" if neg and n else "") + text


def number(v: float, digits: int) -> str:
    return fixed(half_away(exact(v), digits), digits)


def current(a: float, digits: int = 1) -> str:
    return fixed(up(Fraction(f"{a:.12g}"), digits), digits) + " A"


def _trim(s: str) -> str:
    return s.rstrip("0").rstrip(".") if "." in s else s


def length(m: float, units: str, fine: bool = False) -> str:
    x = exact(m)
    if units == "imperial":
        step = 8 if fine else 2
        q = abs(x) * IN_PER_M * step
        n = math.floor(q + Fraction(1, 2))  # half away from zero on the magnitude
        eighths = n * (8 // step)
        ft, rest8 = divmod(eighths, 96)
        whole, frac8 = divmod(rest8, 8)
        sign = "−" if x < 0 else ""
        text = f"{whole}{EIGHTHS[frac8]}″"
        return f"{sign}{ft}′ {text}" if ft else f"{sign}{text}"
    if abs(x) < 1:
        return _trim(fixed(half_away(x * 100, 1), 1)) + " cm"
    return _trim(fixed(half_away(x, 3), 3)) + " m"


def area(m2: float, units: str) -> str:
    if units == "imperial":
        return fixed(half_away(exact(m2) * FT2_PER_M2, 1), 1) + " ft²"
    return fixed(half_away(exact(m2), 2), 2) + " m²"


def weight(kg: float, units: str) -> str:
    if units == "imperial":
        return f"{fixed(half_away(exact(kg) * LB_PER_KG, 1), 1)} lb ({fixed(half_away(exact(kg), 1), 1)} kg)"
    return fixed(half_away(exact(kg), 1), 1) + " kg"


def expected(row: dict) -> str:
    kind, v = row["kind"], row["value"]
    if kind == "number":
        return number(v, row["digits"])
    if kind == "current":
        return current(v)
    if kind == "length":
        return length(v, row["units"], row.get("fine", False))
    if kind == "area":
        return area(v, row["units"])
    return weight(v, row["units"])


def sample_figures() -> list[dict]:
    """Every figure the samples' sheets print, with its raw value, as table rows (without 'expected')."""
    from app.room.roomfile import parse_room_file
    from app.service.analysis import analyse
    from app.service.sheet_geometry import chain, tiers
    from tests.conftest import SAMPLES

    rows: list[dict] = []
    for path in SAMPLES:
        rf = parse_room_file(path.read_bytes())
        room, u, name = rf.room, rf.room.display_units, path.stem

        def add(kind, value, what, name=name, u=u, **kw):
            rows.append({"sample": name, "what": what, "kind": kind, "value": value, "units": u, **kw})

        a = analyse(rf, include_grids=False)
        for v, what in ((room.width_m, "room width"), (room.length_m, "room length"), (room.height_m, "ceiling")):
            add("length", v, what)
        for f in room.fixtures:
            for v, what in ((f.x_m, "from left"), (f.y_m, "from front"), (f.hanging_height_m, "height")):
                add("length", v, f"{f.id} {what}", fine=True)
        for t in tiers(room):
            for a_, b_ in chain([f.x_m for f in t.fixtures], room.width_m) + chain([f.y_m for f in t.fixtures], room.length_m):
                add("length", b_ - a_, f"{t.key} dimension", fine=True)
        for z in a["zones"]:
            for key, d in (("avg", 0), ("min", 0), ("max", 0), ("min_over_avg", 2), ("min_over_max", 2)):
                add("number", z["ppfd"][key], f"{z['id']} ppfd {key}", digits=d)
            add("number", z["dli"]["avg"], f"{z['id']} dli avg", digits=1)
            add("area", z["dark"]["area_m2"], f"{z['id']} dark area")
            add("area", z["hot"]["area_m2"], f"{z['id']} hot area")
        for c in a["circuits"]:
            add("current", c["current_a"], f"circuit {c['name']} current")
            add("number", c["load_w"], f"circuit {c['name']} load", digits=0)
        for t in room.fixture_types:
            n = sum(f.type_id == t.id for f in room.fixtures)
            if t.weight_kg is not None and n:
                add("weight", t.weight_kg, f"{t.id} weight each")
                add("weight", t.weight_kg * n, f"{t.id} weight total")
        e = a["energy"]
        add("number", e["power_w"], "power", digits=0)
        add("number", e["kwh_per_day"], "kWh/day", digits=2)
        add("number", a["heat"]["btu_h"], "BTU/h", digits=0)
    return rows


# Hand-worked cases where the rule matters (the digit after the last kept one is exactly 5, or a current).
EDGE_CASES = [
    {"kind": "number", "value": 5.25, "digits": 1, "expected": "5.3"},  # banker's rounding would give 5.2
    {"kind": "number", "value": -5.25, "digits": 1, "expected": "-5.3"},
    {"kind": "number", "value": 2.5, "digits": 0, "expected": "3"},
    {"kind": "number", "value": 0.125, "digits": 2, "expected": "0.13"},
    {"kind": "number", "value": 2.675, "digits": 2, "expected": "2.68"},  # stored as 2.67499999..., shown 2.675
    {"kind": "number", "value": 1.005, "digits": 2, "expected": "1.01"},
    {"kind": "current", "value": 5.25, "expected": "5.3 A"},
    {"kind": "current", "value": 5.21, "expected": "5.3 A"},  # a current is rounded up
    {"kind": "current", "value": 5.2, "expected": "5.2 A"},
    {"kind": "current", "value": 0.30000000000000004, "expected": "0.3 A"},  # float noise is not a load
    {"kind": "length", "value": 54.25 * 0.0254, "units": "imperial", "expected": "4′ 6½″"},  # 54¼″ to the ½″
    {"kind": "length", "value": 0.4525, "units": "metric", "expected": "45.3 cm"},
    {"kind": "length", "value": 1.2345, "units": "metric", "expected": "1.235 m"},
    {"kind": "length", "value": 0.3048 * 12 - 0.001, "units": "imperial", "expected": "12′ 0″"},
    {"kind": "area", "value": 0.45, "units": "metric", "expected": "0.45 m²"},
    {"kind": "weight", "value": 4.5, "units": "imperial", "expected": "9.9 lb (4.5 kg)"},
]


def build_table() -> dict:
    rows = sample_figures()
    for r in rows:
        r["expected"] = expected(r)
    return {"rule": "half away from zero on the shortest decimal form; currents rounded up", "edge_cases": EDGE_CASES, "samples": rows}


if __name__ == "__main__":
    TABLE.write_text(json.dumps(build_table(), indent=1, ensure_ascii=False) + "\n", encoding="utf-8")
    print(TABLE)
