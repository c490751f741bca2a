"""Each wall its own finish, set in the editor's Room tab: saved in room.surface_finishes, analysed, printed."""

import pytest
from numpy.testing import assert_allclose

from tests.browser.helpers import api, fresh_room, wait_analysis_idle, wait_saved

pytestmark = pytest.mark.browser


def zone_avg(analysis: dict) -> float:
    return analysis["zones"][0]["ppfd"]["avg"]


def test_ceiling_absorbing_and_left_wall_open_are_saved_analysed_and_printed(live_server, page, artifacts):
    # The sample tent has reflective film (specular, 0.95) on every wall and the ceiling.
    room = fresh_room(live_server, name="Per-wall finish tent")
    before = api(live_server, f"/api/rooms/{room}")
    assert before["room"]["surface_finishes"] == {} and before["room"]["wall_finish"]["kind"] == "specular"
    base = api(live_server, f"/api/rooms/{room}/analysis")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.locator("#tab-room").click()
    assert page.locator("input[name=walls-mode][value=same]").is_checked()
    assert page.locator("#r-surfaces").is_hidden() and page.locator("#r-finish").is_visible()

    # Each its own starts from what every surface has: the same finishes written out change no figure.
    page.locator("input[name=walls-mode][value=each]").check()
    rev = wait_saved(page, before["revision"])
    assert page.locator("#r-surfaces").is_visible() and page.locator("#r-finish").is_hidden()
    doc = api(live_server, f"/api/rooms/{room}")
    film = {"kind": "specular", "reflectance": 0.95, "label": "Reflective film"}
    assert doc["room"]["surface_finishes"] == {s: film for s in ("left", "right", "front", "back", "ceiling")}
    same = api(live_server, f"/api/rooms/{room}/analysis")
    assert_allclose(zone_avg(same), zone_avg(base), rtol=1e-9)

    page.locator("#sf-ceiling-kind").select_option("absorbing")
    rev = wait_saved(page, rev)
    page.locator("#sf-left-kind").select_option("open")
    rev = wait_saved(page, rev)
    wait_analysis_idle(page)
    assert page.locator("#sf-left-refl").is_disabled()
    saved = api(live_server, f"/api/rooms/{room}")["room"]
    assert saved["surface_finishes"]["ceiling"]["kind"] == "absorbing"
    assert saved["surface_finishes"]["left"]["kind"] == "open"
    assert saved["surface_finishes"]["right"] == film
    assert saved["open_sides"] == ["left"]  # the plan draws the open wall dashed, as for a listed open side
    # Taking away two mirrors can only take light away (every reflection adds flux; nothing else changed).
    after = api(live_server, f"/api/rooms/{room}/analysis")
    assert zone_avg(after) < zone_avg(base) - 1, (zone_avg(after), zone_avg(base))
    shown = float(page.locator('[data-figure="ppfd-avg"]').first.inner_text())
    assert_allclose(shown, round(zone_avg(after)), atol=0.5)
    page.locator("#panel-room").screenshot(path=str(artifacts / "editor-surface-finishes.png"))

    # A reflectance out of range is refused beside its box and changes nothing.
    page.locator("#sf-right-refl").fill("150")
    page.locator("#sf-right-refl").press("Enter")
    msg = page.locator("#sf-right-refl + .field-msg")
    assert "between 0 and 100" in msg.inner_text()
    page.wait_for_timeout(1500)  # longer than the autosave delay
    assert api(live_server, f"/api/rooms/{room}")["room"] == saved
    page.locator("#sf-right-refl").fill("80")
    page.locator("#sf-right-refl").press("Enter")
    rev = wait_saved(page, rev)
    assert msg.count() == 0
    assert api(live_server, f"/api/rooms/{room}")["room"]["surface_finishes"]["right"]["reflectance"] == 0.8

    # The sheet states each surface's finish where it states the walls.
    sheet = page.context.new_page()
    sheet.goto(f"{live_server}/rooms/{room}/sheet")
    walls = sheet.locator("dt:text-is('Walls') + dd").inner_text()
    assert "left: open" in walls and "ceiling: absorbing" in walls and "right: specular, 0.8" in walls, walls
    assert "front, back: Reflective film (specular, 0.95)" in walls, walls
    sheet.close()

    # Undo takes back one edit at a time; all the same puts the room-wide finish back.
    page.locator("#undo").click()
    rev = wait_saved(page, rev)
    assert api(live_server, f"/api/rooms/{room}")["room"] == saved
    page.locator("input[name=walls-mode][value=same]").check()
    rev = wait_saved(page, rev)
    plain = api(live_server, f"/api/rooms/{room}")["room"]
    assert plain["surface_finishes"] == {} and plain["open_sides"] == ["left"]
    assert page.locator("#r-open input[value=left]").is_checked()
    page.locator("#undo").click()
    wait_saved(page, rev)
    assert api(live_server, f"/api/rooms/{room}")["room"] == saved
    assert page.errors == []
