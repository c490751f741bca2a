"""Analyses inside their budget: estimated first, a bounded number at once, and cancelled when late.

- The cost model (:mod:`app.service.cost`) refuses a room over the time or memory budget before any work.
- At most ``workers`` analyses compute at once (a semaphore); a request that cannot get a slot within the
  budget is answered "busy". Small requests (room list, pages without analysis) never wait for a slot.
- A light analysis (estimate under :data:`IN_PROCESS_BELOW_S`) runs in the server process, where the engine's
  per-fixture caches make live editing fast. A heavier one runs in a child process with a memory cap; if it is
  not done when the budget runs out the child is killed (the work really stops) and the caller gets
  :class:`AnalysisTimeout`. The server's own memory never holds a heavy analysis's temporaries.
"""

from __future__ import annotations

import contextlib
import logging
import multiprocessing as mp
import threading
import time
from dataclasses import dataclass
from typing import Any

from app.engine.compute import SceneError
from app.room.models import RoomFile
from app.service.analysis import analyse
from app.service.cost import CostEstimate, check_budget

log = logging.getLogger("leafcast.analysis")

IN_PROCESS_BELOW_S = (
    8.0  # estimated seconds under which an analysis stays in the server process (its caches: live editing)
)
DEFAULT_MEMORY_BUDGET_BYTES = 1536 * 2**20  # refused up front above this estimate
CHILD_ADDRESS_SPACE_BYTES = 2 * 2**30  # a child that grows past this fails with MemoryError (RLIMIT_AS)
CHILD_START_ALLOWANCE_S = 3.0  # starting a child (Python, numpy) is not the analysis's own time


class AnalysisTimeout(Exception):
    """The analysis did not finish within the budget (or found no free slot in time); it was stopped."""


class AnalysisMemory(Exception):
    """The analysis ran out of its memory allowance and was stopped."""


@dataclass
class AnalysisRunner:
    budget_s: float = 20.0
    workers: int = 2
    memory_budget_bytes: int = DEFAULT_MEMORY_BUDGET_BYTES
    in_process_below_s: float = IN_PROCESS_BELOW_S
    start_allowance_s: float = CHILD_START_ALLOWANCE_S

    def __post_init__(self) -> None:
        self._slots = threading.BoundedSemaphore(self.workers)

    def estimate(self, room_file: RoomFile) -> CostEstimate:
        return check_budget(room_file.room, self.budget_s, self.memory_budget_bytes)

    def run(self, room_file: RoomFile, abandon: threading.Event | None = None, **kw: Any) -> dict[str, Any]:
        """Analyse within the budget, or raise OverBudget / AnalysisTimeout / AnalysisMemory / SceneError.

        ``abandon`` set (the client went away) stops a heavy analysis at once.
        """
        est = self.estimate(room_file)
        start = time.monotonic()
        if not self._slots.acquire(timeout=self.budget_s):
            raise AnalysisTimeout(
                f"the server is busy with {self.workers} other analyses; nothing was computed. Try again shortly."
            )
        try:
            if est.seconds < min(self.in_process_below_s, 0.5 * self.budget_s):
                return analyse(room_file, **kw)
            remaining = self.budget_s - (time.monotonic() - start) + self.start_allowance_s
            return _in_child(room_file, kw, remaining, est, abandon)
        finally:
            self._slots.release()


def _child_main(conn, doc_json: bytes, kw: dict, address_space_bytes: int) -> None:
    import resource

    with contextlib.suppress(ValueError, OSError):  # a platform without the limit: the estimate still bounds memory
        resource.setrlimit(resource.RLIMIT_AS, (address_space_bytes, address_space_bytes))
    from app.room.roomfile import parse_room_file

    try:
        conn.send(("ok", analyse(parse_room_file(doc_json), **kw)))
    except SceneError as exc:
        conn.send(("scene", str(exc)))
    except MemoryError:
        conn.send(("memory", ""))
    except Exception as exc:  # reported to the caller, with the traceback in the server log
        log.exception("analysis in a child process failed")
        conn.send(("error", f"{type(exc).__name__}: {exc}"))
    finally:
        conn.close()


POLL_S = 0.25  # how often a waiting analysis looks whether its client went away


def _wait(parent, remaining_s: float, abandon: threading.Event | None) -> bool:
    """True when the child answered in time; False when the time ran out or the client left."""
    deadline = time.monotonic() + max(remaining_s, 0.0)
    while True:
        left = deadline - time.monotonic()
        if parent.poll(max(min(left, POLL_S), 0.0)):
            return True
        if left <= 0 or (abandon is not None and abandon.is_set()):
            return False


def _in_child(
    room_file: RoomFile, kw: dict, remaining_s: float, est: CostEstimate, abandon: threading.Event | None = None
) -> dict[str, Any]:
    ctx = mp.get_context("spawn")  # never fork a threaded server
    parent, child = ctx.Pipe(duplex=False)
    from app.room.roomfile import dump_room_file, to_json_bytes

    proc = ctx.Process(
        target=_child_main,
        args=(child, to_json_bytes(dump_room_file(room_file)), kw, CHILD_ADDRESS_SPACE_BYTES),
        daemon=True,
        name="leafcast-analysis",
    )
    proc.start()
    child.close()
    try:
        if not _wait(parent, remaining_s, abandon):
            if abandon is not None and abandon.is_set():
                raise AnalysisTimeout("the client went away; the analysis was stopped")
            raise AnalysisTimeout(
                f"the analysis did not finish within the {remaining_s:.1f} s it had left "
                f"(estimated {est.seconds:.0f} s) and was stopped. Use a coarser map spacing, fewer fixtures or "
                "a smaller zone, or start the server with a larger --max-analysis-s."
            )
        try:
            kind, payload = parent.recv()
        except EOFError as exc:  # the child died (killed by the memory limit, or a crash)
            raise AnalysisMemory("the analysis stopped without an answer (out of memory?)") from exc
    finally:
        if proc.is_alive():
            proc.kill()
        proc.join(5)
        parent.close()
    if kind == "ok":
        return payload
    if kind == "scene":
        raise SceneError(payload)
    if kind == "memory":
        raise AnalysisMemory("the analysis needed more memory than its allowance and was stopped")
    raise RuntimeError(payload)
