"""The one cache extension, created without an app and attached in `create_app`, and the
memoizer the computations use on top of it.

`memoized` keeps flask-caching's shared cache (files, Redis) as the store that workers share,
and puts a small in-process LRU in front of it: a cached page update then reads each model's
results from memory instead of unpickling a file per lookup. `fetch_many` gets every model's
result for one update with a single `get_many`. Keys are the function's qualified name and the
repr of its (canonical, hashable) arguments, under the app's `CACHE_KEY_PREFIX`.

`GuardedBackend` wraps the shared backend so that a Redis server that is down (at start or
mid-run) or a cache folder that cannot be written never fails a request: the results then go to
an in-process cache, one warning is logged per outage, and the shared backend is tried again
every `CACHE_RETRY_SECONDS`. Each request's lookups are counted (`request_cache_status`) for the
request log and the ``X-Fdesk-Cache`` response header.

The shared backends store pickled values: only results this server computed are ever pickled
or unpickled, never anything a client sends.
"""

from __future__ import annotations

import collections
import functools
import hashlib
import logging
import os
import queue
import tempfile
import threading
import time
import weakref
from pathlib import Path
from typing import Any, Callable, Iterable

import numpy as np
from flask import has_request_context, request
from flask_caching import Cache
from flask_caching.backends import SimpleCache

__all__ = ["cache", "code_fingerprint", "memoized", "fetch_many", "flush_writes", "FRONT_ENTRIES",
           "GuardedBackend", "guard_backend", "writable_folder", "request_cache_status", "BudgetExceeded",
           "Uncacheable"]

logger = logging.getLogger(__name__)

cache = Cache()

FRONT_ENTRIES = 96  # results kept per process and backend: a model's curves are ~0.3 MB with their
# encodings, so at most ~30 MB a worker (a judgement call, no source)
_MISSING = object()
# one front LRU per backend object, so a fresh app (as in each test) starts empty
_fronts: "weakref.WeakKeyDictionary[Any, dict[int, collections.OrderedDict]]" = weakref.WeakKeyDictionary()
_lock = threading.Lock()


def code_fingerprint() -> str:
    """Short hash of the model and computation source (the modules whose functions are
    memoized, and what they read), so cached results from older code are never served after an
    upgrade (it becomes part of the cache key prefix)."""
    root = Path(__file__).resolve().parent.parent
    digest = hashlib.sha256()
    for folder in ("model", "server"):
        for path in sorted((root / folder).glob("*.py")):
            if folder == "server" and path.name not in ("compute.py", "codec.py", "cache.py", "api.py"):
                continue
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return digest.hexdigest()[:12]


def _front(entries: int = FRONT_ENTRIES) -> collections.OrderedDict:
    """The front LRU of this backend for memoized functions bounded to `entries` results (the
    large model results share one; small whole answers keep more in their own)."""
    backend = cache.cache
    with _lock:
        fronts = _fronts.get(backend)
        if fronts is None:
            fronts = _fronts[backend] = {}
        front = fronts.get(entries)
        if front is None:
            front = fronts[entries] = collections.OrderedDict()
        return front


def _remember(front: collections.OrderedDict, key: str, value, entries: int = FRONT_ENTRIES) -> None:
    with _lock:
        front[key] = value
        front.move_to_end(key)
        while len(front) > entries:
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


def memoized(fn: Callable | None = None, *, front_entries: int = FRONT_ENTRIES, shared: bool = True) -> Callable:
    """Memoize `fn` (positional, hashable arguments with a canonical repr) in the front LRU and
    the shared cache. None is a result like any other (stored wrapped in a tuple). Small
    results may ask for a longer front LRU of their own (``@memoized(front_entries=1024)``);
    ``shared=False`` keeps them in the process only (for keys a client can vary at no cost,
    which must not crowd the shared cache); such a function must be a cheap composition of
    other memoized calls, which are the ones held to the request's time budget."""
    if fn is None:
        return functools.partial(memoized, front_entries=front_entries, shared=shared)

    @functools.wraps(fn)
    def wrapper(*args):
        return fetch_many(wrapper, [args])[0]

    wrapper.uncached = fn
    wrapper.front_entries = front_entries
    wrapper.shared = shared
    return wrapper


class Uncacheable(Exception):
    """Raised by a memoized function for arguments whose result is not worth storing (a
    refused link, say): `fetch_many` passes it on and neither caches nor counts it."""


class BudgetExceeded(Exception):
    """The request has used its computation time (``REQUEST_BUDGET_SECONDS``): what it has
    computed so far stays cached, the rest is refused (`server.limits` answers 422)."""

    def __init__(self, budget: float):
        super().__init__(f"this request needs more than its {budget:g} s computation budget")
        self.budget = budget


_COUNTS = CACHE_COUNTS = "fdesk.cache"  # request environ key: {"local": n, "shared": n, "computed": n}
_DEADLINE = "fdesk.deadline"  # request environ key: (monotonic deadline, budget in s)


def _count(kind: str, n: int) -> None:
    if n and has_request_context():
        counts = request.environ.setdefault(_COUNTS, {"local": 0, "shared": 0, "computed": 0})
        counts[kind] += n


def _looked_up() -> int:
    if not has_request_context():
        return 0
    return sum(request.environ.get(_COUNTS, {}).values())


def request_cache_status(environ: dict) -> str:
    """``hit`` (everything from a cache; ``hit-shared`` when some came from the shared backend,
    i.e. another worker or host computed it), ``miss`` (something was computed) or ``-`` (no
    model looked up)."""
    counts = environ.get(_COUNTS)
    if not counts or not any(counts.values()):
        return "-"
    if counts["computed"]:
        return "miss"
    return "hit-shared" if counts["shared"] else "hit"


def _check_budget() -> None:
    if has_request_context():
        deadline = request.environ.get(_DEADLINE)
        if deadline is not None and time.monotonic() > deadline[0]:
            raise BudgetExceeded(deadline[1])


def fetch_many(memo: Callable, calls: Iterable[tuple], return_exceptions: bool = False) -> list:
    """``[memo(*args) for args in calls]`` with one shared-cache round trip for all misses.

    With `return_exceptions`, a call that raises gives its exception in its place (not cached),
    so one failing model does not stop the others. A request past its time budget raises
    `BudgetExceeded` before computing anything more (even with `return_exceptions`)."""
    fn = memo.uncached
    calls = list(calls)
    keys = [_key(fn, args) for args in calls]
    entries = getattr(memo, "front_entries", FRONT_ENTRIES)
    shared = getattr(memo, "shared", True)
    front = _front(entries)
    results = [_recall(front, k) for k in keys]
    missing = [i for i, r in enumerate(results) if r is _MISSING]
    _count("local", len(calls) - len(missing))
    if missing:
        stored = cache.get_many(*[keys[i] for i in missing]) if shared else [None] * len(missing)
        fresh = {}
        for i, box in zip(missing, stored):
            if isinstance(box, tuple) and len(box) == 1:
                results[i] = _freeze(box[0])
                _count("shared", 1)
            else:
                if shared:  # in-process memos are cheap compositions: what they call is checked
                    _check_budget()
                before = _looked_up()
                worked = True
                try:
                    results[i] = _freeze(fn(*calls[i]))
                except Uncacheable:
                    worked = False
                    raise
                except Exception as err:  # noqa: BLE001 - handed back to the caller who asked for it
                    if not return_exceptions:
                        raise
                    results[i] = err
                    continue
                finally:
                    if worked and _looked_up() == before:  # it computed by itself; a composite's
                        _count("computed", 1)              # own look-ups tell how it went
                fresh[keys[i]] = (results[i],)
            _remember(front, keys[i], results[i], entries)
        if fresh and shared:
            _write_behind(cache.cache, fresh)
    return results


# Writing to the shared cache (a pickled file and a count file per entry for FileSystemCache)
# costs more than serving the page from memory, so one thread per process does it after the
# response: the front LRU already holds the results, and the other workers see them moments
# later. A full queue drops the write (the entry is then simply computed again elsewhere).
_queue: "queue.Queue[tuple[Any, dict]]" = queue.Queue(maxsize=256)
_writer: dict = {"pid": None, "thread": None}


def _store(backend, mapping: dict) -> None:
    try:
        backend.set_many(mapping)
    except BaseException:  # noqa: BLE001 - a failed write only costs a recomputation
        logger.warning("could not store %d results in the shared cache", len(mapping), exc_info=True)


def _write_loop() -> None:
    while True:
        backend, mapping = _queue.get()
        try:
            _store(backend, mapping)
        finally:
            _queue.task_done()


def _ensure_writer() -> None:
    with _lock:
        thread = _writer["thread"]
        if _writer["pid"] != os.getpid() or thread is None or not thread.is_alive():
            # first write in this process, after a fork, or the thread could not start or died
            _writer["pid"] = os.getpid()
            thread = threading.Thread(target=_write_loop, name="fdesk-cache-writer", daemon=True)
            _writer["thread"] = thread
            thread.start()


def _write_behind(backend, mapping: dict) -> None:
    try:
        _ensure_writer()
    except RuntimeError:  # no thread to be had: write now instead
        _store(backend, mapping)
        return
    try:
        _queue.put_nowait((backend, mapping))
    except queue.Full:
        logger.warning("shared-cache write queue full; %d results kept in this process only", len(mapping))


def store_behind(key: str, value: Any, timeout: int | None = None) -> None:
    """Put one value in the shared cache after the response (by the writer thread)."""
    backend = cache.cache

    class _WithTimeout:  # set_many with this entry's own time to live
        def set_many(self, mapping):
            return backend.set_many(mapping, timeout=timeout)

    _write_behind(_WithTimeout(), {key: value})


def flush_writes(timeout: float = 60.0) -> None:
    """Wait until every queued shared-cache write is done (tests, benchmarks, shutdown).

    Never waits for ever: if the writer thread is gone, the calling thread drains the queue
    itself, and after ``timeout`` seconds it gives up with a warning.
    """
    deadline = time.monotonic() + timeout
    while _queue.unfinished_tasks:
        thread = _writer["thread"]
        if thread is None or not thread.is_alive() or _writer["pid"] != os.getpid():
            try:
                backend, mapping = _queue.get_nowait()
            except queue.Empty:
                return
            try:
                _store(backend, mapping)
            finally:
                _queue.task_done()
            continue
        if time.monotonic() > deadline:
            logger.warning("shared-cache writes still pending after %.0f s", timeout)
            return
        time.sleep(0.005)


# ----------------------------------------------------------------------------- a guarded backend


_WRITES = ("set", "set_many", "add")


class GuardedBackend:
    """The shared backend (`primary`) behind a guard: any exception it raises (Redis refused or
    timed out) or a write it reports as failed (cache folder not writable or full) switches
    this process to an in-process `SimpleCache` with one warning; every `retry_seconds` the
    next call tries the primary again, and the first success logs that it is back. A file cache
    reads "nothing" from a missing folder without an error, so for it (`reads_prove_recovery`
    false) and after any refused write only a write can prove the primary is back; meanwhile
    reads stay in process.

    Every other backend method passes through the same guard, so the wrapper stands in for the
    backend wherever flask-caching expects one."""

    def __init__(self, primary, name: str, retry_seconds: float = 5.0, fallback_entries: int = 500,
                 reads_prove_recovery: bool = True):
        self.primary = primary
        self.reads_prove_recovery = reads_prove_recovery
        self.name = name
        self.retry_seconds = float(retry_seconds)
        self.fallback = SimpleCache(threshold=fallback_entries)
        self._down = False
        self._writes_failed = False
        self._failures = 0  # counts failures, so a call that began before one cannot undo it
        self._next_try = 0.0
        self._guard = threading.Lock()

    @property
    def available(self) -> bool:
        """False while the shared backend is out and the in-process cache serves instead."""
        return not self._down

    def _usable(self, method: str) -> int | None:
        """The failure count when `method` may go to the primary now, else None."""
        with self._guard:
            if not self._down:
                return self._failures
            if self._writes_failed and method not in _WRITES:
                return None
            return self._failures if time.monotonic() >= self._next_try else None

    def _failed(self, reason: str, write: bool = False) -> None:
        with self._guard:
            first = not self._down
            self._writes_failed = write or not self.reads_prove_recovery
            self._down = True
            self._failures += 1
            self._next_try = time.monotonic() + self.retry_seconds
        if first:
            logger.warning("shared cache %s unavailable (%s); serving from an in-process cache and "
                           "retrying every %g s", self.name, reason, self.retry_seconds)

    def _succeeded(self, failures_before: int) -> None:
        with self._guard:
            if self._failures != failures_before:  # it failed meanwhile (another thread)
                return
            was_down, self._down = self._down, False
        if was_down:
            logger.warning("shared cache %s is back; using it again", self.name)

    def _call(self, method: str, args: tuple, kwargs: dict):
        failures_before = self._usable(method)
        if failures_before is None:
            return getattr(self.fallback, method)(*args, **kwargs)
        try:
            result = getattr(self.primary, method)(*args, **kwargs)
        except Exception as err:  # noqa: BLE001 - any backend failure means: do without it
            self._failed(type(err).__name__)
            return getattr(self.fallback, method)(*args, **kwargs)
        if method == "set_many" and len(result or ()) < len(args[0] if args else kwargs["mapping"]):
            self._failed("a write was refused", write=True)
            return getattr(self.fallback, method)(*args, **kwargs)
        if method in ("set", "add") and result is False:
            self._failed("a write was refused", write=True)
            return getattr(self.fallback, method)(*args, **kwargs)
        self._succeeded(failures_before)
        return result

    def get_many(self, *keys):
        return self._call("get_many", keys, {})

    def set_many(self, mapping, timeout=None):
        return self._call("set_many", (mapping,), {"timeout": timeout} if timeout is not None else {})

    def __getattr__(self, name: str):
        attr = getattr(self.primary, name)
        if not callable(attr):
            return attr
        return lambda *args, **kwargs: self._call(name, args, kwargs)


def writable_folder(folder: str) -> str | None:
    """None when a file can be created in `folder` (made if missing), else the reason."""
    try:
        os.makedirs(folder, exist_ok=True)
        probe = tempfile.NamedTemporaryFile(dir=folder, prefix=".probe-")
        probe.close()
    except OSError as err:
        return f"{type(err).__name__}: {err.strerror or err}"
    return None


def guard_backend(flask_app) -> GuardedBackend:
    """Put the app's cache backend behind a `GuardedBackend` (after ``cache.init_app``). A
    FileSystemCache whose folder cannot be written starts in the in-process cache at once."""
    config = flask_app.config
    kind = str(config["CACHE_TYPE"]).rsplit(".", 1)[-1]
    guarded = GuardedBackend(flask_app.extensions["cache"][cache], kind,
                             retry_seconds=config.get("CACHE_RETRY_SECONDS", 5.0),
                             fallback_entries=int(config.get("CACHE_THRESHOLD", 500) or 500),
                             reads_prove_recovery=kind != "FileSystemCache")
    flask_app.extensions["cache"][cache] = guarded
    return guarded
