"""Shared fixtures: sample rooms, an in-process client, a real uvicorn server, and Debian's Chromium."""

from __future__ import annotations

import json
import os
import shutil
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

from app.settings import CHROMIUM_FLAGS

ROOT = Path(__file__).resolve().parent.parent
SAMPLES = sorted((ROOT / "sample_rooms").glob("*.json"))
ARTIFACTS = ROOT / "test-artifacts"


def sample_doc(name: str) -> dict:
    return json.loads((ROOT / "sample_rooms" / f"{name}.json").read_text(encoding="utf-8"))


@pytest.fixture
def tent_doc() -> dict:
    return sample_doc("hobby-tent-peppers")


@pytest.fixture
def client(tmp_path):
    from fastapi.testclient import TestClient

    from app.settings import Settings
    from app.web import create_app

    app = create_app(Settings(data_dir=tmp_path / "data"))
    # Bodies are JSON unless a test says otherwise: the API refuses other types (415, app/web/guards.py).
    with TestClient(app, base_url="http://127.0.0.1", headers={"Content-Type": "application/json"}) as c:
        yield c


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="session")
def live_server(tmp_path_factory):
    """A real uvicorn process on loopback, serving a fresh data folder seeded with the sample rooms."""
    data = tmp_path_factory.mktemp("live-data")
    port = _free_port()
    proc = subprocess.Popen(
        [sys.executable, "-m", "app", "serve", "--host", "127.0.0.1", "--port", str(port), "--data-dir", str(data)],
        cwd=ROOT,
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
    )
    base = f"http://127.0.0.1:{port}"
    deadline = time.time() + 30
    while time.time() < deadline:
        try:
            with urllib.request.urlopen(base + "/api/rooms", timeout=1) as r:
                if r.status == 200:
                    break
        except OSError:
            time.sleep(0.2)
    else:
        proc.kill()
        raise RuntimeError("uvicorn did not start: " + proc.stdout.read().decode(errors="replace"))
    yield base
    proc.terminate()
    try:
        proc.wait(10)
    except subprocess.TimeoutExpired:
        proc.kill()


def chromium_path() -> str | None:
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name)
        if path:
            return path
    return None


@pytest.fixture(scope="session")
def browser():
    path = chromium_path()
    required = os.environ.get("LEAFCAST_REQUIRE_BROWSER") == "1"
    if path is None:
        msg = "Debian's chromium is not installed (apt-get install chromium): BROWSER TESTS SKIPPED"
        if required:
            pytest.fail(msg + " but LEAFCAST_REQUIRE_BROWSER=1")
        pytest.skip(msg)
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        if required:
            pytest.fail("playwright is not installed but LEAFCAST_REQUIRE_BROWSER=1")
        pytest.skip("playwright is not installed: BROWSER TESTS SKIPPED")
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=path, args=list(CHROMIUM_FLAGS), headless=True)
        yield b
        b.close()


@pytest.fixture
def page(browser):
    ctx = browser.new_context(viewport={"width": 1280, "height": 800}, accept_downloads=True)
    pg = ctx.new_page()
    errors: list[str] = []
    pg.on("pageerror", lambda e: errors.append(str(e)))
    pg.errors = errors
    yield pg
    ctx.close()


@pytest.fixture(scope="session")
def artifacts() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS
