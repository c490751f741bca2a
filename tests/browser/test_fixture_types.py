"""Fixture types of the grower's own in the editor: typed from a spec sheet, checked, edited, replaced."""

import pytest
from numpy.testing import assert_allclose

from tests.browser.helpers import api, fresh_room, wait_analysis_idle, wait_saved

pytestmark = pytest.mark.browser

M_PER_FT, M_PER_IN, KG_PER_LB = 0.3048, 0.0254, 0.45359237  # exact (international yard and pound, 1959)


def test_type_in_a_fixture_from_its_spec_sheet(live_server, page, artifacts):
    room = fresh_room(live_server, name="Own fixture tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.click("#tab-types")
    page.click("#type-new")
    page.fill("#tf-name", "Garage six-bar")
    page.select_option("#tf-kind", "bar_array")
    page.fill("#tf-length", "3' 7 1/4\"")
    page.fill("#tf-width", "3' 3\"")
    page.fill("#tf-bars", "6")
    page.fill("#tf-barw", '1 1/4"')
    page.fill("#tf-ppf", "1700")
    page.fill("#tf-power", "280")  # 6.07 µmol/J: above the 5.85 µmol/J ceiling (every photon at 700 nm, Planck)
    page.fill("#tf-weight", "22 lb")
    page.click("#tf-save")
    page.wait_for_selector("#tf-findings li.impossible")
    assert "Planck" in page.locator("#tf-findings").inner_text()
    assert page.locator("#tf-ppf + .field-msg").is_visible()
    assert not any(t["name"] == "Garage six-bar" for t in page.evaluate("() => window.leafcast.doc.room.fixture_types"))
    page.fill("#tf-power", "640")  # 2.66 µmol/J
    page.click("#tf-save")
    page.wait_for_selector("#tf-findings li.info")
    rev = wait_saved(page, before["revision"])
    t = next(
        t for t in api(live_server, f"/api/rooms/{room}")["room"]["fixture_types"] if t["name"] == "Garage six-bar"
    )
    assert t["id"] == "garage-six-bar"
    assert_allclose(
        [t["geometry"]["length_m"], t["geometry"]["width_m"], t["geometry"]["bar_width_m"]],
        [3 * M_PER_FT + 7.25 * M_PER_IN, 3 * M_PER_FT + 3 * M_PER_IN, 1.25 * M_PER_IN],
        atol=1e-4,
    )
    assert_allclose(t["weight_kg"], 22 * KG_PER_LB, atol=1e-4)
    page.screenshot(path=str(artifacts / "editor-fixture-type.png"))
    # The library lists it with its efficacy.
    assert "2.66 µmol/J" in page.locator('#type-list tr[data-type-id="garage-six-bar"]').inner_text()
    # A type in use is deleted only by replacing it.
    page.click('#type-list [data-del="bararray-4x0.6"]')
    page.select_option("#replace-with", "garage-six-bar")
    page.click("#replace-go")  # two 1.1 m fixtures side by side do not fit a 4 ft tent: refused, explained
    assert "beyond the walls" in page.locator("#replace-with + .field-msg").inner_text()
    page.select_option("#replace-with", "panel-0.6")
    page.click("#replace-go")
    wait_saved(page, rev)
    doc = api(live_server, f"/api/rooms/{room}")["room"]
    assert {f["type_id"] for f in doc["fixtures"]} == {"panel-0.6"}
    assert not any(t["id"] == "bararray-4x0.6" for t in doc["fixture_types"])
    assert page.errors == []
