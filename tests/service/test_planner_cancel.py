"""Cancel stops the planner and check-my-setup within one trial.

A trial is one candidate analysis: a planning estimate or full-model map in the planner's search, an analysis
of a changed room in check-my-setup. Each test holds the job inside its first trial (of the phase tested),
presses Cancel, lets the trial finish and counts the trials that ran after it: none may start. Counting trials,
not time, keeps the check the same on a busy machine.
"""

import importlib
import threading

import pytest

from app.room.roomfile import parse_room_file, to_json_bytes
from app.service import advice
from app.service.planner import JobBoard, PlanOptions, check_setup, search
from app.service.planner.light import PlanningLight
from tests.conftest import sample_doc

WAIT_S = 60
check_module = importlib.import_module("app.service.planner.check_setup")  # the package re-exports the function


class Gate:
    """Counts trials; holds the first one that runs while ``armed`` until the test has pressed Cancel."""

    def __init__(self) -> None:
        self.calls = 0
        self.quiet = 0  # inside a trial's own set-up (the per-height reference flux), not a trial of its own
        self.armed = True
        self.held_at: int | None = None
        self.inside = threading.Event()
        self.go = threading.Event()

    def trial(self) -> None:
        if self.quiet:
            return
        self.calls += 1
        if self.armed and self.held_at is None:
            self.held_at = self.calls
            self.inside.set()
            self.go.wait(WAIT_S)


def run_cancelled(board: JobBoard, rf, kind: str, gate: Gate):
    job = board.start("x", rf, PlanOptions(type_ids=("bararray-6x1.0", "spot-90")), kind=kind)
    assert gate.inside.wait(WAIT_S), "the job never reached a trial"
    job.cancel.set()  # Cancel, while the first trial runs
    gate.go.set()
    for _ in range(WAIT_S * 20):
        if job.done:
            break
        threading.Event().wait(0.05)
    return job


def basement_too_bright():
    """The basement sample at 100 % and 30 cm lower: photoperiod, dimming and height fixes are each checked on
    both benches (six analyses of a changed room)."""
    doc = sample_doc("basement-two-benches")
    top = max(z["canopy_height_m"] for z in doc["room"]["zones"]) + 0.1
    for f in doc["room"]["fixtures"]:
        f.update(dimming_pct=100, hanging_height_m=max(f["hanging_height_m"] - 0.3, top))
    return parse_room_file(to_json_bytes(doc))


def too_dim_tent():
    """One fixture at 10 % near the roof: every setting is tried, then a re-hang is searched (many trials)."""
    doc = sample_doc("hobby-tent-peppers")
    doc["room"]["fixtures"] = doc["room"]["fixtures"][:1]
    doc["room"]["fixtures"][0].update(dimming_pct=10, hanging_height_m=2.0)
    return parse_room_file(to_json_bytes(doc))


def count_check_trials(monkeypatch, gate: Gate) -> None:
    for module in (advice, check_module):
        real = module.verify

        def counted(*a, real=real, **kw):
            gate.trial()
            return real(*a, **kw)

        monkeypatch.setattr(module, "verify", counted)
    count_estimates(monkeypatch, gate)


def count_estimates(monkeypatch, gate: Gate) -> None:
    real_estimate, real_flux = PlanningLight.estimate, PlanningLight.flux_to_canopy

    def estimate(self, *a, **kw):
        gate.trial()
        return real_estimate(self, *a, **kw)

    def flux(self, *a, **kw):
        gate.quiet += 1
        try:
            return real_flux(self, *a, **kw)
        finally:
            gate.quiet -= 1

    monkeypatch.setattr(PlanningLight, "estimate", estimate)
    monkeypatch.setattr(PlanningLight, "flux_to_canopy", flux)


@pytest.mark.parametrize("make", [basement_too_bright, too_dim_tent], ids=["settings", "re-hang"])
def test_check_my_setup_stops_within_one_trial(monkeypatch, make):
    rf = make()
    every = Gate()
    every.armed = False
    with monkeypatch.context() as m:
        count_check_trials(m, every)
        check_setup(rf)
    assert every.calls > 2  # uncancelled, the check runs several trials

    gate = Gate()
    count_check_trials(monkeypatch, gate)
    job = run_cancelled(JobBoard(), rf, "check", gate)
    assert job.done and job.cancelled and job.result is None
    assert gate.calls == gate.held_at == 1  # the held trial finished; no other started


def test_planner_stops_within_one_trial_while_refining_the_leaders(monkeypatch):
    """The leaders' heights are refined on many rungs, each an estimate, then judged by the full model: Cancel
    pressed during the first rung stops the job before the next."""
    rf = parse_room_file(to_json_bytes(sample_doc("hobby-tent-peppers")))
    gate = Gate()
    gate.armed = False
    real_refine, real_full = search.refined_heights, PlanningLight.full

    def refine(*a, **kw):
        gate.armed = True  # hold the first trial of the refining phase
        return real_refine(*a, **kw)

    def full(self, *a, **kw):
        gate.trial()
        return real_full(self, *a, **kw)

    monkeypatch.setattr(search, "refined_heights", refine)
    count_estimates(monkeypatch, gate)
    monkeypatch.setattr(PlanningLight, "full", full)
    job = run_cancelled(JobBoard(), rf, "plan", gate)
    assert job.done and job.cancelled and job.result is None
    assert gate.held_at is not None and gate.calls == gate.held_at
    assert search.REFINE_STEPS > 1  # so the old per-leader check let the other rungs run


def test_a_job_cancelled_before_it_runs_runs_no_trial(monkeypatch):
    gate = Gate()
    gate.armed = False
    count_check_trials(monkeypatch, gate)
    board = JobBoard()
    blocker = threading.Event()
    board.check_pool.submit("hold", lambda: blocker.wait(WAIT_S))  # the one worker is busy
    job = board.start("x", too_dim_tent(), PlanOptions(), kind="check")
    job.cancel.set()
    blocker.set()
    for _ in range(WAIT_S * 20):
        if job.done:
            break
        threading.Event().wait(0.05)
    assert job.done and job.cancelled and gate.calls == 0
