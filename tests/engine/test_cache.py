"""The engine's caches: content keys, byte bounds, counters, and memory over a long editing session."""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap

import numpy as np
import pytest

from app.engine import cache
from app.engine.distributions import tabulated
from tests.conftest import ROOT


def test_lru_evicts_by_bytes_and_counts_hits():
    c = cache.BoundedCache("test-lru", max_bytes=3 * 8000 + 500)
    for k in range(5):
        c.put(k, np.zeros(1000))  # 8,000 bytes each
    s = c.stats()
    assert s.entries == 3 and s.bytes <= s.max_bytes
    assert c.get(0) is None and c.get(4) is not None
    assert (c.hits, c.misses) == (1, 1)
    c.clear()
    assert c.stats().entries == 0
    del cache.REGISTRY["test-lru"]


def test_memoise_keys_by_content_and_clear_all_empties_it():
    calls = []

    @cache.memoise("test-memo", max_bytes=1 * cache.MIB)
    def square(x):
        calls.append(x)
        return np.full(10, x * x)

    square(3), square(3), square(4)
    assert calls == [3, 4]
    cache.clear_all()
    square(3)
    assert calls == [3, 4, 3]
    del cache.REGISTRY["test-memo"]


def test_a_tabulated_key_covers_its_angles():
    """Same values on other polar angles are another distribution (wider beam), so another cache key."""
    values = [[1.0, 0.8, 0.3, 0.0]]
    narrow = tabulated([0, 20, 40, 60], [0], values)
    wide = tabulated([0, 30, 60, 90], [0], values)
    assert narrow.key != wide.key
    assert tabulated([0, 20, 40, 60], [0], values).key == narrow.key


@pytest.mark.slow
def test_forty_edits_of_one_bench_stay_under_600_mib():
    """Each edit resizes and moves a bench of the basement sample (new grid, new patch map): resident memory
    must stay bounded by the caches' byte budgets (issue limit: 600 MiB), not grow with the edit count."""
    script = textwrap.dedent(
        f"""
        import json, sys
        from app.room.roomfile import parse_room_file
        from app.service.analysis import analyse
        from app.engine import cache
        doc = json.load(open({str(ROOT / "sample_rooms" / "basement-two-benches.json")!r}))
        z = doc["room"]["zones"][0]
        for i in range(40):
            z["width_m"] = round(z["width_m"] * (0.97 if i % 2 else 1.02), 4)
            z["x_m"] = round(z["x_m"] + (0.01 if i % 2 else -0.005), 4)
            analyse(parse_room_file(json.dumps(doc).encode()))
        # VmHWM: this process's own peak. ru_maxrss would start from the parent's resident size at fork
        # (Linux keeps it across exec), so a big test session made this child look big.
        hwm = next(line for line in open("/proc/self/status") if line.startswith("VmHWM:"))
        peak = int(hwm.split()[1]) / 1024
        budget = sum(c.max_bytes for c in cache.REGISTRY.values()) / 2**20
        print(json.dumps({{"peak_mib": peak, "cached_mib": cache.total_bytes() / 2**20, "budget_mib": budget}}))
        """
    )
    out = subprocess.run([sys.executable, "-c", script], cwd=ROOT, capture_output=True, text=True, check=True)
    figures = json.loads(out.stdout.strip().splitlines()[-1])
    assert figures["peak_mib"] < 600, figures
    assert figures["cached_mib"] <= figures["budget_mib"], figures
