"""The new-room dialog and edits that would break a room, in a real Chromium against a real uvicorn."""

import pytest
from numpy.testing import assert_allclose

from tests.browser.helpers import api, fresh_room, wait_analysis_idle, wait_saved

pytestmark = pytest.mark.browser

M_PER_FT, M_PER_IN = 0.3048, 0.0254  # exact: international yard and pound agreement (1959)


def test_new_room_dialog_makes_the_room_asked_for(live_server, page, artifacts):
    page.goto(live_server)
    page.click("#new-room")
    page.fill("#nr-name", "Basil tent 5 x 5")
    page.fill("#nr-width", "5'")
    page.fill("#nr-length", "4' 11 1/2\"")
    page.fill("#nr-height", "7'")
    page.fill("#nr-canopy", "1' 6\"")
    page.select_option("#nr-crop", "basil")
    # Stages in growth order, not alphabetical.
    assert page.locator("#nr-stage option").all_inner_texts() == ["Propagation", "Vegetative"]
    page.select_option("#nr-stage", "vegetative")
    page.select_option("#nr-fixture", "panel-0.6")
    page.screenshot(path=str(artifacts / "new-room-dialog.png"))
    page.click("#nr-create")
    page.wait_for_url("**/rooms/basil-tent-5-x-5")  # the id follows the name
    wait_analysis_idle(page)
    doc = api(live_server, "/api/rooms/basil-tent-5-x-5")["room"]
    assert_allclose(
        [doc["width_m"], doc["length_m"], doc["height_m"]],
        [5 * M_PER_FT, 4 * M_PER_FT + 11.5 * M_PER_IN, 7 * M_PER_FT],
        atol=1e-4,
    )
    zone = doc["zones"][0]
    assert (zone["crop_id"], zone["stage"]) == ("basil", "vegetative")
    assert_allclose(
        [zone["width_m"], zone["length_m"], zone["canopy_height_m"]],
        [doc["width_m"], doc["length_m"], 1.5 * M_PER_FT],
        atol=1e-4,
    )
    assert [f["type_id"] for f in doc["fixtures"]] == ["panel-0.6"]
    assert page.evaluate("() => window.leafcast.analysis.fixture_zones.F1") == zone["id"]
    assert page.errors == []


def test_new_room_dialog_explains_a_bad_box_and_creates_nothing(live_server, page):
    before = api(live_server, "/api/rooms")
    page.goto(live_server)
    page.click("#new-room")
    page.fill("#nr-width", "five feet")
    page.fill("#nr-canopy", "9'")
    page.click("#nr-create")
    width_msg = page.locator("#nr-width + .field-msg")
    assert "not a length" in width_msg.inner_text()
    assert page.get_attribute("#nr-width", "aria-invalid") == "true"
    assert page.locator("#new-room-dialog").is_visible()
    page.fill("#nr-width", "1,370 mm")
    page.click("#nr-create")
    assert "below the ceiling" in page.locator("#nr-canopy + .field-msg").inner_text()
    assert api(live_server, "/api/rooms") == before


def test_a_room_edit_that_would_break_the_room_is_explained_and_not_applied(live_server, page, artifacts):
    room = fresh_room(live_server, name="Refused edit tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.click("#tab-room")
    canopy = before["room"]["zones"][0]["canopy_height_m"]
    page.fill("#r-h", f"{canopy * 100 - 5:.0f} cm")  # the ceiling under the canopy
    page.press("#r-h", "Tab")
    msg = page.locator("#r-h + .field-msg")
    assert "below the ceiling" in msg.inner_text() and "Not applied" in msg.inner_text()
    assert "pepper-pots" not in msg.inner_text().lower()  # names, never ids
    page.screenshot(path=str(artifacts / "editor-refused-edit.png"))
    page.wait_for_timeout(1200)
    assert api(live_server, f"/api/rooms/{room}") == before  # nothing saved
    assert page.locator("#save-status").inner_text().startswith("Saved")
    # The room stays editable: widening it works and carries the first zone with it.
    page.fill("#r-w", "5'")
    page.press("#r-w", "Tab")
    assert page.locator("#r-h + .field-msg").count() == 1  # the refused box keeps its message until fixed
    wait_saved(page, before["revision"])
    doc = api(live_server, f"/api/rooms/{room}")["room"]
    z0 = before["room"]["zones"][0]
    margin = before["room"]["width_m"] - z0["x_m"] - z0["width_m"]
    assert_allclose(doc["width_m"], 5 * M_PER_FT, atol=1e-4)
    assert_allclose(doc["zones"][0]["x_m"] + doc["zones"][0]["width_m"], 5 * M_PER_FT - margin, atol=1e-3)
    assert page.locator("#map-stale").is_hidden()
