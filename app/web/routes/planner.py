"""Planner: background layout search, check-my-setup, height and dimming curves."""

from __future__ import annotations

from concurrent.futures import TimeoutError as FutureTimeout

from fastapi import APIRouter, Query, Request

from app.room.library import fixture_library
from app.service.jobs_pool import QueueFull
from app.service.planner import JobBoard, PlanOptions, check_setup, curves
from app.service.results_planner import Curves, JobStarted, PlannerJob, SetupCheck
from app.web.bodies import PlanIn
from app.web.deps import load_room, store_of, within_budget
from app.web.errors import ERRORS, ApiError, not_found

router = APIRouter(tags=["planner"])
CHECK_BUDGET_FACTOR = 10  # check-my-setup analyses the room many times (a real search): ten analyses' worth


def jobs_of(request: Request) -> JobBoard:
    return request.app.state.jobs


def _job_or_404(request: Request, job_id: str):
    job = jobs_of(request).get(job_id)
    if job is None:
        raise not_found(f"no planner job '{job_id}'")
    return job


@router.post(
    "/api/rooms/{room_id}/plan",
    status_code=202,
    responses=ERRORS,
    summary="Start the layout planner in the background; poll the job",
)
def start_plan(request: Request, room_id: str, body: PlanIn) -> JobStarted:
    rf = load_room(store_of(request), room_id)
    within_budget(request, rf)
    unknown = [
        t for t in body.type_ids if t not in fixture_library() and t not in {x.id for x in rf.room.fixture_types}
    ]
    if unknown:
        raise ApiError(422, "invalid_request", f"type_ids: no fixture type '{unknown[0]}'")
    opts = PlanOptions(
        type_ids=tuple(body.type_ids),
        objective=body.objective,
        target=body.target,
        max_power_w=body.max_power_w,
        min_clearance_m=body.min_clearance_m,
        min_gap_m=body.min_gap_m,
        years=body.years,
        seed=body.seed,
    )
    try:
        job = jobs_of(request).start(room_id, rf, opts)
    except QueueFull as exc:
        raise ApiError(503, "busy", f"The planner is busy: {exc}.") from exc
    return {"job_id": job.id, "revision": rf.revision, "queue_position": job.public()["queue_position"]}


@router.post(
    "/api/rooms/{room_id}/check-jobs",
    status_code=202,
    responses=ERRORS,
    summary="Start check-my-setup in the background (progress, cancel); poll /api/plan-jobs/{job_id}",
)
def start_check(request: Request, room_id: str) -> JobStarted:
    rf = load_room(store_of(request), room_id)
    within_budget(request, rf)
    try:
        job = jobs_of(request).start(room_id, rf, PlanOptions(), kind="check")
    except QueueFull as exc:
        raise ApiError(503, "busy", f"Check-my-setup is busy: {exc}.") from exc
    return {"job_id": job.id, "revision": rf.revision, "queue_position": job.public()["queue_position"]}


@router.get(
    "/api/plan-jobs/{job_id}",
    response_model_exclude_unset=True,
    responses=ERRORS,
    summary="Progress and best layouts so far",
)
def plan_job(request: Request, job_id: str) -> PlannerJob:
    return _job_or_404(request, job_id).public()


@router.delete(
    "/api/plan-jobs/{job_id}", response_model_exclude_unset=True, responses=ERRORS, summary="Cancel a planner job"
)
def cancel_job(request: Request, job_id: str) -> PlannerJob:
    job = _job_or_404(request, job_id)
    job.cancel.set()
    return job.public()


@router.get(
    "/api/rooms/{room_id}/check",
    response_model_exclude_unset=True,
    responses=ERRORS,
    summary="Does the room meet each zone's target? If not, the smallest changes that do",
)
def check_room(request: Request, room_id: str) -> SetupCheck:
    rf = load_room(store_of(request), room_id)
    within_budget(request, rf)
    budget_s = request.app.state.settings.max_analysis_s
    try:
        task = jobs_of(request).check_pool.submit(f"check-{room_id}-{id(rf)}", lambda: check_setup(rf))
    except QueueFull as exc:
        raise ApiError(503, "busy", f"Check-my-setup is busy: {exc}.") from exc
    try:
        return task.result(timeout=CHECK_BUDGET_FACTOR * budget_s)
    except FutureTimeout as exc:
        raise ApiError(
            503,
            "too_slow",
            f"Check-my-setup did not finish within {CHECK_BUDGET_FACTOR * budget_s:g} s; try a coarser map "
            "spacing or fewer fixtures, or run `leafcast report` on the file.",
        ) from exc


@router.get(
    "/api/rooms/{room_id}/curves",
    response_model_exclude_unset=True,
    responses=ERRORS,
    summary="Average and peak PPFD against hanging height and dimming",
)
def room_curves(
    request: Request,
    room_id: str,
    zone: str = Query(..., max_length=40),
    fixture: list[str] = Query(default=[], max_length=200),
) -> Curves:
    rf = load_room(store_of(request), room_id)
    within_budget(request, rf)
    try:
        return curves(rf, zone, tuple(fixture))
    except (ValueError, StopIteration) as exc:
        raise ApiError(422, "invalid_request", str(exc) or f"no zone '{zone}'") from exc
