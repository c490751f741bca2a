"""The editor's layout at laptop, tablet and phone sizes, in a real Chromium: what must be on screen together."""

import pytest

from tests.browser.helpers import api, fresh_room, wait_analysis_idle, wait_saved

pytestmark = pytest.mark.browser

BOXES = """() => Object.fromEntries(['plan', 'map', 'figures'].map((id) => {
  const r = document.getElementById(id).getBoundingClientRect();
  return [id, {left: r.left, top: r.top, right: r.right, bottom: r.bottom}];
}).concat([['page', {width: document.documentElement.scrollWidth, height: document.documentElement.scrollHeight,
                     vw: innerWidth, vh: innerHeight}]]))"""


def inside(box, vw, vh):
    return box["left"] >= 0 and box["top"] >= 0 and box["right"] <= vw + 0.5 and box["bottom"] <= vh + 0.5


@pytest.mark.parametrize("size", [(1024, 768), (1280, 800), (1440, 900)])
@pytest.mark.parametrize("sample", ["hobby-tent-peppers", "basement-two-benches"])
def test_plan_and_map_both_on_screen_on_a_laptop(live_server, browser, artifacts, size, sample):
    w, h = size
    room = fresh_room(live_server, sample, name=f"Layout {w}x{h} {sample}")
    ctx = browser.new_context(viewport={"width": w, "height": h})
    page = ctx.new_page()
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    b = page.evaluate(BOXES)
    vw, vh = b["page"]["vw"], b["page"]["vh"]
    assert inside(b["plan"], vw, vh), b
    assert inside(b["map"], vw, vh), b
    assert b["page"]["width"] <= vw and b["page"]["height"] <= vh, "the editor page itself must not scroll"
    # Side by side, not on top of each other, each big enough to work in.
    assert b["plan"]["right"] <= b["map"]["left"] + 1, b
    assert b["plan"]["right"] - b["plan"]["left"] >= 300 and b["plan"]["bottom"] - b["plan"]["top"] >= 300, b
    assert b["map"]["right"] - b["map"]["left"] >= 300, b
    # The figures start on screen, under the map.
    assert b["figures"]["top"] < vh and b["figures"]["top"] >= b["map"]["bottom"] - 1, b
    page.screenshot(path=str(artifacts / f"editor-{sample}-{w}x{h}.png"))
    # Folding the tools away widens both.
    page.click("#drawer-toggle")
    wider = page.evaluate(BOXES)
    assert wider["plan"]["right"] - wider["plan"]["left"] > b["plan"]["right"] - b["plan"]["left"] + 50
    assert page.get_attribute("#drawer-toggle", "aria-expanded") == "false"
    ctx.close()


def touch_drag(page, x, y, dx, dy, steps=8):
    cdp = page.context.new_cdp_session(page)
    cdp.send("Input.dispatchTouchEvent", {"type": "touchStart", "touchPoints": [{"x": x, "y": y}]})
    for k in range(1, steps + 1):
        cdp.send(
            "Input.dispatchTouchEvent",
            {"type": "touchMove", "touchPoints": [{"x": x + dx * k / steps, "y": y + dy * k / steps}]},
        )
        page.wait_for_timeout(20)
    cdp.send("Input.dispatchTouchEvent", {"type": "touchEnd", "touchPoints": []})


def test_tablet_touch_drag_moves_a_fixture(live_server, browser, artifacts):
    room = fresh_room(live_server, name="Tablet touch tent")
    before = api(live_server, f"/api/rooms/{room}")
    ctx = browser.new_context(viewport={"width": 768, "height": 1024}, has_touch=True, is_mobile=True)
    page = ctx.new_page()
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    assert page.evaluate("() => document.documentElement.scrollWidth") <= 768
    box = page.locator('[data-fixture-id="F1"]').bounding_box()
    touch_drag(page, box["x"] + box["width"] / 2, box["y"] + box["height"] / 2, 50, 0)
    wait_saved(page, before["revision"])
    after = api(live_server, f"/api/rooms/{room}")
    assert after["room"]["fixtures"][0]["x_m"] > before["room"]["fixtures"][0]["x_m"] + 0.03
    page.screenshot(path=str(artifacts / "editor-tablet.png"), full_page=True)
    ctx.close()


def test_phone_has_no_sideways_scrolling(live_server, browser, artifacts):
    room = fresh_room(live_server, "basement-two-benches", name="Phone layout room")
    ctx = browser.new_context(viewport={"width": 390, "height": 844}, has_touch=True, is_mobile=True)
    page = ctx.new_page()
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    assert page.evaluate("() => document.documentElement.scrollWidth") <= 390
    # Every block is within the screen's width (tables scroll inside their own box when they must;
    # drawings clip their own contents).
    wide = page.evaluate("""() => [...document.querySelectorAll('main *')].filter((e) => {
        const r = e.getBoundingClientRect(); return r.width > 0 && r.right > innerWidth + 1 && !e.closest('.table-wrap, .tools') && !(e.ownerSVGElement);
      }).map((e) => e.tagName + '#' + e.id + '.' + e.className).slice(0, 5)""")
    assert wide == []
    # The tools open over the page and close again.
    page.click("#drawer-toggle")
    assert page.locator("#tools").is_visible()
    page.click("#drawer-close")
    assert not page.locator("#tools").is_visible()
    page.screenshot(path=str(artifacts / "editor-phone.png"), full_page=True)
    ctx.close()
