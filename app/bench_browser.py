"""Browser latency for ``python -m app.bench --browser``: drag preview frames and mouse-up to exact figures in
Debian's Chromium against a real server (needs the test extra, playwright, and the chromium package)."""

from __future__ import annotations

import statistics
import time
from pathlib import Path

from app.settings import CHROMIUM_FLAGS


def browser_latency(rooms: list[str], moves: int = 40, drops: int = 7) -> list[dict]:
    """In Debian's Chromium against a real server: drag preview frames and mouse-up to exact figures.

    While a fixture is dragged the editor composes the map from per-fixture footprints (no round trip); each
    move waits for its painted frame (``since_move_ms``: pointer move to painted canvas, what sets the frame
    rate). Each drop waits for the exact answer's figures (``drop_ms``: mouse-up to figures painted) and
    then its map (``drop_map_ms``). Needs the test extra (playwright) and the chromium package.
    """
    import shutil
    import socket
    import tempfile
    import threading

    import uvicorn
    from playwright.sync_api import sync_playwright

    from app.settings import Settings
    from app.web import create_app

    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        port = sock.getsockname()[1]
    data = tempfile.mkdtemp(prefix="leafcast-bench-")
    server = uvicorn.Server(
        uvicorn.Config(create_app(Settings(data_dir=Path(data))), host="127.0.0.1", port=port, log_level="warning")
    )
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    while not server.started:
        time.sleep(0.05)
    out = []
    try:
        with sync_playwright() as p:
            browser = p.chromium.launch(executable_path=shutil.which("chromium"), args=list(CHROMIUM_FLAGS))
            page = browser.new_page(viewport={"width": 1280, "height": 800})
            for room in rooms:
                out.append(_drag_and_drop(page, f"http://127.0.0.1:{port}/rooms/{room}", room, moves, drops))
            browser.close()
    finally:
        server.should_exit = True
        thread.join(5)
        shutil.rmtree(data, ignore_errors=True)
    return out


def _drag_and_drop(page, url: str, room: str, moves: int, drops: int) -> dict:
    idle = "() => window.leafcast && window.leafcast.ready && !window.leafcast.analysing"
    page.goto(url)
    page.wait_for_function(idle)
    fid = page.evaluate("() => window.leafcast.doc.room.fixtures[0].id")
    with page.expect_response(lambda r: "/api/footprints" in r.url):
        page.locator(f'[data-fixture-id="{fid}"]').click()
    frames, paint, drop, drop_map = [], [], [], []
    for d in range(drops):
        page.wait_for_function(idle)
        box = page.locator(f'[data-fixture-id="{fid}"]').bounding_box()
        x, y = box["x"] + box["width"] / 2, box["y"] + box["height"] / 2
        page.mouse.move(x, y)
        page.mouse.down()
        sign = 1 if d % 2 == 0 else -1
        for k in range(moves // drops + 2):
            n = page.evaluate("() => window.leafcast.previewFrames.length")
            page.mouse.move(x + sign * (4 + 2 * k), y)  # past the 2 px a press may wobble before it drags
            page.wait_for_function("n => window.leafcast.previewFrames.length > n", arg=n)
            f = page.evaluate("() => window.leafcast.previewFrames.at(-1)")
            frames.append(f["since_move_ms"])
            paint.append(f["paint_ms"])
        n = page.evaluate("() => window.leafcast.timing.length")
        page.mouse.up()
        page.wait_for_function("n => window.leafcast.timing.length > n", arg=n)
        t = page.evaluate("() => window.leafcast.timing.at(-1)")
        drop.append(t["since_move_ms"])
        drop_map.append(t["map_ms"])
    med = statistics.median
    return {
        "room": room,
        "frame_ms": med(frames),
        "frames_per_s_bound": 1000 / med(frames),
        "paint_ms": med(paint),
        "drop_ms": med(drop),
        "drop_map_ms": med(drop_map),
        "max_frame_ms": max(frames),
        "max_drop_ms": max(drop),
    }
