"""The room panel's hanging grid boxes, in a real Chromium: typed lengths in the grower's units reach the file,
blank pitches mean free along that axis, both blank remove the grid, a zero pitch is refused beside its box."""

import pytest

from tests.browser.helpers import api, fresh_room, wait_analysis_idle, wait_saved

pytestmark = pytest.mark.browser


def test_hanging_grid_boxes_edit_the_room_file(live_server, page):
    room = fresh_room(live_server, name="Rails test tent")
    rev = api(live_server, f"/api/rooms/{room}")["revision"]
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.click("#tab-room")
    page.fill("#hg-oy", "1'")  # imperial room: 1 ft = 0.3048 m exactly (1959 yard and pound agreement)
    page.press("#hg-oy", "Tab")
    page.fill("#hg-py", "2'")
    page.press("#hg-py", "Tab")
    rev = wait_saved(page, rev)
    grid = api(live_server, f"/api/rooms/{room}")["room"]["hanging_grid"]  # one save: the origin waits for a pitch
    assert grid["origin_y_m"] == pytest.approx(0.3048, abs=1e-4)
    assert grid["pitch_y_m"] == pytest.approx(0.6096, abs=1e-4)
    assert grid["pitch_x_m"] is None and grid["origin_x_m"] == 0

    page.fill("#hg-px", "0")
    page.press("#hg-px", "Tab")
    assert page.get_attribute("#hg-px", "aria-invalid") == "true"
    assert "more than zero" in page.locator("#hg-px + .field-msg").inner_text()

    page.fill("#hg-px", "")
    page.press("#hg-px", "Tab")
    page.fill("#hg-py", "")
    page.press("#hg-py", "Tab")
    wait_saved(page, rev)
    for _ in range(20):
        if api(live_server, f"/api/rooms/{room}")["room"]["hanging_grid"] is None:
            break
        page.wait_for_timeout(250)
    assert api(live_server, f"/api/rooms/{room}")["room"]["hanging_grid"] is None
    assert page.errors == []
