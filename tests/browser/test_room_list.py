"""The room list in Chromium: plan previews, duplicate as a variant, delete with undo, compare two rooms."""

import pytest

from tests.browser.helpers import api, fresh_room

pytestmark = pytest.mark.browser


def test_room_list_actions_and_compare(live_server, page, artifacts):
    a = fresh_room(live_server, name="List tent A")
    b = fresh_room(live_server, "basement-two-benches", name="List room B")
    page.goto(live_server)
    page.wait_for_function(f"() => document.querySelector('[data-thumb=\"{a}\"] rect.thumb-fixture')")
    assert page.locator(f'[data-thumb="{a}"] rect.thumb-fixture').count() == 2
    page.screenshot(path=str(artifacts / "room-list.png"), full_page=True)
    # Delete goes to the trash, with an undo right there.
    page.click(f'[data-trash="{a}"]')
    page.wait_for_selector("#undo-delete")
    assert a not in [r["id"] for r in api(live_server, "/api/rooms")]
    page.click("#undo-delete")
    page.wait_for_selector(f'tr[data-room-id="{a}"]')
    # Compare two rooms on one page.
    page.check(f'[data-compare="{a}"]')
    page.check(f'[data-compare="{b}"]')
    page.click("#compare-go")
    page.wait_for_url("**/compare?*")
    page.wait_for_function("() => document.querySelectorAll('.compare-map .main-svg').length >= 2")
    ranges = page.evaluate(
        "() => [0, 1].map((i) => { const d = document.getElementById('map-' + i).data[0]; return [d.zmin, d.zmax]; })"
    )
    assert ranges[0] == ranges[1]
    assert "W" in page.locator('[data-compare-room] [data-compare="power"]').first.inner_text()
    page.screenshot(path=str(artifacts / "compare.png"), full_page=True)
    # Duplicate as a variant opens the copy.
    page.goto(live_server)
    page.click(f'[data-variant="{a}"]')
    page.wait_for_url("**/rooms/list-tent-a-variant")
    assert page.errors == []
