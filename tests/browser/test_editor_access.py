"""Undo kept across a reload, keyboard reach and names for screen readers, in a real Chromium."""

import pytest
from numpy.testing import assert_allclose

from tests.browser.helpers import api, fresh_room, wait_analysis_idle, wait_saved

pytestmark = pytest.mark.browser

UNNAMED = """() => [...document.querySelectorAll('input, select, button, [role=tab], [tabindex="0"]')]
  .filter((e) => e.offsetParent !== null || e.closest('[hidden]') || e.type === 'file')
  .filter((e) => !((e.labels && e.labels.length) || e.getAttribute('aria-label') || e.getAttribute('aria-labelledby')
                   || (e.textContent || '').trim() || e.title))
  .map((e) => e.outerHTML.slice(0, 80))"""


def test_undo_survives_a_reload(live_server, page):
    room = fresh_room(live_server, name="Reload undo tent")
    before = api(live_server, f"/api/rooms/{room}")
    x0 = before["room"]["fixtures"][1]["x_m"]
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.locator('[data-fixture-id="F2"]').focus()
    page.keyboard.press("Enter")  # select with the keyboard
    page.keyboard.press("ArrowLeft")
    rev = wait_saved(page, before["revision"])
    page.reload()
    wait_analysis_idle(page)
    assert page.is_enabled("#undo")
    page.click("#undo")
    wait_saved(page, rev)
    assert_allclose(api(live_server, f"/api/rooms/{room}")["room"]["fixtures"][1]["x_m"], x0, atol=1e-9)
    assert page.is_enabled("#redo")


def test_history_from_another_version_of_the_room_is_not_applied(live_server, page):
    room = fresh_room(live_server, name="Stale undo tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.locator('[data-fixture-id="F1"]').click()
    page.keyboard.press("ArrowRight")
    rev = wait_saved(page, before["revision"])
    # Someone else saves a different room meanwhile: the kept steps no longer lead to what the server has.
    doc = api(live_server, f"/api/rooms/{room}")
    doc["room"]["fixtures"][0]["dimming_pct"] = 50
    api(live_server, f"/api/rooms/{room}", "PUT", doc)
    page.reload()
    wait_analysis_idle(page)
    assert not page.is_enabled("#undo")
    assert rev > before["revision"]


def test_every_control_has_a_name_and_the_tools_work_from_the_keyboard(live_server, page):
    room = fresh_room(live_server, name="Keyboard reach tent")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    for tab in ("fixture", "room", "zones", "obstacles", "types"):
        page.click(f"#tab-{tab}")
        assert page.evaluate(UNNAMED) == [], tab
    # Tabs move with the arrow keys; the drawer folds from the keyboard.
    page.locator("#tab-fixture").focus()
    page.keyboard.press("ArrowRight")
    assert page.evaluate("() => document.activeElement.id") == "tab-room"
    assert page.locator("#panel-room").is_visible()
    page.locator("#drawer-toggle").focus()
    page.keyboard.press("Enter")
    assert page.get_attribute("#drawer-toggle", "aria-expanded") == "false"
    # Fixtures are reachable with Tab on the plan and say what they are.
    label = page.get_attribute('[data-fixture-id="F1"]', "aria-label")
    assert "Fixture F1" in label and "over Pepper pots" in label


def test_a_stacked_rack_shows_each_tier_with_its_own_fixtures(live_server, page):
    room = fresh_room(live_server, "three-tier-greens-rack", name="Tier view rack")
    doc = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    lit = page.evaluate("() => window.leafcast.analysis.fixture_zones")
    for zone in doc["room"]["zones"]:
        page.select_option("#tier", zone["id"])
        shown = sorted(
            page.eval_on_selector_all("#plan [data-fixture-id]", "els => els.map((e) => e.dataset.fixtureId)")
        )
        assert shown == sorted(f for f, z in lit.items() if z == zone["id"]) and shown, zone["id"]


def test_renaming_in_the_editor_moves_the_address(live_server, page):
    room = fresh_room(live_server, name="Rename me tent")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.fill("#room-name", "Autumn peppers")
    page.press("#room-name", "Tab")
    page.wait_for_url("**/rooms/autumn-peppers")
    rev = api(live_server, "/api/rooms/autumn-peppers")["revision"]
    # Later saves go to the new id; the old address leads there. (Clicking a fixture moves the focus to the
    # plan, so the arrow keys move it rather than the box that had the focus.)
    page.locator('[data-fixture-id="F1"]').click()
    page.keyboard.press("ArrowRight")
    wait_saved(page, rev)
    assert api(live_server, "/api/rooms/autumn-peppers")["revision"] > rev
    page.goto(f"{live_server}/rooms/{room}")
    assert page.url.endswith("/rooms/autumn-peppers")
    assert page.get_attribute("#sheet-link", "href") == "/rooms/autumn-peppers/sheet"
