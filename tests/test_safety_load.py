"""A heavy analysis beside small requests on a real server: both answered (timings are benchmark figures,
`python -m app.bench --safety`, never asserted here)."""

import pytest

from app.bench_safety import heavy_beside_small


@pytest.mark.slow
def test_small_requests_are_answered_while_the_heaviest_accepted_analysis_runs():
    figures = heavy_beside_small(budget_s=4.0, probes=6)
    assert figures["heavy_status"] in (200, 503)  # computed within its budget, or stopped with a message
    assert figures["beside_n"] >= 1  # every small request made meanwhile answered 200 (else urlopen raises)
    assert figures["alone_p50_ms"] > 0
