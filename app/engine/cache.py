"""Every engine cache in one place: content-keyed, least-recently-used, bounded by bytes, with counters.

A memoised engine function is keyed by its arguments (frozen dataclasses of the scene, compared by content),
so a moved fixture misses and a fixture that stayed put hits. Each cache holds at most ``max_bytes`` of results,
counted as the numpy arrays they hold, so a long editing session cannot grow memory without bound. All caches
are listed in :data:`REGISTRY`; :func:`clear_all` empties them and :func:`stats` reports hits, misses and size.
"""

from __future__ import annotations

import sys
import threading
from collections import OrderedDict
from collections.abc import Callable
from dataclasses import dataclass
from functools import wraps

import numpy as np

MIB = 1024 * 1024
#: Default budget of one cache [bytes].
DEFAULT_MAX_BYTES = 64 * MIB


def result_bytes(obj, _depth: int = 0) -> int:
    """Approximate memory held by a cached result: numpy buffers, plus containers and plain objects."""
    if _depth > 4:
        return 0
    own = getattr(obj, "cache_bytes", None)
    if callable(own):  # an object that says what it holds (a view of values another cache owns holds none)
        return int(own())
    if isinstance(obj, np.ndarray):
        return int(obj.nbytes) + 112
    if isinstance(obj, tuple | list):
        return sys.getsizeof(obj) + sum(result_bytes(o, _depth + 1) for o in obj)
    if isinstance(obj, dict):
        return sys.getsizeof(obj) + sum(result_bytes(v, _depth + 1) for v in obj.values())
    fields = getattr(obj, "__dict__", None)
    if fields is None and hasattr(obj, "__slots__"):
        fields = {k: getattr(obj, k, None) for k in obj.__slots__}
    if fields:
        return sys.getsizeof(obj) + sum(result_bytes(v, _depth + 1) for v in fields.values())
    return sys.getsizeof(obj)


#: Every engine cache by name (each registers itself when made).
REGISTRY: dict[str, BoundedCache] = {}


@dataclass
class CacheStats:
    name: str
    hits: int
    misses: int
    entries: int
    bytes: int
    max_bytes: int


class BoundedCache:
    """An LRU mapping whose total result size stays under ``max_bytes`` (the newest entry is always kept)."""

    def __init__(self, name: str, max_bytes: int = DEFAULT_MAX_BYTES) -> None:
        self.name, self.max_bytes = name, max_bytes
        self._data: OrderedDict[object, tuple[object, int]] = OrderedDict()
        self._bytes = 0
        self.hits = self.misses = 0
        self._lock = threading.Lock()  # analyses run in a thread pool
        REGISTRY[name] = self

    def get(self, key, default=None):
        with self._lock:
            item = self._data.get(key)
            if item is None:
                self.misses += 1
                return default
            self._data.move_to_end(key)
            self.hits += 1
            return item[0]

    def put(self, key, value) -> None:
        size = result_bytes(value)
        with self._lock:
            old = self._data.pop(key, None)
            if old is not None:
                self._bytes -= old[1]
            self._data[key] = (value, size)
            self._bytes += size
            while self._bytes > self.max_bytes and len(self._data) > 1:
                _, (_, s) = self._data.popitem(last=False)
                self._bytes -= s

    def clear(self) -> None:
        with self._lock:
            self._data.clear()
            self._bytes = 0
            self.hits = self.misses = 0

    def stats(self) -> CacheStats:
        with self._lock:
            return CacheStats(self.name, self.hits, self.misses, len(self._data), self._bytes, self.max_bytes)


_MISSING = object()


def memoise(name: str, max_bytes: int = DEFAULT_MAX_BYTES) -> Callable:
    """Decorator: memoise a pure function of hashable arguments in a registered, byte-bounded cache."""
    cache = REGISTRY.get(name) or BoundedCache(name, max_bytes)

    def wrap(fn):
        @wraps(fn)
        def inner(*args, **kwargs):
            key = (args, tuple(sorted(kwargs.items()))) if kwargs else args
            value = cache.get(key, _MISSING)
            if value is _MISSING:
                value = fn(*args, **kwargs)
                cache.put(key, value)
            return value

        inner.cache = cache
        inner.cache_clear = cache.clear
        return inner

    return wrap


def clear_all() -> None:
    """Empty every engine cache (tests and the benchmark's cold runs)."""
    for c in REGISTRY.values():
        c.clear()


def stats() -> list[CacheStats]:
    return [c.stats() for c in REGISTRY.values()]


def total_bytes() -> int:
    return sum(s.bytes for s in stats())
