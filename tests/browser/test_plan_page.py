"""The planner page in Chromium: check, propose with progress, apply in one click, undo it, and a conflict."""

import pytest

from tests.browser.helpers import api, fresh_room

pytestmark = pytest.mark.browser


def test_propose_apply_undo_and_conflict(live_server, page, artifacts):
    room = fresh_room(live_server, name="Planner test tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}/plan")
    assert "10 %" in page.locator("#allowance").inner_text()
    page.click("#check-run")
    page.wait_for_selector("#check-report .proposal")
    page.click("#plan-run")
    page.wait_for_selector("#proposals .proposal", timeout=90000)
    page.screenshot(path=str(artifacts / "planner.png"), full_page=True)
    assert "tent-floor" not in page.locator("#proposals").inner_text()  # names, not ids
    page.click("[data-apply='0']")
    page.wait_for_selector("#banner:not([hidden])")
    assert "applied" in page.locator("#banner").inner_text()
    applied = api(live_server, f"/api/rooms/{room}")
    assert applied["revision"] == before["revision"] + 1
    assert applied["room"]["fixtures"] != before["room"]["fixtures"]
    page.get_by_role("button", name="Undo").click()
    page.wait_for_function("() => document.getElementById('banner').innerText.includes('Undone')")
    restored = api(live_server, f"/api/rooms/{room}")
    assert restored["room"] == before["room"]
    # The room is newer than the search now: Apply must not overwrite it silently.
    page.click("[data-apply='0']")
    page.wait_for_function("() => document.getElementById('banner').innerText.includes('changed since')")
    assert api(live_server, f"/api/rooms/{room}")["revision"] == restored["revision"]
    page.get_by_role("button", name="Apply over theirs").click()
    page.wait_for_function("() => document.getElementById('banner').innerText.includes('applied')")
    assert api(live_server, f"/api/rooms/{room}")["revision"] == restored["revision"] + 1
    page.click("#curve-run")
    page.wait_for_function("() => document.querySelector('#curve-height .main-svg') !== null")
    assert page.errors == []
