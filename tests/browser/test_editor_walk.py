"""Small things found walking through the editor as a grower on a laptop (1024 × 768) in a real Chromium."""

import pytest

from tests.browser.helpers import api, fresh_room, wait_analysis_idle

pytestmark = pytest.mark.browser


def test_zero_hanging_height_is_refused_beside_its_box_and_nothing_is_sent(live_server, page):
    # The room file needs a hanging height above zero (app/room/models.py); the browser must say so beside the
    # box, in words, instead of sending the room and showing the server's field path in the banner.
    room = fresh_room(live_server, name="Zero height tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    page.click('[data-fixture-id="F1"]')
    page.fill("#f-h", "0")
    page.press("#f-h", "Tab")
    assert page.get_attribute("#f-h", "aria-invalid") == "true"
    msg = page.locator("#f-h + .field-msg").inner_text()
    assert "hanging height" in msg and "F1" in msg
    page.wait_for_timeout(600)
    assert page.locator("#banner").is_hidden()
    assert api(live_server, f"/api/rooms/{room}")["room"] == before["room"]
    assert page.errors == []


def test_hanging_grid_is_drawn_on_the_plan(live_server, page):
    # Rails (one pitch) are lines across the room, hook points (both pitches) are dots at the crossings: a
    # 4 ft tent with rails every 2 ft from 1 ft has two rails (1 ft, 3 ft); with 2 ft rows as well, 2 × 2 hooks.
    room = fresh_room(live_server, name="Drawn rails tent")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    assert page.locator("[data-hanging-grid]").count() == 0
    page.click("#tab-room")
    page.fill("#hg-ox", "1'")
    page.press("#hg-ox", "Tab")
    page.fill("#hg-px", "2'")
    page.press("#hg-px", "Tab")
    page.wait_for_function("() => document.querySelectorAll('[data-hanging-grid] line').length === 2")
    xs = page.eval_on_selector_all("[data-hanging-grid] line", "ls => ls.map((l) => +l.getAttribute('x1'))")
    room_box = page.eval_on_selector("#plan .room", "r => [+r.getAttribute('x'), +r.getAttribute('width')]")
    shares = sorted((x - room_box[0]) / room_box[1] for x in xs)
    assert shares == pytest.approx([0.25, 0.75], abs=0.01)
    page.fill("#hg-oy", "1'")
    page.press("#hg-oy", "Tab")
    page.fill("#hg-py", "2'")
    page.press("#hg-py", "Tab")
    page.wait_for_function("() => document.querySelectorAll('[data-hanging-grid] circle').length === 4")
    assert page.locator("[data-hanging-grid] line").count() == 0
    assert page.errors == []


def test_planner_boxes_and_answers_are_in_the_rooms_units_and_bad_boxes_are_named(live_server, page):
    # The hobby tent is an imperial room: the planner's lengths are typed and shown in feet and inches.
    room = fresh_room(live_server, name="Planner units tent")
    page.goto(f"{live_server}/rooms/{room}/plan")
    assert page.input_value("#clearance") == '6"' and "(ft-in)" in page.locator("label[for=clearance]").inner_text()
    page.fill("#gap", "five")
    page.fill("#budget", "0")
    page.click("#plan-run")
    assert "least gap" in page.locator("#gap + .field-msg").inner_text()
    assert "power budget" in page.locator("#budget + .field-msg").inner_text()
    assert "Not started" in page.locator("#plan-message").inner_text()
    assert page.locator("#plan-cancel").is_disabled()
    page.fill("#gap", '4"')
    page.fill("#budget", "")
    page.click("#plan-run")
    page.wait_for_selector("#proposals .proposal", timeout=90000)
    assert page.locator(".field-msg").count() == 0
    text = page.locator("#proposals").inner_text()
    assert "above the canopy" in text and " cm above" not in text and "″ above the canopy" in text
    page.locator("#proposals details").first.click()
    assert "(m)" not in page.locator("#proposals details").first.inner_text()
    assert page.errors == []


def test_map_fit_refuses_each_bad_box_by_name_and_sends_nothing(live_server, page):
    page.goto(f"{live_server}/fixtures/new")
    sent = []
    page.on("request", lambda r: sent.append(r.url) if "/api/photometry/fit" in r.url else None)
    page.fill("#fit-readings", "300 400 300\n400 500 400\n300 400 300")
    page.fill("#fit-cell", "0")
    page.fill("#fit-height", "-1 ft")
    page.click("#fit-power")
    page.keyboard.type("e")  # a number box holding text reads as blank: it must not pass as "no power given"
    page.click("#fit-run")
    assert "distance between readings" in page.locator("#fit-cell + .field-msg").inner_text()
    assert "hanging height" in page.locator("#fit-height + .field-msg").inner_text()
    assert "claimed power" in page.locator("#fit-power + .field-msg").inner_text()
    assert "Not fitted" in page.locator("#fit-message").inner_text()
    page.wait_for_timeout(300)
    assert sent == []
    page.fill("#fit-cell", "1 ft")
    page.fill("#fit-height", "18 in")
    page.fill("#fit-power", "")
    page.click("#fit-run")
    page.wait_for_function("() => document.getElementById('fit-message').textContent.startsWith('Fitted')")
    assert page.locator(".field-msg").count() == 0
    assert " m²" not in page.locator("#fit-findings").inner_text()  # the page is in feet and inches
    assert page.errors == []


def test_meter_page_names_the_box_a_bad_reading_set_or_spot_comes_from(live_server, page):
    # The server's own words were "Input should be greater than 0" and a regular expression; the page now says
    # which box is wrong, in the room's units, and sends nothing.
    room = fresh_room(live_server, name="Meter words tent")
    before = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}/meter")
    page.click("#rs-delete")
    assert "not saved yet" in page.locator("#rs-message").inner_text()
    page.fill("#rs-paste", "400 520 510\n480 640 630\n470 630 640")
    page.fill("#rs-sx", "0")
    page.click("#rs-save")
    assert "spacing across must be more than zero" in page.locator("#rs-message").inner_text()
    page.fill("#rs-sx", "1'")
    page.fill("#rs-id", "bad name!")
    page.click("#rs-save")
    assert "the name must start with a letter or digit" in page.locator("#rs-message").inner_text()
    page.fill("#rs-id", "first")
    page.fill("#rs-paste", "400 -5 510\n480 640 630\n470 630 640")
    page.click("#rs-save")
    assert "row 1, column 2: a reading cannot be negative" in page.locator("#rs-message").inner_text()
    page.fill("#spot-x", "9'")  # the tent's one zone is 4 ft wide
    page.click("#spot-run")
    msg = page.locator("#spot-message").inner_text()
    assert "outside Pepper pots" in msg and "9′ 0″" in msg and "tent-floor" not in msg
    assert api(live_server, f"/api/rooms/{room}")["revision"] == before["revision"]
    assert page.errors == []


def test_server_field_paths_are_said_with_the_rooms_names(live_server, page):
    # A refusal the browser did not foresee still reaches the grower in words: the item's name, not its index.
    room = fresh_room(live_server, "basement-two-benches", name="Field words basement")
    doc = api(live_server, f"/api/rooms/{room}")
    page.goto(f"{live_server}/rooms/{room}")
    said = page.evaluate(
        """async (doc) => {
          const api = await import("/static/js/lib/api.js");
          const body = { problems: [
            { field: "room.fixtures[0].hanging_height_m", message: "Input should be greater than 0" },
            { field: "room.zones[1].width_m", message: "Input should be greater than 0" },
            { field: "room.height_m", message: "Input should be greater than 0" },
            { field: "room.zones[0].cycle.steps[1].fixture_height_m", message: "Input should be greater than 0" },
            { field: "revision", message: "Field required" }] };
          return api.problemsText(body, 5, doc);
        }""",
        doc,
    )
    first, zone = doc["room"]["fixtures"][0]["id"], doc["room"]["zones"][1]["name"]
    assert said == (
        f"fixture {first}, hanging height: Input should be greater than 0; "
        f"zone {zone}, width: Input should be greater than 0; "
        "the room's height: Input should be greater than 0; "
        f"zone {doc['room']['zones'][0]['name']}, cycle, step 2, fixture height: Input should be greater than 0; "
        "revision: Field required"
    )


def test_plan_labels_stay_readable_on_a_laptop(live_server, browser):
    # The metric chamber is long and narrow: its plan reaches the bottom of the drawing, where the scale bar was
    # drawn through the width, and its panels hang over the zone's label.
    ctx = browser.new_context(viewport={"width": 1024, "height": 768})
    page = ctx.new_page()
    room = fresh_room(live_server, "research-chamber-metric", name="Label chamber")
    page.goto(f"{live_server}/rooms/{room}")
    wait_analysis_idle(page)
    bar = page.locator("#plan .scalebar").bounding_box()
    width = page.locator("#plan text.dim", has_text="width").bounding_box()
    apart = bar["y"] + bar["height"] < width["y"] or width["y"] + width["height"] < bar["y"]
    assert apart or bar["x"] + bar["width"] < width["x"]
    order = page.evaluate(
        "() => { const kids = [...document.getElementById('plan').children];"
        " return [kids.findIndex((k) => k.matches('g.fixtures')), kids.findIndex((k) => k.matches('text.zone-label'))]; }"
    )
    assert 0 <= order[0] < order[1]  # the zone's name is drawn over the fixtures
    ctx.close()


def test_year_page_refuses_text_in_a_number_box_and_a_negative_height_by_name(live_server, page):
    room = fresh_room(live_server, name="Year words tent")
    page.goto(f"{live_server}/rooms/{room}/year")
    page.get_by_role("button", name="Plan a cycle for Pepper pots").click()
    page.wait_for_selector("#cycle-steps-0 input")
    rev = api(live_server, f"/api/rooms/{room}")["revision"]
    page.locator("#cycle-steps-0 input[type=number]").nth(2).click()  # the step's dimming, blank: as set
    page.keyboard.type("e")
    page.get_by_role("button", name="Save the cycle").click()
    page.wait_for_selector("#banner:not([hidden])")
    assert "step 1 dimming: enter a number" in page.locator("#banner").inner_text()
    page.reload()
    page.wait_for_selector("#cycle-steps-0 input")
    page.locator("#cycle-steps-0 input:not([type])").nth(1).fill("-2'")  # the step's fixture height
    page.get_by_role("button", name="Save the cycle").click()
    page.wait_for_function("() => document.getElementById('banner').innerText.includes('fixture height')")
    assert "step 1 fixture height: must be more than zero" in page.locator("#banner").inner_text()
    assert api(live_server, f"/api/rooms/{room}")["revision"] == rev
    assert page.errors == []
