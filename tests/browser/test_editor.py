"""The editor in a real Chromium against a real uvicorn: drag, undo, units, bad files, conflicts."""

import json
import re

import pytest
from numpy.testing import assert_allclose

from tests.browser.helpers import api, drag_fixture, fresh_room, wait_analysis_idle, wait_saved
from tests.conftest import ROOT

pytestmark = pytest.mark.browser


def shown_avg(page) -> float:
    return float(page.locator('[data-figure="ppfd-avg"]').first.inner_text())


def map_values(page):
    return page.evaluate("() => document.getElementById('map').data[0].z")


def test_drag_moves_fixture_updates_map_and_undo_restores(live_server, page, artifacts):
    room = fresh_room(live_server, name="Drag test tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    z0, avg0 = map_values(page), shown_avg(page)
    f0 = before["room"]["fixtures"][0]
    drag_fixture(page, "F1", 60, -40)
    rev = wait_saved(page, before["revision"])
    wait_analysis_idle(page)
    after = api(live_server, f"/api/rooms/{room}")
    f1 = after["room"]["fixtures"][0]
    # Right on screen is +x; up on screen is towards the back wall, +y.
    assert f1["x_m"] > f0["x_m"] + 0.05 and f1["y_m"] > f0["y_m"] + 0.03, (f0, f1)
    z1 = map_values(page)
    assert z1 != z0
    # The figure shown equals the engine's own answer for the stored position.
    engine = api(live_server, f"/api/rooms/{room}/analysis")
    assert_allclose(shown_avg(page), round(engine["zones"][0]["ppfd"]["avg"]), atol=0.5)
    assert z1 == engine["zones"][0]["grid"]["ppfd"]
    page.screenshot(path=str(artifacts / "editor-after-drag.png"))
    # Undo restores the position, the map and the figures.
    page.locator("#plan").focus()
    page.keyboard.press("Control+z")
    wait_saved(page, rev)
    wait_analysis_idle(page)
    restored = api(live_server, f"/api/rooms/{room}")["room"]["fixtures"][0]
    assert (restored["x_m"], restored["y_m"]) == (f0["x_m"], f0["y_m"])
    assert map_values(page) == z0 and shown_avg(page) == avg0
    assert page.errors == []


def test_unit_switch_changes_what_is_shown_not_the_file(live_server, page, artifacts):
    room = fresh_room(live_server, name="Units test tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.locator('[data-fixture-id="F1"]').click()
    inches = page.locator("#f-x").input_value()
    room_w_imperial = page.locator("#r-w").input_value()
    x_m = before["room"]["fixtures"][0]["x_m"]
    # Feet and inches to the eighth, as typed: 1' 0 3/8" or 8 1/2".
    assert re.fullmatch(r"(\d+' )?\d+( \d/\d)?\"|(\d+' )?\d/\d\"", inches), inches
    page.locator("input[name=units][value=metric]").check()
    cm = page.locator("#f-x").input_value()
    assert cm.endswith(" cm") and abs(float(cm.split()[0]) - 100 * x_m) <= 0.05, (cm, x_m)
    assert page.locator("#r-w").input_value() != room_w_imperial
    assert "cm" in page.locator("#plan").inner_html() or " m" in page.locator("#plan").inner_html()
    page.screenshot(path=str(artifacts / "editor-metric.png"))
    page.wait_for_timeout(1500)  # longer than the autosave delay
    assert api(live_server, f"/api/rooms/{room}") == before
    # The choice is this browser's and survives a reload.
    page.reload()
    wait_analysis_idle(page)
    assert page.locator("input[name=units][value=metric]").is_checked()


def test_corrupt_file_shows_error_and_changes_nothing(live_server, page, artifacts, tmp_path):
    room = fresh_room(live_server, name="Corrupt import test")
    before_room = api(live_server, f"/api/rooms/{room}")
    before_list = api(live_server, "/api/rooms")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    bad = tmp_path / "bad.leafcast.json"
    doc = json.loads((ROOT / "sample_rooms" / "hobby-tent-peppers.json").read_text())
    doc["room"]["fixtures"][0]["dimming_pct"] = 500
    bad.write_text(json.dumps(doc)[:-40])  # truncated as well as wrong
    page.set_input_files("#open-file", str(bad))
    page.wait_for_selector("#banner:not([hidden])")
    text = page.locator("#banner").inner_text()
    assert "was not opened" in text and "unchanged" in text
    page.screenshot(path=str(artifacts / "editor-bad-file.png"))
    assert api(live_server, f"/api/rooms/{room}") == before_room
    assert api(live_server, "/api/rooms") == before_list


def test_two_pages_produce_a_visible_conflict(live_server, browser, artifacts):
    room = fresh_room(live_server, name="Conflict test tent")
    start = api(live_server, f"/api/rooms/{room}")["revision"]
    ctx = browser.new_context(viewport={"width": 1280, "height": 800})
    a, b = ctx.new_page(), ctx.new_page()
    for p in (a, b):
        p.goto(f"{live_server}/rooms/{room}")
        wait_analysis_idle(p)
    drag_fixture(a, "F1", 40, 0)
    wait_saved(a, start)
    drag_fixture(b, "F2", -30, 0)
    b.wait_for_selector("#banner:not([hidden])", timeout=15000)
    assert "Someone else saved" in b.locator("#banner").inner_text()
    assert "Conflict" in b.locator("#save-status").inner_text()
    b.screenshot(path=str(artifacts / "editor-conflict.png"))
    stored = api(live_server, f"/api/rooms/{room}")
    a_state = a.evaluate("() => window.leafcast.doc.room.fixtures[0].x_m")
    assert stored["room"]["fixtures"][0]["x_m"] == a_state  # page A's work is kept
    # Page B's work is not lost either: it is still on screen, and saving it is the grower's choice.
    b_state = b.evaluate("() => window.leafcast.doc.room.fixtures[1].x_m")
    assert b_state != stored["room"]["fixtures"][1]["x_m"]
    b.get_by_role("button", name="Save mine over theirs").click()
    wait_saved(b, stored["revision"])
    assert api(live_server, f"/api/rooms/{room}")["room"]["fixtures"][1]["x_m"] == b_state
    ctx.close()


def test_keyboard_nudge_and_add_fixture(live_server, page):
    room = fresh_room(live_server, name="Keyboard test tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.locator('[data-fixture-id="F2"]').click()
    page.keyboard.press("ArrowLeft")
    page.keyboard.press("ArrowLeft")
    rev = wait_saved(page, before["revision"])
    moved = api(live_server, f"/api/rooms/{room}")["room"]["fixtures"][1]
    assert_allclose(moved["x_m"], before["room"]["fixtures"][1]["x_m"] - 2 * 0.0254, atol=1e-4)
    page.select_option("#add-type", "spot-90")
    page.locator("#add-fixture").click()
    wait_saved(page, rev)
    doc = api(live_server, f"/api/rooms/{room}")
    assert len(doc["room"]["fixtures"]) == 3 and any(t["id"] == "spot-90" for t in doc["room"]["fixture_types"])


def test_drawn_area_gets_its_own_figures(live_server, page):
    room = fresh_room(live_server, name="Area test tent")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.check("#area-mode")
    box = page.locator("#plan .zone").first.bounding_box()
    x, y = box["x"] + box["width"] * 0.4, box["y"] + box["height"] * 0.4
    page.mouse.move(x, y)
    page.mouse.down()
    page.mouse.move(x + 40, y + 30, steps=5)
    page.mouse.up()
    page.wait_for_selector("#regions table tbody tr th")
    assert "Area 1" in page.locator("#regions").inner_text()
    regions = page.evaluate("() => window.leafcast.analysis.regions")
    assert regions and regions[0]["ppfd"]["avg"] > 0
    page.click("#clear-areas")
    page.wait_for_function("() => document.getElementById('regions').innerText === ''")


def test_editing_a_crop_band_makes_the_rooms_own_crop(live_server, page):
    room = fresh_room(live_server, name="Band test tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.click("#tab-zones")
    page.fill("#z0-dli_min", "15")
    page.press("#z0-dli_min", "Tab")
    wait_saved(page, before["revision"])
    doc = api(live_server, f"/api/rooms/{room}")
    assert doc["room"]["zones"][0]["crop_id"] == "own-pepper"
    assert doc["custom_crops"][0]["stages"]["flowering"]["dli_min"] == 15
    assert page.evaluate("() => window.leafcast.analysis.zones[0].target.dli_min") == 15


def test_drag_paints_a_preview_that_plotly_replaces_on_drop(live_server, page):
    room = fresh_room(live_server, name="Preview test tent")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    box = page.locator('[data-fixture-id="F1"]').bounding_box()
    x, y = box["x"] + box["width"] / 2, box["y"] + box["height"] / 2
    page.mouse.move(x, y)
    page.mouse.down()
    page.mouse.move(x + 20, y, steps=4)
    page.wait_for_function(
        "() => { const c = document.getElementById('map-preview'); return c && c.style.display === 'block'; }"
    )
    # The preview lies over plotly's own axes area, in plotly's colour range.
    assert page.evaluate(
        "() => { const c = document.getElementById('map-preview'), gd = document.getElementById('map');"
        " return Math.abs(c.width - gd._fullLayout.width) < 1 && Math.abs(c.height - gd._fullLayout.height) < 1; }"
    )
    page.mouse.up()
    page.wait_for_function("() => document.getElementById('map-preview').style.display === 'none'")


def test_drag_preview_is_composed_in_the_browser_from_footprints(live_server, page):
    room = fresh_room(live_server, name="Composed preview tent")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    with page.expect_response(lambda r: "/api/footprints" in r.url):
        page.locator('[data-fixture-id="F1"]').click()
    wait_analysis_idle(page)
    answers = page.evaluate("() => window.leafcast.timing.length")
    box = page.locator('[data-fixture-id="F1"]').bounding_box()
    x, y = box["x"] + box["width"] / 2, box["y"] + box["height"] / 2
    page.mouse.move(x, y)
    page.mouse.down()
    for k in range(1, 16):
        page.mouse.move(x + 3 * k, y - 2 * k)
        page.wait_for_timeout(20)
    page.wait_for_function("() => window.leafcast.previewFrames.length > 3")
    # No round trip while dragging: the map follows from the footprints alone.
    assert page.evaluate("() => window.leafcast.timing.length") == answers
    preview_mean = page.evaluate("() => window.leafcast.previewMean")
    page.mouse.up()
    page.wait_for_function("n => window.leafcast.timing.length > n", arg=answers)
    wait_analysis_idle(page)
    exact = page.evaluate(
        "() => { const z = window.leafcast.analysis.zones[0].grid.ppfd.flat(); return z.reduce((a, b) => a + b, 0) / z.length; }"
    )
    # Walls return light the preview keeps from before the move; the direct part moves exactly (to half a cell).
    assert abs(preview_mean - exact) < 0.03 * exact, (preview_mean, exact)
    assert page.evaluate("() => document.getElementById('map-preview').style.display") == "none"
    assert page.errors == []


def test_tilt_and_aim_fields_edit_the_fixture(live_server, page):
    room = fresh_room(live_server, name="Tilt test tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    avg0 = shown_avg(page)
    page.locator('[data-fixture-id="F1"]').click()
    assert page.locator("#f-tilt").input_value() == "0" and page.locator("#f-aim").is_disabled()
    page.fill("#f-tilt", "200")
    page.locator("#f-tilt").dispatch_event("change")
    assert "tilt must be between 0 and 180" in page.locator("#sel-fields").inner_text()
    page.fill("#f-tilt", "180")
    page.locator("#f-tilt").dispatch_event("change")
    rev = wait_saved(page, before["revision"])
    page.fill("#f-aim", "90")
    page.locator("#f-aim").dispatch_event("change")
    wait_saved(page, rev)
    f1 = api(live_server, f"/api/rooms/{room}")["room"]["fixtures"][0]
    assert (f1["tilt_deg"], f1["aim_deg"]) == (180, 90)
    # Facing the ceiling, that fixture's light reaches the canopy only by way of the tent's walls and ceiling.
    wait_analysis_idle(page)
    assert shown_avg(page) < avg0
