"""The one display rule (round half away from zero; currents rounded up) against an independent statement of it.

The reference is :mod:`tests.room.display_reference` (exact rational arithmetic on the decimal text), and
the table ``tests/data/display_strings.json`` holds every figure of every sample's sheet with its expected
string. The editor's JavaScript is held to the same table in ``tests/browser/test_units_js.py``.
"""

from __future__ import annotations

import json

import pytest

from app.room import units
from tests.room import display_reference as ref

TABLE = json.loads(ref.TABLE.read_text(encoding="utf-8"))


def python_string(row: dict) -> str:
    kind = row["kind"]
    if kind == "number":
        return units.fmt_number(row["value"], row["digits"])
    if kind == "current":
        return units.fmt_current(row["value"])
    if kind == "length":
        return units.format_length(row["value"], row["units"], row.get("fine", False))
    if kind == "area":
        return units.format_area(row["value"], row["units"])
    return units.format_weight(row["value"], row["units"])


@pytest.mark.parametrize("row", TABLE["edge_cases"], ids=lambda r: f"{r['kind']}-{r['value']}")
def test_edge_cases_worked_by_hand(row):
    assert ref.expected(row) == row["expected"], "the reference itself disagrees with the hand-worked value"
    assert python_string(row) == row["expected"]


def test_every_figure_of_every_sample_follows_the_rule():
    rows = TABLE["samples"]
    assert len({r["sample"] for r in rows}) >= 4 and len(rows) > 100
    wrong = [(r["sample"], r["what"], r["value"], python_string(r), r["expected"]) for r in rows if python_string(r) != r["expected"]]
    assert not wrong, wrong[:5]


def test_table_lengths_and_weights_are_the_samples_as_they_are_now():
    """Room-file figures in the table match the samples (regenerate with python -m tests.room.display_reference).

    Figures from the analysis (PPFD, currents) may move when the model improves; they are checked live against
    the reference in tests/service/test_sheet_data.py.
    """
    stored = {(r["sample"], r["what"]): r for r in TABLE["samples"] if r["kind"] in ("length", "weight")}
    now = {(r["sample"], r["what"]): r for r in ref.sample_figures() if r["kind"] in ("length", "weight")}
    assert stored.keys() <= now.keys(), "a figure in the table is gone from the samples: regenerate the table"
    for key, row in stored.items():
        assert ref.expected(now[key]) == row["expected"], key


def test_half_away_differs_from_bankers_rounding():
    # Python's round() rounds half to even: round(0.5) == 0, round(2.5) == 2. The display rule does not.
    assert [units.fmt_number(v, 0) for v in (0.5, 1.5, 2.5, -2.5)] == ["1", "2", "3", "-3"]
    assert units.fmt_number(-0.04, 1) == "0.0"  # no negative zero on a sheet
