"""A hostile page on another loopback origin tries every way a browser lets it write to Leafcast.

Real Chromium opens a page served by a second tiny HTTP server (another port on 127.0.0.1 is another origin,
and for the browser the same site). The page tries a text/plain form POST, fetch with mode 'no-cors' (POST to
create, import and analyse), navigator.sendBeacon, a cross-origin JSON fetch (preflighted) and framing the
editor. Leafcast's data folder must be byte for byte unchanged, and each write must have reached the server and
been refused (Playwright sees the real status of an opaque response).
"""

from __future__ import annotations

import json
import threading
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer

import pytest

from tests.conftest import _free_port, sample_doc
from tests.servers import folder_snapshot, start_server, stop_server

pytestmark = pytest.mark.browser

HOSTILE_HTML = """<!doctype html><html><body>
<iframe name="sink"></iframe>
<iframe id="framed" src="{base}/rooms/{room_id}"></iframe>
<form id="f" method="POST" enctype="text/plain" target="sink" action="{base}/api/rooms">
  <input name='{{"format":"leafcast-room","x":"' value='"}}'>
</form>
<script>
const base = "{base}";
const room = {room_json};
window.done = (async () => {{
  document.getElementById("f").submit();
  const body = JSON.stringify(room);
  const tries = [
    fetch(base + "/api/rooms", {{method: "POST", mode: "no-cors", body}}),
    fetch(base + "/api/rooms/import", {{method: "POST", mode: "no-cors", body,
                                        headers: {{"Content-Type": "text/plain"}}}}),
    fetch(base + "/api/analyze", {{method: "POST", mode: "no-cors", body}}),
    fetch(base + "/api/rooms/{room_id}/restore-previous", {{method: "POST", mode: "no-cors"}}),
    fetch(base + "/api/rooms", {{method: "POST", body, headers: {{"Content-Type": "application/json"}}}}),
  ];
  navigator.sendBeacon(base + "/api/rooms/import", new Blob([body], {{type: "text/plain"}}));
  navigator.sendBeacon(base + "/api/rooms", body);
  const settled = await Promise.allSettled(tries);
  await new Promise(r => setTimeout(r, 1500));
  return settled.map(s => s.status);
}})();
</script></body></html>"""


@pytest.fixture
def leafcast(tmp_path):
    data = tmp_path / "data"
    proc, base = start_server(data)
    try:
        yield base, data
    finally:
        stop_server(proc)


def _hostile_server(html: str):
    class Handler(BaseHTTPRequestHandler):
        def do_GET(self):
            body = html.encode()
            self.send_response(200)
            self.send_header("Content-Type", "text/html; charset=utf-8")
            self.send_header("Content-Length", str(len(body)))
            self.end_headers()
            self.wfile.write(body)

        def log_message(self, *args):
            pass

    server = ThreadingHTTPServer(("127.0.0.1", _free_port()), Handler)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    return server


def test_a_page_on_another_origin_cannot_write(leafcast, browser):
    base, data = leafcast
    import urllib.request

    with urllib.request.urlopen(base + "/api/rooms") as r:
        room_id = json.loads(r.read())[0]["id"]
    before = folder_snapshot(data)
    html = HOSTILE_HTML.format(base=base, room_id=room_id, room_json=json.dumps(sample_doc("hobby-tent-peppers")))
    server = _hostile_server(html)
    ctx = browser.new_context()
    page = ctx.new_page()
    outcome: dict[tuple[str, str], list[str]] = {}  # (method, path) -> each attempt's status or failure

    def note(request, result: str) -> None:
        if request.url.startswith(base):
            outcome.setdefault((request.method, request.url.removeprefix(base)), []).append(result)

    console: list[str] = []
    page.on("response", lambda r: note(r.request, str(r.status)))
    page.on("requestfailed", lambda r: note(r, r.failure or "failed"))
    page.on("console", lambda m: console.append(m.text))
    try:
        page.goto(f"http://127.0.0.1:{server.server_port}/")
        settled = page.evaluate("() => window.done")
        page.wait_for_timeout(500)
    finally:
        ctx.close()
        server.shutdown()
        server.server_close()
    assert folder_snapshot(data) == before, "a page on another origin changed the data folder"

    # Every write reached Leafcast and was answered with a refusal: the form's 403 is seen directly; an opaque
    # (no-cors, beacon) answer is withheld from the page by Cross-Origin-Resource-Policy, which proves it came.
    # The form's 403 may not be shown in the frame either (frame-ancestors): net::ERR_BLOCKED_BY_RESPONSE.
    answered = ("403", "net::ERR_BLOCKED_BY_RESPONSE.NotSameOrigin", "net::ERR_BLOCKED_BY_RESPONSE")
    posts = {path: results for (method, path), results in outcome.items() if method == "POST"}
    # The preflighted JSON fetch is stopped by the browser before its POST is sent (no CORS grant).
    posts["/api/rooms"].remove("net::ERR_FAILED")
    assert any("preflight" in c for c in console), console
    assert set(posts) == {"/api/rooms", "/api/rooms/import", "/api/analyze", f"/api/rooms/{room_id}/restore-previous"}
    assert all(r in answered for results in posts.values() for r in results), outcome
    assert "403" in posts["/api/rooms"]  # the text/plain form: its answer is shown in the frame, and it is 403
    assert len(posts["/api/rooms/import"]) == 2  # the no-cors fetch and the beacon
    assert settled == ["rejected"] * 5  # CORS: the page learns nothing either
    # The editor may not be framed by another page.
    assert any("frame-ancestors" in c for c in console), console
