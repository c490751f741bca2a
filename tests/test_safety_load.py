"""A heavy analysis beside small requests on a real server: both answered (timings are benchmark figures,
`python -m app.bench --safety`, never asserted here)."""

import json
import threading
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest

from app.bench_safety import heaviest_accepted_room, heavy_beside_small
from tests.servers import start_server, stop_server


@pytest.mark.slow
def test_small_requests_are_answered_while_the_heaviest_accepted_analysis_runs():
    figures = heavy_beside_small(budget_s=4.0, probes=6)
    assert figures["heavy_status"] in (200, 503)  # computed within its budget, or stopped with a message
    assert figures["beside_n"] >= 1  # every small request made meanwhile answered 200 (else urlopen raises)
    assert figures["alone_p50_ms"] > 0


def _analysis_children(pid: int) -> list[str]:
    """Command lines of the server's child processes that compute an analysis (multiprocessing spawn)."""
    out = []
    for child in Path("/proc").glob("[0-9]*"):
        try:
            stat = (child / "stat").read_text()
            ppid = int(stat.rsplit(")", 1)[1].split()[1])
            cmd = (child / "cmdline").read_bytes().replace(b"\0", b" ").decode()
        except (OSError, ValueError, IndexError):
            continue
        if ppid == pid and "spawn_main" in cmd:
            out.append(cmd)
    return out


@pytest.mark.slow
def test_a_client_that_gives_up_stops_its_heavy_analysis(tmp_path):
    heavy = heaviest_accepted_room(20.0)
    body = json.dumps(heavy.model_dump(mode="json")).encode()
    proc, base = start_server(tmp_path / "data", args=("--max-analysis-s", "20"))
    try:
        req = urllib.request.Request(
            base + "/api/analyze", data=body, method="POST", headers={"Content-Type": "application/json"}
        )
        seen: list[int] = []
        watching = threading.Event()

        def watch():
            while not watching.is_set():
                seen.append(len(_analysis_children(proc.pid)))
                time.sleep(0.2)

        watcher = threading.Thread(target=watch)
        watcher.start()
        with pytest.raises((TimeoutError, urllib.error.URLError, OSError)):
            urllib.request.urlopen(req, timeout=4)  # gives up after 4 s: the analysis is in its child by then
        watching.set()
        watcher.join()
        assert max(seen) == 1, "the heavy analysis never ran in its own process"
        deadline = time.time() + 10
        while _analysis_children(proc.pid) and time.time() < deadline:
            time.sleep(0.2)
        assert not _analysis_children(proc.pid), "the server kept computing for a client that left"
        with urllib.request.urlopen(base + "/api/rooms", timeout=10) as r:
            assert r.status == 200
    finally:
        stop_server(proc)
