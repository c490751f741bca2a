"""The cycle-and-year page in Chromium: charts drawn, a step edited and saved, the change undone."""

import pytest

from tests.browser.helpers import api, fresh_room

pytestmark = pytest.mark.browser


def test_year_page_edit_save_and_undo(live_server, page, artifacts):
    room = fresh_room(live_server, sample="greenhouse-lettuce-bench", name="Year page test bench")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}/year")
    for plot in ("cycle-plot-0", "gh-plot-0", "gh-energy-0", "tariff-plot", "payback-plot"):
        page.wait_for_selector(f"#{plot} .main-svg", timeout=30000)
    page.screenshot(path=str(artifacts / "year.png"), full_page=True)
    page.locator("section[aria-labelledby=cycle-title]").screenshot(path=str(artifacts / "year-cycle.png"))
    assert "Pays back in" in page.locator("#payback-table").inner_text()
    # Metric room: heights are shown as they can be typed back (lib/units.js lengthInput). Lower the last step's
    # dimming and save: the height box's text is read back as the same height.
    last = page.locator("#cycle-steps-0 tr[data-step='2']")
    assert last.locator("[name=fixture_height_m]").input_value() == "1.7 m"
    last.locator("[name=dimming_pct]").fill("55")
    # Wait for the save itself: the page reloads onto the same address, so waiting for the URL proves nothing.
    with page.expect_response(lambda r: r.request.method == "PUT" and r.url.endswith(f"/api/rooms/{room}")) as put:
        page.click("#cycle-steps-0 [data-save-cycle]")
    assert put.value.status == 200
    page.wait_for_url(f"**/rooms/{room}/year", wait_until="load")
    page.wait_for_selector("#cycle-plot-0 .main-svg", timeout=30000)
    saved = api(live_server, f"/api/rooms/{room}")
    assert saved["revision"] == before["revision"] + 1
    assert saved["room"]["zones"][0]["cycle"]["steps"][2]["dimming_pct"] == 55
    height_before = before["room"]["zones"][0]["cycle"]["steps"][2]["fixture_height_m"]
    assert saved["room"]["zones"][0]["cycle"]["steps"][2]["fixture_height_m"] == pytest.approx(height_before, abs=1e-9)
    # A bad value is refused in the page with the field named, and nothing is saved.
    page.locator("#cycle-steps-0 tr[data-step='1'] [name=canopy_height_m]").fill("tall")
    page.click("#cycle-steps-0 [data-save-cycle]")
    page.wait_for_selector("#banner:not([hidden])")
    assert "step 2 canopy height" in page.locator("#banner").inner_text()
    assert api(live_server, f"/api/rooms/{room}")["revision"] == saved["revision"]
    page.reload()
    page.wait_for_selector("#undo:not([disabled])")
    page.click("#undo")
    page.wait_for_function(
        "r => fetch(location.pathname.replace('/rooms/', '/api/rooms/').replace('/year', ''))"
        ".then(x => x.json()).then(d => d.revision > r)",
        arg=saved["revision"],
        timeout=30000,
    )
    page.wait_for_load_state("load")
    restored = api(live_server, f"/api/rooms/{room}")
    assert restored["room"]["zones"][0]["cycle"] == before["room"]["zones"][0]["cycle"]
    # The one change is undone: nothing is left to undo (an undo is not itself pushed as a change).
    page.wait_for_selector("#undo[disabled]", state="attached")
    assert page.errors == []


def test_year_page_adds_a_tariff_and_a_cycle(live_server, page):
    room = fresh_room(live_server, name="Year page tent")
    page.goto(f"{live_server}/rooms/{room}/year")
    page.click("#tariff-new")
    page.wait_for_selector("#tariff-plot .main-svg", timeout=30000)
    assert "Saving for the room" in page.locator("#tariff-table").inner_text()
    page.click("[data-new-cycle='tent-floor']")
    page.wait_for_selector("#cycle-plot-0 .main-svg", timeout=30000)
    doc = api(live_server, f"/api/rooms/{room}")
    assert doc["room"]["schedule"]["tariff"]["windows"][0]["peak"] is True
    assert doc["room"]["zones"][0]["cycle"]["weeks"] == 6
    assert page.errors == []


def test_apply_every_fix_puts_every_week_in_the_band(live_server, page):
    room = fresh_room(live_server, sample="greenhouse-lettuce-bench", name="Year page fixes")
    page.goto(f"{live_server}/rooms/{room}/year?format=json")
    before = api(live_server, f"/rooms/{room}/year?format=json")["cycles"][0]
    assert before["flagged"] > 0 and before["fixed"] == before["flagged"]
    page.goto(f"{live_server}/rooms/{room}/year")
    page.click("[data-apply-fixes]")
    page.wait_for_function(
        "() => !document.querySelector('[data-apply-fixes]') && document.querySelector('#cycle-plot-0 .main-svg')",
        timeout=30000,
    )
    after = api(live_server, f"/rooms/{room}/year?format=json")["cycles"][0]
    assert after["flagged"] == 0
    # Weeks that were in the band keep their settings.
    for a, b in zip(before["weeks"], after["weeks"], strict=True):
        if not a["status"]:
            assert (a["dimming_pct"], a["photoperiod_h"], a["fixture_height_m"]) == (
                b["dimming_pct"],
                b["photoperiod_h"],
                b["fixture_height_m"],
            )
    assert page.errors == []
