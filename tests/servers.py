"""Start and stop a real ``leafcast serve`` process on a data folder of the test's own (loopback, free port)."""

from __future__ import annotations

import os
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

from app.room.storage import FAULT_ENV
from tests.conftest import ROOT, _free_port


def start_server(data: Path, fault: str | None = None, args: tuple[str, ...] = ()) -> tuple[subprocess.Popen, str]:
    port = _free_port()
    env = {k: v for k, v in os.environ.items() if k != FAULT_ENV}
    if fault:
        env[FAULT_ENV] = fault
    proc = subprocess.Popen(
        [sys.executable, "-m", "app", "serve", "--port", str(port), "--data-dir", str(data), *args],
        cwd=ROOT,
        env=env,
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
    )
    base = f"http://127.0.0.1:{port}"
    deadline = time.time() + 30
    while time.time() < deadline:
        try:
            with urllib.request.urlopen(base + "/api/rooms", timeout=1):
                return proc, base
        except OSError:
            if proc.poll() is not None:
                break
            time.sleep(0.1)
    proc.kill()
    raise RuntimeError("server did not start: " + proc.stdout.read().decode(errors="replace"))


def stop_server(proc: subprocess.Popen) -> None:
    proc.terminate()
    try:
        proc.wait(10)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.wait(5)


def folder_snapshot(folder: Path) -> dict[str, bytes]:
    """Every file under ``folder`` with its bytes: equal snapshots mean nothing was written."""
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}
