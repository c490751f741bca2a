"""The new-fixture-type page in Chromium: import a file, fit a map, add the result to a room."""

import json

import pytest

from tests.browser.helpers import api, fresh_room
from tests.test_photometry import ies_text

pytestmark = pytest.mark.browser


def test_file_import_map_fit_and_add_to_room(live_server, page, artifacts, tmp_path):
    room = fresh_room(live_server, name="Fixture page test")
    ies = tmp_path / "panel.ies"
    ies.write_text(ies_text())
    page.goto(f"{live_server}/fixtures/new")
    page.set_input_files("#ph-file", str(ies))
    page.check("input[name=ph-unit][value=photon]")
    page.fill("#ph-power", "210")
    page.click("#ph-read")
    page.wait_for_selector("#ph-report table")
    assert "zonal method" in page.locator("#ph-report").inner_text()
    # A map that holds more photons than its claimed PPF is called impossible.
    rows = "\n".join(", ".join(str(300 + 40 * min(i, 6 - i, j, 6 - j)) for i in range(7)) for j in range(7))
    page.fill("#fit-readings", rows)
    page.fill("#fit-ppf", "100")
    page.fill("#fit-power", "100")
    page.click("#fit-run")
    page.wait_for_selector("#fit-findings li.impossible")
    assert "cannot hold more photons" in page.locator("#fit-findings").inner_text()
    page.fill("#fit-ppf", "600")
    page.fill("#fit-power", "")
    page.click("#fit-run")
    # No power given: nothing is offered and the page asks for it (no µmol/J is invented).
    page.wait_for_function("() => !document.querySelector('#fit-findings li.impossible')")
    page.wait_for_function("() => document.querySelector('#add-none').textContent.includes('does not guess the power')")
    assert page.locator("#add-fields").is_hidden()
    page.fill("#fit-power", "240")
    page.click("#fit-run")
    page.wait_for_selector("#add-fields", state="visible")
    offered = json.loads(page.locator("#ftype-json").inner_text())
    fitted_ppf = float(page.locator("#fit-report td").first.inner_text().split()[0].replace(",", ""))
    assert offered["power_w"] == 240
    assert offered["ppf_umol_s"] == pytest.approx(fitted_ppf, rel=0.01)  # the fit's PPF, not the claim
    page.screenshot(path=str(artifacts / "new-fixture-type.png"), full_page=True)
    page.select_option("#add-room", room)
    page.click("#add-go")
    page.wait_for_selector("#add-message a")
    types = [t["id"] for t in api(live_server, f"/api/rooms/{room}")["room"]["fixture_types"]]
    assert "fitted-map" in types
    assert page.errors == []
