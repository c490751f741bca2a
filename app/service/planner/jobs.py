"""Background jobs for the planner and check-my-setup: progress, the best layout so far, cancel."""

from __future__ import annotations

import threading
import time
import uuid
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from app.room.models import RoomFile
from app.service.planner.check_setup import check_setup
from app.service.planner.combine import plan
from app.service.planner.options import PlanOptions
from app.service.planner.search import Cancelled


@dataclass
class Job:
    id: str
    room_id: str
    revision: int = 0  # the room's revision the job started from: Apply saves against it
    kind: str = "plan"
    progress: float = 0.0
    zone: str = ""
    found: int = 0
    best_so_far: dict[str, Any] | None = None
    done: bool = False
    cancelled: bool = False
    error: str | None = None
    result: dict[str, Any] | None = None
    cancel: threading.Event = field(default_factory=threading.Event)
    started: float = field(default_factory=time.time)

    def public(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "kind": self.kind,
            "room_id": self.room_id,
            "revision": self.revision,
            "progress": self.progress,
            "zone": self.zone,
            "found": self.found,
            "best_so_far": self.best_so_far,
            "done": self.done,
            "cancelled": self.cancelled,
            "error": self.error,
            "result": self.result,
        }


class JobBoard:
    """Jobs run in background threads; at most ``keep`` are kept (the oldest are cancelled and dropped)."""

    def __init__(self, keep: int = 16) -> None:
        self.jobs: dict[str, Job] = {}
        self.keep = keep
        self.lock = threading.Lock()

    def start(self, room_id: str, rf: RoomFile, opts: PlanOptions, kind: str = "plan") -> Job:
        work: Callable[..., dict[str, Any]] = plan if kind == "plan" else check_setup
        job = Job(uuid.uuid4().hex[:12], room_id, rf.revision, kind)
        with self.lock:
            if len(self.jobs) >= self.keep:
                for old in sorted(self.jobs.values(), key=lambda j: j.started)[: len(self.jobs) - self.keep + 1]:
                    old.cancel.set()
                    self.jobs.pop(old.id, None)
            self.jobs[job.id] = job

        def progress(frac, zone, found, best=None):
            job.progress, job.zone, job.found = frac, zone, found
            if best is not None:
                job.best_so_far = best

        def run():
            try:
                job.result = work(rf, opts, progress, job.cancel)
            except Cancelled:
                job.cancelled = True
            except Exception as exc:  # reported to the page, never a traceback
                job.error = f"the {'planner' if kind == 'plan' else 'check'} stopped: {exc}"
            finally:
                job.done = True
                job.progress = 1.0 if not job.cancelled else job.progress

        threading.Thread(target=run, daemon=True, name=f"{kind}-{job.id}").start()
        return job

    def get(self, job_id: str) -> Job | None:
        return self.jobs.get(job_id)
