"""The meter page in Chromium: paste a grid of readings, compare, apply the fitted factor, age the fixtures,
make a fixture card."""

import pytest

from tests.browser.helpers import api, fresh_room

pytestmark = pytest.mark.browser


def model_grid(base, room, factor):
    z = api(base, f"/api/rooms/{room}/analysis")["zones"][0]["grid"]
    xs, ys = z["x_m"], z["y_m"]

    def at(x, y):
        j = min(range(len(ys)), key=lambda k: abs(ys[k] - y))
        i = min(range(len(xs)), key=lambda k: abs(xs[k] - x))
        return z["ppfd"][j][i]

    return [[round(factor * at(0.1524 + c * 0.3048, 0.1524 + r * 0.3048)) for c in range(4)] for r in range(4)]


def test_paste_compare_apply_age_and_card(live_server, page, artifacts):
    room = fresh_room(live_server, name="Meter test tent")
    rows = model_grid(live_server, room, 0.85)
    rows[2][1] = 40  # a slip of the hand: flagged as an outlier
    page.goto(f"{live_server}/rooms/{room}/meter")
    assert page.locator("#set-editor").get_attribute("open") is not None  # no set yet: the editor is open
    page.fill("#rs-id", "first-check")
    page.fill("#rs-ox", "6 in")
    page.fill("#rs-oy", "6")
    page.fill("#rs-sx", "1 ft")
    page.fill("#rs-sy", "12 in")
    page.fill("#rs-paste", "\n".join("\t".join(str(v) for v in r) for r in rows))
    page.click("#rs-save")
    page.wait_for_function("() => document.getElementById('rs-message').textContent.startsWith('Saved')")
    stored = api(live_server, f"/api/rooms/{room}")["room"]["readings"][0]
    assert stored["grid"]["values"][0] == rows[0] and abs(stored["grid"]["spacing_x_m"] - 0.3048) < 1e-9

    page.click("#compare-run")
    page.wait_for_selector("#fit-table")
    assert "#10" in page.locator("#outliers").inner_text()  # row 3, column 2 is the 10th reading
    factor = float(page.locator("#fit-table tbody td").nth(1).inner_text())
    assert abs(factor - 0.85) < 0.02
    page.wait_for_function("() => document.querySelector('#residual-map .main-svg') !== null")
    page.screenshot(path=str(artifacts / "meter-compare.png"), full_page=True)
    page.click("#apply-fit")
    page.wait_for_function("() => document.getElementById('apply-message').textContent.includes('saved')")
    ppf = api(live_server, f"/api/rooms/{room}")["room"]["fixture_types"][0]["ppf_umol_s"]
    assert abs(ppf - 0.85 * 650) < 15

    # A saved set loads back into the form in a form that saves again unchanged.
    page.select_option("#set-pick", "first-check")
    page.click("#set-editor summary")
    page.click("#rs-save")
    page.wait_for_function("() => document.getElementById('rs-message').textContent.startsWith('Saved first-check')")
    again = api(live_server, f"/api/rooms/{room}")["room"]["readings"][0]
    assert again["grid"]["values"] == stored["grid"]["values"]
    for k in ("origin_x_m", "origin_y_m", "spacing_x_m", "spacing_y_m"):
        assert abs(again["grid"][k] - stored["grid"][k]) < 1e-4  # to the 0.1 inch the form shows

    # A grid that does not fit the tent is refused with the reason.
    page.select_option("#set-pick", "")
    page.fill("#rs-paste", "1 2 3 4 5 6")
    page.click("#rs-save")
    page.wait_for_function("() => document.getElementById('rs-message').textContent.includes('does not fit')")

    page.fill("#age-hours", "18000")
    page.fill("#maint-table input.m-pct", "90")
    page.fill("#maint-table input.m-hours", "36000")
    page.click("#age-save")
    page.wait_for_function(
        "() => document.getElementById('age-message').textContent.includes('maintained at 18,000 h')"
    )
    assert "94.9 % of rated" in page.locator("#maint-table").inner_text()  # √0.9 = 0.9487

    page.select_option("#card-type", "panel-0.6")
    page.fill("#card-height", "18 in")
    page.click("#card-run")
    page.wait_for_selector("#card-body table.squares")
    assert page.locator("#card-body table.squares tbody tr").count() == 5
    assert "5′ 0″ × 5′ 0″" in page.locator("#card-body").inner_text()
    page.emulate_media(media="print")
    assert not page.locator("#readings-title").is_visible() and page.locator("#card-title").is_visible()
    page.screenshot(path=str(artifacts / "meter-card-print.png"), full_page=True)
    assert page.errors == []


def test_nested_squares_from_a_drawn_area(live_server, page):
    room = fresh_room(live_server, name="Squares from here tent")
    page.goto(f"{live_server}/rooms/{room}")
    page.wait_for_function("() => window.leafcast && window.leafcast.ready")
    page.check("#area-mode")
    box = page.locator("#plan .zone").first.bounding_box()
    x, y = box["x"] + box["width"] * 0.4, box["y"] + box["height"] * 0.4
    page.mouse.move(x, y)
    page.mouse.down()
    page.mouse.move(x + 40, y + 30, steps=5)
    page.mouse.up()
    page.wait_for_selector("#regions a.squares-link")
    page.click("#regions a.squares-link")
    page.wait_for_selector("#spot-body table.squares")
    assert page.locator("#spot-body tbody tr").count() == 5
    assert "Centred at" in page.locator("#spot-message").inner_text()
    assert page.errors == []


def test_editor_says_when_figures_are_maintained(live_server, page):
    room = fresh_room(live_server, name="Aged tent")
    doc = api(live_server, f"/api/rooms/{room}")
    body = {
        "revision": doc["revision"],
        "output_age": {"hours_in_service_h": 20000, "dirt_factor": 0.95},
        "maintenance": {"bararray-4x0.6": {"rated_percent": 90, "rated_hours_h": 36000}},
    }
    api(live_server, f"/api/rooms/{room}/output-age", "POST", body)
    page.goto(f"{live_server}/rooms/{room}")
    page.wait_for_function("() => window.leafcast && window.leafcast.ready")
    page.wait_for_selector("#figures .output-basis")
    assert "maintained at 20,000 h in service, dirt factor 0.95" in page.locator("#figures .output-basis").inner_text()
    assert page.errors == []


def test_measured_maintenance_points_are_fitted_and_held_at_six_times(live_server, page):
    room = fresh_room(live_server, name="Measured maintenance tent")
    page.goto(f"{live_server}/rooms/{room}/meter")
    page.fill("#age-hours", "50000")
    page.click("#maint-points-box summary")
    # The hand-worked TM-21 example of tests/engine/test_maintenance.py: a 6,000 h test.
    page.fill("#mp-paste", "0, 100\n1000, 99.5\n2000, 99.0\n3000, 98.6\n4000, 98.1\n5000, 97.7\n6000, 97.2")
    page.click("#age-save")
    page.wait_for_function("() => document.getElementById('age-message').textContent.startsWith('Saved')")
    t = api(live_server, f"/api/rooms/{room}")["room"]["fixture_types"][0]
    assert len(t["maintenance"]["points"]) == 7 and t["maintenance"]["points"][-1]["share"] == 0.972
    text = page.locator("#maint-table").inner_text()
    # Held at 36,000 h: 0.999499 exp(−4.61924e-6 × 36,000) = 84.6 %; L70 reported as "> 36000 h".
    assert "84.6 % of rated (held at the projection limit)" in text and "L70 > 36000 h" in text
    assert page.errors == []
