"""The cache's two layers, and the memoizer the computations use on them.

1. In process: `LRU`, the one store of its kind in server/ (bounded by entry count or by size,
   optional time to live). Each app keeps the fronts of `memoized` functions in it; the
   response store (`server.responses`), the parsed data sets (`server.data_store`) and the
   built cosmologies (`in_process`) are LRUs too.
2. Shared: flask-caching's backend (files for the workers of one host, Redis for many hosts),
   the `cache` extension, attached by `attach`. What a request computes is written there after
   its response has been sent (Flask's `call_on_close`), outside a request at once; nothing
   writes in the background.

`memoized` reads the front first, then the shared backend, then computes; `fetch_many` gets
every model's result for one update with a single `get_many`. Keys are the function's
qualified name and the repr of its (canonical, hashable) arguments, under the app's
``CACHE_KEY_PREFIX``, which carries `code_fingerprint` so an upgrade never serves results of
older code (`PrefixedFileSystemCache` makes the file backend honour that prefix too).

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
import tempfile
import threading
import time
from pathlib import Path
from typing import Any, Callable, Hashable, Iterable

import numpy as np
from flask import current_app, has_request_context, request
from flask_caching import Cache
from flask_caching.backends import SimpleCache
from flask_caching.backends.filesystemcache import FileSystemCache

from server.config import redis_options

__all__ = ["cache", "attach", "code_fingerprint", "LRU", "in_process", "memoized", "fetch_many", "store_shared",
           "flush_writes", "FRONT_ENTRIES", "GuardedBackend", "PrefixedFileSystemCache", "guard_backend",
           "writable_folder", "request_cache_status", "BudgetExceeded", "Uncacheable", "request_deadline"]

logger = logging.getLogger(__name__)

cache = Cache()

FRONT_ENTRIES = 96  # results kept per process and app: a model's curves are ~0.3 MB with their
# encodings, so at most ~30 MB a worker (a judgement call, no source)
_MISSING = object()
_FRONTS = "fdesk_memo_fronts"  # app.extensions key: {front size: LRU}
_SOURCES = ("model", "server", "layouts")  # everything that shapes a cached result or answer
_fingerprint: list[str] = []  # computed once per process


def code_fingerprint() -> str:
    """Short hash of the source of every package whose code shapes a cached value (the model,
    the server, the layouts), so results and answers cached by older code are never served
    after an upgrade: the shared cache's key prefix and the response store's keys carry it."""
    if not _fingerprint:
        root = Path(__file__).resolve().parent.parent
        digest = hashlib.sha256()
        for folder in _SOURCES:
            for path in sorted((root / folder).rglob("*.py")):
                digest.update(path.relative_to(root).as_posix().encode())
                digest.update(path.read_bytes())
        _fingerprint.append(digest.hexdigest()[:12])
    return _fingerprint[0]


class LRU:
    """A thread-safe in-process store, least recently used out first.

    Bounded to `limit` entries, or to `limit` units of `sizeof(value)` (bytes, say); a value
    larger than `largest` units is not kept. With `ttl`, an entry older than `ttl` seconds is
    gone."""

    def __init__(self, limit: int, *, sizeof: Callable[[Any], int] | None = None, ttl: float | None = None,
                 largest: int | None = None):
        self.limit, self.sizeof, self.ttl = limit, sizeof, ttl
        self.largest = limit if largest is None else largest
        self.size = 0  # entries, or units of sizeof
        self._items: "collections.OrderedDict[Hashable, tuple[Any, int, float]]" = collections.OrderedDict()
        self._lock = threading.Lock()

    def __len__(self) -> int:
        return len(self._items)

    def get(self, key: Hashable, default: Any = None) -> Any:
        with self._lock:
            item = self._items.get(key)
            if item is None:
                return default
            if self.ttl is not None and time.monotonic() - item[2] > self.ttl:
                self._drop(key)
                return default
            self._items.move_to_end(key)
            return item[0]

    def put(self, key: Hashable, value: Any) -> bool:
        """Keep `value` under `key`; False when it is larger than `largest` (not kept)."""
        size = 1 if self.sizeof is None else self.sizeof(value)
        if size > self.largest:
            return False
        born = time.monotonic() if self.ttl is not None else 0.0
        with self._lock:
            if key in self._items:
                self._drop(key)
            self._items[key] = (value, size, born)
            self.size += size
            while self.size > self.limit:
                self._drop(next(iter(self._items)))
        return True

    def pop(self, key: Hashable) -> None:
        with self._lock:
            if key in self._items:
                self._drop(key)

    def clear(self) -> None:
        with self._lock:
            self._items.clear()
            self.size = 0

    def _drop(self, key: Hashable) -> None:
        self.size -= self._items.pop(key)[1]


def in_process(entries: int) -> Callable:
    """Memoize a function of hashable positional arguments in an `LRU` of `entries` results in
    this process only, uncounted (for what cannot or need not be shared, such as a built
    Cosmology). An exception is passed on and not kept. ``fn.cache_clear()`` empties it."""
    def decorate(fn: Callable) -> Callable:
        store = LRU(entries)

        @functools.wraps(fn)
        def wrapper(*args):
            value = store.get(args, _MISSING)
            if value is _MISSING:
                value = fn(*args)
                store.put(args, value)
            return value

        wrapper.cache_clear = store.clear
        return wrapper
    return decorate


def _front(entries: int = FRONT_ENTRIES) -> LRU:
    """This app's front LRU for memoized functions bounded to `entries` results (the large
    model results share one; small whole answers keep more in their own)."""
    fronts = current_app.extensions[_FRONTS]
    front = fronts.get(entries)
    if front is None:
        front = fronts.setdefault(entries, LRU(entries))
    return front


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


def request_deadline() -> float | None:
    """The current request's computation deadline (``time.monotonic()``), or None outside one."""
    if has_request_context():
        deadline = request.environ.get(_DEADLINE)
        return None if deadline is None else deadline[0]
    return None


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
    results = [front.get(k, _MISSING) for k in keys]
    missing = [i for i, r in enumerate(results) if r is _MISSING]
    _count("local", len(calls) - len(missing))
    if not missing:
        return results
    stored = cache.get_many(*[keys[i] for i in missing]) if shared else [None] * len(missing)
    fresh = {}
    try:
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
            front.put(keys[i], results[i])
    finally:  # what was computed before a refusal (the budget, say) stays cached
        if fresh and shared:
            store_shared(fresh)
    return results


_PENDING = "fdesk.cache.pending"  # request environ key: [(mapping, timeout)] for the shared cache


def store_shared(mapping: dict, timeout: int | None = None) -> None:
    """Put `mapping` in the shared backend (with its own time to live in seconds, or the
    backend's default): during a request once its response has been sent (the hook `attach`
    installs, or `flush_writes`), so writing the files or the Redis round trip never delays
    an answer; outside a request at once. A failed write only costs a recomputation."""
    if has_request_context():
        request.environ.setdefault(_PENDING, []).append((mapping, timeout))
    else:
        _write(cache.cache, [(mapping, timeout)])


def _write(backend, pending: list[tuple[dict, int | None]]) -> None:
    by_timeout: dict[int | None, dict] = {}  # one round trip per time to live
    for mapping, timeout in pending:
        by_timeout.setdefault(timeout, {}).update(mapping)
    for timeout, mapping in by_timeout.items():
        try:
            backend.set_many(mapping, timeout=timeout)
        except Exception:  # noqa: BLE001 - the guarded backend has its own fallback; this is the last net
            logger.warning("could not store %d results in the shared cache", len(mapping), exc_info=True)


def _write_pending(environ: dict, backend) -> None:
    pending = environ.pop(_PENDING, None)
    if pending:
        _write(backend, pending)


def flush_writes() -> None:
    """Write what this request has left for the shared cache now, not once its response has
    been sent (benchmarks that time a request's work without a response); outside a request
    there is nothing left: writes there are immediate."""
    if has_request_context():
        _write_pending(request.environ, cache.cache)


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


class PrefixedFileSystemCache(FileSystemCache):
    """flask-caching's FileSystemCache with ``CACHE_KEY_PREFIX`` in every entry's file name.

    flask-caching's own factory for it drops the prefix (Redis and the in-process caches keep
    it), so without this two versions on one folder would read each other's entries. The
    folder's entry count (for ``CACHE_THRESHOLD``) stays one file that every version shares."""

    def __init__(self, *args, key_prefix: str = "", **kwargs):
        super().__init__(*args, **kwargs)
        self.key_prefix = key_prefix

    @classmethod
    def factory(cls, app, config, args, kwargs):
        kwargs["key_prefix"] = config["CACHE_KEY_PREFIX"]
        return super().factory(app, config, args, kwargs)

    def _get_filename(self, key) -> str:
        if isinstance(key, str) and key != self._fs_count_file:
            key = self.key_prefix + key
        return super()._get_filename(key)


_FILE_CACHES = ("FileSystemCache", "flask_caching.backends.FileSystemCache",
                "flask_caching.backends.filesystemcache.FileSystemCache")
_REDIS_CACHES = ("RedisCache", "flask_caching.backends.RedisCache",
                 "flask_caching.backends.rediscache.RedisCache")


def attach(flask_app) -> None:
    """Attach both layers to a configured Flask app: the key prefix (with `code_fingerprint`,
    unless ``CACHE_KEY_PREFIX`` is set), the shared backend behind its guard (a FileSystemCache
    folder that cannot be written means an in-process cache, with one warning; a RedisCache
    without client options gets short timeouts), this app's memo fronts, and the hook that
    writes a request's results to the shared cache once its response has been sent."""
    config = flask_app.config
    config.setdefault("CACHE_KEY_PREFIX", f"fdesk-{code_fingerprint()}-")
    backend = {}
    if config["CACHE_TYPE"] in _FILE_CACHES:
        reason = writable_folder(config["CACHE_DIR"])
        if reason is None:
            backend["CACHE_TYPE"] = f"{__name__}.{PrefixedFileSystemCache.__name__}"
        else:
            logger.warning("cache folder is not writable (%s); using an in-process cache instead. "
                           "Set FDESK_CACHE_DIR to a writable folder to share results between workers",
                           reason)
            config["CACHE_TYPE"] = "SimpleCache"
    elif config["CACHE_TYPE"] in _REDIS_CACHES and not config.get("CACHE_OPTIONS"):
        config["CACHE_OPTIONS"] = redis_options()
    cache.init_app(flask_app, backend)  # config["CACHE_TYPE"] stays what was asked for
    guard_backend(flask_app)
    flask_app.extensions[_FRONTS] = {}

    @flask_app.after_request
    def _write_once_sent(response):
        # read at close time: after_request hooks that run after this one may still add writes
        response.call_on_close(functools.partial(_write_pending, request.environ, cache.cache))
        return response
