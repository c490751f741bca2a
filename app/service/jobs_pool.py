"""A bounded executor for long work (planner jobs, check-my-setup): a few workers and a visible queue.

At most ``workers`` tasks run at once, on daemon threads that live as long as the pool; the rest wait first in,
first out, and anyone can ask a task's place (0 = running, 1 = next, ...). A full queue refuses new work rather
than letting it pile up. A task that raises is logged with its traceback (and its exception kept), never lost.
"""

from __future__ import annotations

import logging
import threading
from collections import deque
from collections.abc import Callable
from concurrent.futures import Future
from typing import Any

log = logging.getLogger("leafcast.jobs")

DEFAULT_WORKERS = 1  # on a 2-core machine one long job at a time leaves a core for the pages
DEFAULT_MAX_QUEUED = 16


class QueueFull(RuntimeError):
    """Too many tasks are waiting already."""


class BoundedExecutor:
    def __init__(self, workers: int = DEFAULT_WORKERS, max_queued: int = DEFAULT_MAX_QUEUED, name: str = "job"):
        if workers < 1:
            raise ValueError("workers must be at least 1")
        self.workers, self.max_queued, self.name = workers, max_queued, name
        self._queue: deque[tuple[str, Callable[[], Any], Future]] = deque()
        self._running: set[str] = set()
        self._cond = threading.Condition()
        self._threads: list[threading.Thread] = []

    def submit(self, key: str, fn: Callable[[], Any]) -> Future:
        """Queue ``fn`` under ``key``; returns its Future. Raises :class:`QueueFull`."""
        fut: Future = Future()
        with self._cond:
            if len(self._queue) >= self.max_queued:
                raise QueueFull(f"{len(self._queue)} {self.name} tasks are already waiting; try again later")
            self._queue.append((key, fn, fut))
            if len(self._threads) < self.workers:
                t = threading.Thread(target=self._work, daemon=True, name=f"{self.name}-worker-{len(self._threads)}")
                self._threads.append(t)
                t.start()
            self._cond.notify()
        return fut

    def position(self, key: str) -> int | None:
        """0 while running, n for the n-th waiting, None when finished or unknown."""
        with self._cond:
            if key in self._running:
                return 0
            for i, (k, _, _) in enumerate(self._queue, start=1):
                if k == key:
                    return i
        return None

    def discard(self, key: str) -> bool:
        """Drop a task that has not started yet (a cancelled job); True if it was waiting."""
        with self._cond:
            for item in list(self._queue):
                if item[0] == key:
                    self._queue.remove(item)
                    item[2].cancel()
                    return True
        return False

    def queued(self) -> int:
        with self._cond:
            return len(self._queue)

    def _work(self) -> None:
        while True:
            with self._cond:
                while not self._queue:
                    self._cond.wait()
                key, fn, fut = self._queue.popleft()
                self._running.add(key)
            try:
                if fut.set_running_or_notify_cancel():
                    try:
                        fut.set_result(fn())
                    except BaseException as exc:  # logged with its traceback; the caller sees it on the future
                        log.exception("%s task %s failed", self.name, key)
                        fut.set_exception(exc)
            finally:
                with self._cond:
                    self._running.discard(key)
