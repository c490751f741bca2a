"""The wheel carries everything: built, installed into a fresh venv outside the checkout, it serves every page.

Needs the package registry (or pip's cache) for the dependencies, as `make test` itself does.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
import urllib.request
import zipfile
from pathlib import Path

import pytest

from tests.conftest import ROOT, _free_port

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def wheel(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("wheel")
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "-q", "-w", str(out), str(ROOT)],
        check=True,
    )
    (path,) = out.glob("leafcast-*.whl")
    return path


def test_wheel_holds_templates_static_and_samples(wheel):
    names = set(zipfile.ZipFile(wheel).namelist())
    for needed in (
        "app/_assets/templates/editor.html",
        "app/_assets/templates/sheet.html",
        "app/_assets/static/leafcast.css",
        "app/_assets/sample_rooms/hobby-tent-peppers.json",
        "app/data/crops.json",
    ):
        assert needed in names, needed


def test_installed_wheel_serves_pages_outside_the_checkout(wheel, tmp_path):
    venv = tmp_path / "venv"
    subprocess.run([sys.executable, "-m", "venv", str(venv)], check=True)
    py = venv / "bin" / "python"
    # The installed wheel alone: a PYTHONPATH pointing at a checkout would hide a missing file.
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    subprocess.run([str(py), "-m", "pip", "install", "-q", str(wheel)], check=True, timeout=900)
    work = tmp_path / "elsewhere"
    work.mkdir()
    where = subprocess.run(
        [str(py), "-c", "import app, app.assets; print(app.__file__); print(app.assets.asset_dir('static'))"],
        cwd=work, capture_output=True, text=True, check=True, env=env,
    ).stdout.split()
    assert str(ROOT) not in where[0] and str(ROOT) not in where[1], where
    port = _free_port()
    proc = subprocess.Popen(
        [str(venv / "bin" / "leafcast"), "serve", "--port", str(port), "--data-dir", str(tmp_path / "data")],
        cwd=work, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, env=env,
    )
    base = f"http://127.0.0.1:{port}"
    try:
        rooms = _wait_json(base + "/api/rooms")
        assert len(rooms) >= 4, "sample rooms seeded from the wheel"
        rid = rooms[0]["id"]
        for path, marker in (
            ("/", b"<html"),
            (f"/rooms/{rid}", b"<html"),
            (f"/rooms/{rid}/sheet", b"<html"),
            ("/static-lib/plotly.min.js", b"plotly"),
            ("/static/leafcast.css", b"{"),
        ):
            with urllib.request.urlopen(base + path, timeout=30) as r:
                assert r.status == 200, path
                assert marker in r.read().lower(), path
    finally:
        proc.terminate()
        proc.wait(10)
    # `python -m app` works from the wheel too
    out = subprocess.run([str(py), "-m", "app", "--version"], cwd=work, capture_output=True, text=True, check=True)
    assert "leafcast" in out.stdout.lower() or out.stdout.strip()


def _wait_json(url: str):
    deadline = time.time() + 60
    while True:
        try:
            with urllib.request.urlopen(url, timeout=2) as r:
                return json.loads(r.read())
        except OSError:
            if time.time() > deadline:
                raise
            time.sleep(0.3)
