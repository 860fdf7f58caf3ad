"""The one cache extension, created without an app and attached in `create_app`, and the
memoizer the computations use on top of it.

`memoized` keeps flask-caching's shared cache (files, Redis) as the store that workers share,
and puts a small in-process LRU in front of it: a cached page update then reads each model's
results from memory instead of unpickling a file per lookup. `fetch_many` gets every model's
result for one update with a single `get_many`. Keys are the function's qualified name and the
repr of its (canonical, hashable) arguments, under the app's `CACHE_KEY_PREFIX`.
"""

from __future__ import annotations

import collections
import functools
import hashlib
import logging
import os
import queue
import threading
import weakref
from pathlib import Path
from typing import Any, Callable, Iterable

import numpy as np
from flask_caching import Cache

__all__ = ["cache", "code_fingerprint", "memoized", "fetch_many", "flush_writes", "FRONT_ENTRIES"]

logger = logging.getLogger(__name__)

cache = Cache()

FRONT_ENTRIES = 96  # results kept per process and backend: a model's curves are ~0.3 MB with their
# encodings, so at most ~30 MB a worker (a judgement call, no source)
_MISSING = object()
# one front LRU per backend object, so a fresh app (as in each test) starts empty
_fronts: "weakref.WeakKeyDictionary[Any, collections.OrderedDict]" = weakref.WeakKeyDictionary()
_lock = threading.Lock()


def code_fingerprint() -> str:
    """Short hash of the model and computation source, so cached results from older code are
    never served after an upgrade (it becomes part of the cache key prefix)."""
    root = Path(__file__).resolve().parent.parent
    digest = hashlib.sha256()
    for folder in ("model", "server"):
        for path in sorted((root / folder).glob("*.py")):
            if folder == "server" and path.name not in ("compute.py", "codec.py", "cache.py"):
                continue
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return digest.hexdigest()[:12]


def _front() -> collections.OrderedDict:
    backend = cache.cache
    with _lock:
        front = _fronts.get(backend)
        if front is None:
            front = _fronts[backend] = collections.OrderedDict()
        return front


def _remember(front: collections.OrderedDict, key: str, value) -> None:
    with _lock:
        front[key] = value
        front.move_to_end(key)
        while len(front) > FRONT_ENTRIES:
            front.popitem(last=False)


def _recall(front: collections.OrderedDict, key: str):
    with _lock:
        value = front.get(key, _MISSING)
        if value is not _MISSING:
            front.move_to_end(key)
        return value


def _freeze(value):
    """Results are shared by every caller in the process: make their arrays read-only."""
    if isinstance(value, np.ndarray):
        value.flags.writeable = False
    elif isinstance(value, dict):
        for v in value.values():
            _freeze(v)
    return value


def _key(fn: Callable, args: tuple) -> str:
    text = f"{fn.__module__}.{fn.__qualname__}{args!r}"
    return f"{fn.__qualname__}:{hashlib.sha1(text.encode()).hexdigest()}"


def memoized(fn: Callable) -> Callable:
    """Memoize `fn` (positional, hashable arguments with a canonical repr) in the front LRU and
    the shared cache. None is a result like any other (stored wrapped in a tuple)."""

    @functools.wraps(fn)
    def wrapper(*args):
        return fetch_many(wrapper, [args])[0]

    wrapper.uncached = fn
    return wrapper


def fetch_many(memo: Callable, calls: Iterable[tuple], return_exceptions: bool = False) -> list:
    """``[memo(*args) for args in calls]`` with one shared-cache round trip for all misses.

    With `return_exceptions`, a call that raises gives its exception in its place (not cached),
    so one failing model does not stop the others."""
    fn = memo.uncached
    calls = list(calls)
    keys = [_key(fn, args) for args in calls]
    front = _front()
    results = [_recall(front, k) for k in keys]
    missing = [i for i, r in enumerate(results) if r is _MISSING]
    if missing:
        stored = cache.get_many(*[keys[i] for i in missing])
        fresh = {}
        for i, box in zip(missing, stored):
            if isinstance(box, tuple) and len(box) == 1:
                results[i] = _freeze(box[0])
            else:
                try:
                    results[i] = _freeze(fn(*calls[i]))
                except Exception as err:  # noqa: BLE001 - handed back to the caller who asked for it
                    if not return_exceptions:
                        raise
                    results[i] = err
                    continue
                fresh[keys[i]] = (results[i],)
            _remember(front, keys[i], results[i])
        if fresh:
            _write_behind(cache.cache, fresh)
    return results


# Writing to the shared cache (a pickled file and a count file per entry for FileSystemCache)
# costs more than serving the page from memory, so one thread per process does it after the
# response: the front LRU already holds the results, and the other workers see them moments
# later. A full queue drops the write (the entry is then simply computed again elsewhere).
_queue: "queue.Queue[tuple[Any, dict]]" = queue.Queue(maxsize=256)
_writer: dict = {"pid": None}


def _write_loop() -> None:
    while True:
        backend, mapping = _queue.get()
        try:
            backend.set_many(mapping)
        except Exception:  # noqa: BLE001 - a failed write only costs a recomputation
            logger.warning("could not store %d results in the shared cache", len(mapping), exc_info=True)
        finally:
            _queue.task_done()


def _write_behind(backend, mapping: dict) -> None:
    with _lock:
        if _writer["pid"] != os.getpid():  # first write in this process (or after a fork)
            _writer["pid"] = os.getpid()
            threading.Thread(target=_write_loop, name="fdesk-cache-writer", daemon=True).start()
    try:
        _queue.put_nowait((backend, mapping))
    except queue.Full:
        logger.warning("shared-cache write queue full; %d results kept in this process only", len(mapping))


def flush_writes() -> None:
    """Wait until every queued shared-cache write is done (tests, benchmarks, shutdown)."""
    _queue.join()
