"""Small helpers for the browser tests: make a fresh room on the live server, read it back."""

from __future__ import annotations

import json
import urllib.request

from tests.conftest import sample_doc


def api(base: str, path: str, method: str = "GET", body: dict | None = None) -> dict:
    data = json.dumps(body).encode() if body is not None else None
    req = urllib.request.Request(base + path, data=data, method=method, headers={"Content-Type": "application/json"})
    with urllib.request.urlopen(req, timeout=30) as r:
        return json.loads(r.read() or b"null")


def fresh_room(base: str, sample: str = "hobby-tent-peppers", name: str | None = None) -> str:
    doc = sample_doc(sample)
    if name:
        doc["room"]["name"] = name
    return api(base, "/api/rooms", "POST", doc)["id"]


def wait_saved(page, revision_above: int, timeout_ms: int = 15000) -> int:
    page.wait_for_function(
        "r => { const m = document.getElementById('save-status').textContent.match(/Saved · revision (\\d+)/);"
        " return m && Number(m[1]) > r; }",
        arg=revision_above,
        timeout=timeout_ms,
    )
    return int(page.locator("#save-status").inner_text().rsplit(" ", 1)[1])


def wait_analysis_idle(page) -> None:
    """Ready, no analysis in flight or queued, and the last answer painted (figures and map)."""
    page.wait_for_timeout(150)
    page.wait_for_function("() => window.leafcast && window.leafcast.ready && !window.leafcast.analysing")


def drag_fixture(page, fixture_id: str, dx_px: float, dy_px: float, steps: int = 12) -> None:
    box = page.locator(f'[data-fixture-id="{fixture_id}"]').bounding_box()
    x, y = box["x"] + box["width"] / 2, box["y"] + box["height"] / 2
    page.mouse.move(x, y)
    page.mouse.down()
    for k in range(1, steps + 1):
        page.mouse.move(x + dx_px * k / steps, y + dy_px * k / steps)
        page.wait_for_timeout(15)
    page.mouse.up()
