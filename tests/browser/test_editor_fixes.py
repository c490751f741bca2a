"""The one-click fixes in the editor: Apply makes the server's verified fix as one undoable edit.

The edit the browser makes is compared with ``apply_fix`` (app/service/advice.py), the function the server uses
to verify every fix it offers, for every action the server can send.
"""

import copy

import pytest

from app.room.models import RoomFile
from app.service.advice import apply_fix
from tests.browser.helpers import api, fresh_room, wait_analysis_idle, wait_saved

pytestmark = pytest.mark.browser

ZONE = "bench-1"


def zone_warnings(page, zone_id: str) -> list[dict]:
    return page.evaluate("z => window.leafcast.analysis.warnings.filter((w) => w.zone_id === z)", zone_id)


def serious(warnings: list[dict]) -> set[str]:
    return {w["code"] for w in warnings if w["severity"] in ("warning", "error")}


def test_apply_photoperiod_fix_edits_the_zone_and_undo_restores(live_server, page, artifacts):
    # The basement sample's benches fall short of their DLI band at the room's 16 h; a longer photoperiod for
    # the zone is the fix the live analysis checks (app/service/advice.py, photoperiod_candidates).
    room = fresh_room(live_server, "basement-two-benches", name="Apply fix basement")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    warned = zone_warnings(page, ZONE)
    fix = next(f for w in warned for f in w.get("fixes", []) if f["verified"])
    assert fix["action"] == "set_photoperiod" and fix["zone"] == ZONE
    # The zone's dark-area warning says what the fix is and carries one Apply button for it.
    button = page.locator(f".apply-fix[data-fix-zone={ZONE}]")
    assert button.count() == 1 and button.get_attribute("data-fix-action") == "set_photoperiod"
    assert button.is_visible()
    assert "photoperiod" in button.get_attribute("aria-label")
    assert serious(warned) == {"dark_zone"}
    page.locator("#warnings").screenshot(path=str(artifacts / "editor-fix-before-apply.png"))

    button.click()
    rev = wait_saved(page, before["revision"])
    wait_analysis_idle(page)
    saved = api(live_server, f"/api/rooms/{room}")
    zone = next(z for z in saved["room"]["zones"] if z["id"] == ZONE)
    assert zone["photoperiod_h"] == fix["hours"]
    # Exactly the edit the server verified: apply_fix on the room as it was gives the room saved.
    expected = apply_fix(RoomFile(**before), fix).room.model_dump(mode="json")
    assert saved["room"] == expected
    # The server's own re-analysis of the saved room no longer finds the zone's problem.
    after = api(live_server, f"/api/rooms/{room}/analysis")
    assert not serious([w for w in after["warnings"] if w["zone_id"] == ZONE])
    assert next(z for z in after["zones"] if z["id"] == ZONE)["verdict"]["meets_target"]
    assert not serious(zone_warnings(page, ZONE))
    # The fixed zone offers no fix any more; the other bench still offers its own.
    assert page.locator(f".apply-fix[data-fix-zone={ZONE}]").count() == 0
    assert page.locator(".apply-fix[data-fix-zone=bench-2]").count() == 1
    page.screenshot(path=str(artifacts / "editor-fix-after-apply.png"))

    page.locator("#undo").click()
    wait_saved(page, rev)
    wait_analysis_idle(page)
    restored = api(live_server, f"/api/rooms/{room}")
    assert restored["room"] == before["room"]
    assert serious(zone_warnings(page, ZONE)) == {"dark_zone"}
    assert page.locator(f".apply-fix[data-fix-zone={ZONE}]").count() == 1
    assert page.errors == []


def browser_apply(page, fix: dict) -> dict:
    """Apply one fix with the editor's own code (the module the page loaded); the room it leaves."""
    return page.evaluate(
        """async (fix) => {
          const m = await import('/static/js/editor/results.js');
          const refused = m.applyFix(fix);
          if (refused === null || refused.length) throw new Error('refused: ' + JSON.stringify(refused));
          return JSON.parse(JSON.stringify(window.leafcast.doc.room));
        }""",
        fix,
    )


def test_every_fix_action_edits_the_room_as_apply_fix_does(live_server, page):
    """Check-my-setup's fixes (photoperiod, dimming, height, a new layout) and a circuit move, in the browser."""
    fixes = []
    for sample in ("basement-two-benches", "greenhouse-lettuce-bench"):
        room = fresh_room(live_server, sample, name=f"Fix parity {sample}")
        checked = api(live_server, f"/api/rooms/{room}/check")
        fixes += [(sample, f) for z in checked["zones"] for f in z["fixes"]]
    assert all(f["verified"] for _, f in fixes)
    # The server's checks never propose a circuit move, but apply_fix accepts one: so does the editor.
    fixes.append(
        ("basement-two-benches", {"action": "set_circuit", "fixtures": {"P1": "B", "P4": "A"}, "text": "Swap"})
    )
    actions = {f["action"] for _, f in fixes}
    assert actions == {"set_photoperiod", "set_dimming", "set_height", "add_fixtures", "set_circuit"}, actions
    for k, (sample, fix) in enumerate(fixes):
        room = fresh_room(live_server, sample, name=f"Fix parity {k}")
        doc = api(live_server, f"/api/rooms/{room}")
        page.goto(f"{live_server}/rooms/{room}")
        wait_analysis_idle(page)
        got = browser_apply(page, copy.deepcopy(fix))
        wait_saved(page, doc["revision"])
        expected = apply_fix(RoomFile(**doc), fix).room.model_dump(mode="json")
        assert RoomFile(**{**doc, "room": got}).room.model_dump(mode="json") == expected, fix["action"]
        assert api(live_server, f"/api/rooms/{room}")["room"] == expected, fix["action"]
        assert page.evaluate("() => document.getElementById('undo').disabled") is False
    assert page.errors == []


def test_unknown_or_unverified_fix_gets_no_button(live_server, page):
    room = fresh_room(live_server, "basement-two-benches", name="Unverified fix basement")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    got = page.evaluate(
        """async () => {
          const m = await import('/static/js/editor/results.js');
          return [m.fixOf({fix: 'words', fixes: [{action: 'set_photoperiod', zone: 'bench-1', hours: 17}]}).machine,
                  m.fixOf({fix: 'words', fixes: [{action: 'paint_walls', verified: true}]}).machine,
                  m.applyFix({action: 'paint_walls'})];
        }"""
    )
    assert got == [None, None, None]
