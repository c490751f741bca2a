"""Safety figures for ``python -m app.bench --safety``: the cost model against measured times, and a small
request's latency while the heaviest accepted request runs on a real server.

Scenes are the sample rooms and variants of them (finer maps, many fixtures, other wall finishes): invented
rooms for the benchmark only.
"""

from __future__ import annotations

import copy
import json
import statistics
import subprocess
import sys
import tempfile
import threading
import time
import urllib.error
import urllib.request
from pathlib import Path

from app.assets import asset_dir
from app.room.models import RoomFile
from app.room.roomfile import parse_room_file


def sample_doc(name: str) -> dict:
    return json.loads((asset_dir("sample_rooms") / f"{name}.json").read_text(encoding="utf-8"))


def grid_of_fixtures(doc: dict, n_side: int, finish: str | None = None, spacing_m: float | None = None) -> dict:
    """The room's first fixture repeated n_side x n_side over its first zone (same type, same height)."""
    doc = copy.deepcopy(doc)
    room = doc["room"]
    zone = room["zones"][0]
    proto = room["fixtures"][0]
    geo = next(t for t in room["fixture_types"] if t["id"] == proto["type_id"])["geometry"]
    hx, hy = 0.5 * geo["length_m"] + 0.01, 0.5 * geo["width_m"] + 0.01
    x0, x1 = max(zone["x_m"], hx), min(zone["x_m"] + zone["width_m"], room["width_m"] - hx)
    y0, y1 = max(zone["y_m"], hy), min(zone["y_m"] + zone["length_m"], room["length_m"] - hy)
    fixtures = []
    for i in range(n_side):
        for j in range(n_side):
            f = dict(proto)
            f["id"] = f"f{i}-{j}"
            f["x_m"] = x0 + (x1 - x0) * (i + 0.5) / n_side
            f["y_m"] = y0 + (y1 - y0) * (j + 0.5) / n_side
            f["rotation_deg"] = 0.0
            fixtures.append(f)
    room["fixtures"] = fixtures
    if finish:
        room["wall_finish"] = {"kind": finish, "reflectance": 0.9 if finish == "specular" else 0.8, "label": finish}
    if spacing_m:
        room["grid_spacing_m"] = spacing_m
    return doc


def big_room(width_m: float, length_m: float, n_side: int, spacing_m: float, finish: str = "diffuse") -> dict:
    """One zone filling a large flat room, lit by n_side x n_side copies of the basement's panel."""
    doc = sample_doc("basement-two-benches")
    room = doc["room"]
    room["width_m"], room["length_m"] = width_m, length_m
    z = dict(room["zones"][0])
    z.update(id="floor", x_m=0.0, y_m=0.0, width_m=width_m, length_m=length_m)
    room["zones"] = [z]
    room["obstacles"] = []
    return grid_of_fixtures(doc, n_side, finish, spacing_m)


def calibration_rooms() -> list[tuple[str, RoomFile]]:
    tent = sample_doc("hobby-tent-peppers")
    base = sample_doc("basement-two-benches")
    docs = [(n, sample_doc(n)) for n in ("hobby-tent-peppers", "basement-two-benches", "three-tier-greens-rack")]
    docs += [
        ("tent, 1 cm map", {**tent, "room": {**tent["room"], "grid_spacing_m": 0.01}}),
        ("tent, 36 bars, matt, 1 cm", grid_of_fixtures(tent, 6, "diffuse", 0.01)),
        ("tent, 36 bars, specular, 1.5 cm", grid_of_fixtures(tent, 6, "specular", 0.015)),
        ("basement, 2 cm map", {**base, "room": {**base["room"], "grid_spacing_m": 0.02}}),
        ("basement, 100 panels, 2.5 cm", grid_of_fixtures(base, 10, None, 0.025)),
        ("flat 12x8 m, 64 panels, matt, 4 cm", big_room(12, 8, 8, 0.04)),
        ("flat 12x8 m, 64 panels, specular, 6 cm", big_room(12, 8, 8, 0.06, "specular")),
    ]
    return [(name, parse_room_file(json.dumps(d))) for name, d in docs]


def cost_model_table() -> list[dict]:
    """Estimated against measured seconds for each calibration room (cold caches)."""
    from app.bench import clear_all_caches
    from app.service.analysis import analyse
    from app.service.cost import estimate

    rows = []
    for name, rf in calibration_rooms():
        est = estimate(rf.room)
        clear_all_caches()
        t = time.perf_counter()
        analyse(rf, include_grids=True)
        measured = time.perf_counter() - t
        rows.append(
            {"scene": name, "points": est.grid_points, "estimate_s": est.seconds, "measured_s": measured, **est.units}
        )
    return rows


def heaviest_accepted_room(budget_s: float) -> RoomFile:
    """A flat room whose estimate is close under the budget: the heaviest request the server accepts."""
    from app.service.cost import estimate

    for (width_m, length_m), n_side in [((40, 25), n) for n in (16, 8, 4)] + [((12, 8), n) for n in (4, 2, 1)]:
        best = None
        for spacing in (0.2, 0.14, 0.1, 0.08, 0.06, 0.05, 0.04, 0.035, 0.03, 0.025, 0.02):
            rf = parse_room_file(json.dumps(big_room(width_m, length_m, n_side, spacing)))
            if estimate(rf.room).seconds > 0.9 * budget_s:
                break
            best = rf
        if best is not None:
            return best
    raise ValueError(f"no benchmark room fits a {budget_s:g} s budget")


def _start_server(data: Path, budget_s: float) -> tuple[subprocess.Popen, str]:
    import socket

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    proc = subprocess.Popen(
        [sys.executable, "-m", "app", "serve", "--port", str(port), "--data-dir", str(data)]
        + ["--max-analysis-s", str(budget_s)],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
    )
    base = f"http://127.0.0.1:{port}"
    for _ in range(300):
        try:
            with urllib.request.urlopen(base + "/api/rooms", timeout=1):
                return proc, base
        except OSError:
            time.sleep(0.1)
    proc.kill()
    raise RuntimeError("server did not start")


def _timed_get(url: str) -> float:
    t = time.perf_counter()
    with urllib.request.urlopen(url, timeout=60) as r:
        r.read()
    return (time.perf_counter() - t) * 1000


def heavy_beside_small(budget_s: float = 20.0, probes: int = 30) -> dict:
    """Latency of small requests (room list API and page) alone, then while the heaviest accepted analysis runs."""
    heavy = heaviest_accepted_room(budget_s)
    body = json.dumps(heavy.model_dump(mode="json")).encode()
    with tempfile.TemporaryDirectory() as tmp:
        proc, base = _start_server(Path(tmp), budget_s)
        try:
            alone = [_timed_get(base + u) for u in ("/api/rooms", "/") * (probes // 2)]
            outcome: dict = {}

            def post_heavy():
                req = urllib.request.Request(
                    base + "/api/analyze", data=body, method="POST", headers={"Content-Type": "application/json"}
                )
                t = time.perf_counter()
                try:
                    with urllib.request.urlopen(req, timeout=10 * budget_s) as r:
                        outcome["status"] = r.status
                        r.read()
                except urllib.error.HTTPError as exc:
                    outcome["status"] = exc.code
                outcome["heavy_s"] = time.perf_counter() - t

            worker = threading.Thread(target=post_heavy)
            worker.start()
            time.sleep(0.5)
            beside = []
            while worker.is_alive() and len(beside) < 10 * probes:
                beside.append(_timed_get(base + ("/api/rooms" if len(beside) % 2 == 0 else "/")))
                time.sleep(0.05)
            worker.join()
        finally:
            proc.terminate()
            proc.wait(10)

    def pct(xs, q):
        return statistics.quantiles(xs, n=100)[q - 1] if len(xs) >= 2 else (xs[0] if xs else float("nan"))

    return {
        "heavy_points": sum(
            (round(z.width_m / heavy.room.grid_spacing_m) + 1) * (round(z.length_m / heavy.room.grid_spacing_m) + 1)
            for z in heavy.room.zones
        ),
        "heavy_fixtures": len(heavy.room.fixtures),
        "heavy_status": outcome.get("status"),
        "heavy_s": outcome.get("heavy_s"),
        "alone_p50_ms": pct(alone, 50),
        "alone_p95_ms": pct(alone, 95),
        "beside_n": len(beside),
        "beside_p50_ms": pct(beside, 50),
        "beside_p95_ms": pct(beside, 95),
        "beside_max_ms": max(beside) if beside else float("nan"),
    }
