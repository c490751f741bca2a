"""Real browser, real server: the room list and a room page open and draw."""

import pytest

pytestmark = pytest.mark.browser


def test_room_list_and_room_page(live_server, page, artifacts):
    page.goto(live_server + "/")
    rows = page.locator("table.rooms tbody tr")
    assert rows.count() >= 4
    page.screenshot(path=str(artifacts / "rooms.png"))
    page.locator("table.rooms a", has_text="Hobby tent").first.click()
    page.wait_for_selector("#plan [data-fixture-id]")
    page.wait_for_function("() => document.querySelector('#map .main-svg') !== null")
    assert page.locator("#plan [data-fixture-id]").count() == 2
    assert "PPFD" in page.locator("#figures").inner_text()
    page.screenshot(path=str(artifacts / "editor-tent.png"))
    assert page.errors == []
