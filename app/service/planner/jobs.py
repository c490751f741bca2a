"""Background jobs for the planner and check-my-setup: progress, the best layout so far, cancel."""

from __future__ import annotations

import logging
import threading
import time
import uuid
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from app.room.models import RoomFile
from app.service.jobs_pool import BoundedExecutor
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
    position: Any = None  # () -> place in the executor's queue (0 = running), set by the JobBoard

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
            "queue_position": self.position() if self.position and not self.done else None,
        }


class JobBoard:
    """Jobs run on bounded executors (one planner and one check at a time, the rest queued, a full queue
    refuses with :class:`~app.service.jobs_pool.QueueFull`); at most ``keep`` jobs are kept."""

    def __init__(self, keep: int = 16, workers: int = 1) -> None:
        self.jobs: dict[str, Job] = {}
        self.keep = keep
        self.lock = threading.Lock()
        self.pool = BoundedExecutor(workers=workers, max_queued=keep, name="plan")
        self.check_pool = BoundedExecutor(workers=workers, max_queued=keep, name="check")

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
                if job.cancel.is_set():
                    raise Cancelled
                job.result = work(rf, opts, progress, job.cancel)
            except Cancelled:
                job.cancelled = True
            except Exception as exc:  # reported to the page, never a traceback; logged with it
                logging.getLogger("leafcast.planner").exception("%s job %s failed", kind, job.id)
                job.error = f"the {'planner' if kind == 'plan' else 'check'} stopped: {exc}"
            finally:
                job.done = True
                job.progress = 1.0 if not job.cancelled else job.progress

        pool = self.pool if kind == "plan" else self.check_pool
        job.position = lambda: pool.position(job.id)
        try:
            pool.submit(job.id, run)
        except Exception:
            with self.lock:
                self.jobs.pop(job.id, None)
            raise
        return job

    def get(self, job_id: str) -> Job | None:
        return self.jobs.get(job_id)
