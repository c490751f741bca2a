"""The editor's JavaScript units module against the same table of display strings as the Python side.

``tests/data/display_strings.json`` (made by :mod:`tests.room.display_reference`) holds every figure of every
sample with the string the one rounding rule gives. Lengths and areas are checked against ``Units.length``
and ``Units.area``; numbers, currents and weights against ``Units.number``, ``Units.current`` and
``Units.weight`` once the editor's module has them (issue 15 owns that file).
"""

import json

import pytest

from tests.room import display_reference as ref

pytestmark = pytest.mark.browser

TABLE = json.loads(ref.TABLE.read_text(encoding="utf-8"))
JS_CALL = {
    "length": "Units.length(r.value, r.units, {fine: !!r.fine})",
    "area": "Units.area(r.value, r.units)",
    "number": "Units.number(r.value, r.digits)",
    "current": "Units.current(r.value)",
    "weight": "Units.weight(r.value, r.units)",
}
JS_FUNCTION = {"length": "length", "area": "area", "number": "number", "current": "current", "weight": "weight"}


def _js_strings(page, rows, kind):
    return page.evaluate(f"rows => rows.map(r => {JS_CALL[kind]})", rows)


@pytest.mark.parametrize("kind", list(JS_CALL))
def test_editor_shows_the_same_strings_as_the_sheet(live_server, page, kind):
    page.goto(f"{live_server}/")
    # The editor's one units module (an ES module since issue 15), loaded the way the pages load it.
    page.evaluate("async () => { window.Units = await import('/static/js/lib/units.js'); }")
    has = page.evaluate(f"() => typeof Units !== 'undefined' && typeof Units.{JS_FUNCTION[kind]} === 'function'")
    follows_rule = page.evaluate("() => typeof Units !== 'undefined' && Units.ROUNDING === 'half-away-from-zero'")
    if not (has and follows_rule):
        pytest.skip(
            f"static/js/lib/units.js has no Units.{JS_FUNCTION[kind]} following the one rule yet "
            "(Units.ROUNDING === 'half-away-from-zero'); issue 15 brings it"
        )
    rows = [r for r in TABLE["edge_cases"] + TABLE["samples"] if r["kind"] == kind]
    rows = [{"units": "metric", **r} for r in rows]
    got = _js_strings(page, rows, kind)
    wrong = [(r.get("what", "edge"), r["value"], g, r["expected"]) for r, g in zip(rows, got, strict=True) if g != r["expected"]]
    assert not wrong, wrong[:8]
