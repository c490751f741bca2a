"""Planner: background layout search, check-my-setup, height and dimming curves."""

from __future__ import annotations

from typing import Any

from fastapi import APIRouter, Query, Request

from app.room.library import fixture_library
from app.service.planner import JobBoard, PlanOptions, check_setup, curves
from app.web.bodies import PlanIn
from app.web.deps import load_room, store_of
from app.web.errors import ERRORS, ApiError, not_found

router = APIRouter(tags=["planner"])


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
def start_plan(request: Request, room_id: str, body: PlanIn) -> dict[str, Any]:
    rf = load_room(store_of(request), room_id)
    unknown = [t for t in body.type_ids if t not in fixture_library() and t not in {x.id for x in rf.room.fixture_types}]
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
    job = jobs_of(request).start(room_id, rf, opts)
    return {"job_id": job.id, "revision": rf.revision}


@router.post(
    "/api/rooms/{room_id}/check-jobs",
    status_code=202,
    responses=ERRORS,
    summary="Start check-my-setup in the background (progress, cancel); poll /api/plan-jobs/{job_id}",
)
def start_check(request: Request, room_id: str) -> dict[str, Any]:
    rf = load_room(store_of(request), room_id)
    job = jobs_of(request).start(room_id, rf, PlanOptions(), kind="check")
    return {"job_id": job.id, "revision": rf.revision}


@router.get("/api/plan-jobs/{job_id}", responses=ERRORS, summary="Progress and best layouts so far")
def plan_job(request: Request, job_id: str) -> dict[str, Any]:
    return _job_or_404(request, job_id).public()


@router.delete("/api/plan-jobs/{job_id}", responses=ERRORS, summary="Cancel a planner job")
def cancel_job(request: Request, job_id: str) -> dict[str, Any]:
    job = _job_or_404(request, job_id)
    job.cancel.set()
    return job.public()


@router.get(
    "/api/rooms/{room_id}/check",
    responses=ERRORS,
    summary="Does the room meet each zone's target? If not, the smallest changes that do",
)
def check_room(request: Request, room_id: str) -> dict[str, Any]:
    return check_setup(load_room(store_of(request), room_id))


@router.get(
    "/api/rooms/{room_id}/curves",
    responses=ERRORS,
    summary="Average and peak PPFD against hanging height and dimming",
)
def room_curves(
    request: Request,
    room_id: str,
    zone: str = Query(..., max_length=40),
    fixture: list[str] = Query(default=[], max_length=200),
) -> dict[str, Any]:
    try:
        return curves(load_room(store_of(request), room_id), zone, tuple(fixture))
    except (ValueError, StopIteration) as exc:
        raise ApiError(422, "invalid_request", str(exc) or f"no zone '{zone}'") from exc
