"""Uploaded measurement sets: parsed, then kept in the durable store (`server.set_store`).

A link names a stored set as ``data=<hash>``: the first `codec.DATA_HASH_LENGTH` hex digits of
the SHA-256 of the measurement file and the covariance file (the raw bytes as uploaded, so the
same files always give the same link). The files are parsed (all or nothing, by
`model.parse_measurements`) *before* they are stored, so the store only ever holds valid sets.
Sets are data, not cache: they stay until an administrator removes them
(``python -m server.admin data remove|prune``), and a link to a removed set says exactly that.
Model results stay in the flask-caching backend (`server.cache`).

`attach` opens the app's store at start-up (``DATABASE_URL``, default SQLite in
``$XDG_DATA_HOME/friedmann-desk/``), logs when it cannot, and copies sets found in the old
cache location into it once (`migrate_from_cache`).

Bounds: each file is refused above the parser's limits (`model.MeasurementLimits`: 1 MiB of
measurements, 5000 rows, 200 characters a cell) and a covariance file above
`MAX_COVARIANCE_BYTES`; the store holds at most ``DATA_MAX_BYTES`` (default 2 GiB); one client
address uploads at most ``UPLOAD_RATE_LIMIT`` sets per ``UPLOAD_RATE_WINDOW_SECONDS``. Parsed
sets are kept per process in a `cache.LRU` bounded in bytes (`PARSED_MEMO_BYTES`).

Errors, drawn as a tree (`status` is the HTTP answer the API gives)::

    ValueError
    └── DataError                 a stored-data reference or upload cannot be used; .field   400
        ├── DataNotFound          no set under this hash (removed, or never stored here)     404
        ├── DataRejected          the upload breaks the format; .line, .column (parser)      400
        ├── UploadRateLimited     this address has used its uploads; .retry_after            429
        ├── DataUnavailable       the store cannot be opened, read or written                503
        └── DataStoreFull         the store is at its byte bound (existing links still work) 507
"""

from __future__ import annotations

import datetime as dt
import hashlib
import importlib.resources
import logging
import math
from dataclasses import dataclass, fields
from pathlib import Path

import numpy as np
from cachelib.serializers import FileSystemSerializer
from flask import current_app, has_request_context, request

import model
from server import codec
from server.cache import LRU, cache
from server.set_store import RateLimited, SetStore, StoreFull, StoreUnavailable

__all__ = ["DataError", "DataNotFound", "DataRejected", "DataUnavailable", "DataStoreFull", "UploadRateLimited",
           "StoredData", "store", "load", "content_hash", "attach", "set_store", "migrate_from_cache",
           "demo_bytes", "DEMO_PATH", "MAX_COVARIANCE_BYTES", "LIMITS", "REMOVED_MESSAGE", "PARSED_MEMO_BYTES"]

logger = logging.getLogger(__name__)

# package data (pyproject's package-data), so an installed copy and the container have it
DEMO_PATH = importlib.resources.files("server").joinpath("demo", "demo_synthetic.csv")
# A covariance of a few hundred rows is tens of kB; 4 MiB (about 500 x 500 entries of 16
# characters) keeps one stored set small (judgement, no source).
MAX_COVARIANCE_BYTES = 4 << 20
LIMITS = model.MeasurementLimits(max_covariance_bytes=MAX_COVARIANCE_BYTES)
PARSED_MEMO_BYTES = 64 << 20  # parsed sets kept per process, by their arrays' bytes (judgement)
REMOVED_MESSAGE = "this data set was removed from this server"
_REUPLOAD = "upload the file again on the Data tab (or POST it to /api/v1/data) to get a working link"
_EXTENSION = "fdesk_data_store"
_OLD_KEY = "measurements:"  # where earlier versions kept sets in the cache backend


class DataError(ValueError):
    """A stored-data reference or an upload cannot be used. `field` names the link key or the
    upload field at fault; the message says what is accepted."""

    status = 400

    def __init__(self, field: str, message: str):
        self.field = field
        super().__init__(message)


class DataNotFound(DataError):
    """No measurement set is stored under this hash (removed, or never stored here)."""

    status = 404


class DataRejected(DataError):
    """An upload breaks the measurement format; `line` and `column` come from the parser."""

    def __init__(self, field: str, message: str, line: int | None = None, column: int | None = None,
                 column_name: str | None = None):
        self.line, self.column, self.column_name = line, column, column_name
        super().__init__(field, message)


class UploadRateLimited(DataError):
    """This client address has had its `limit` uploads in the last `window` seconds."""

    status = 429

    def __init__(self, limit: int, window: float, retry_after: float):
        self.limit, self.window, self.retry_after = limit, window, int(math.ceil(retry_after))
        super().__init__("data", f"data: upload rate limit reached: at most {limit} uploads per {window:g} s "
                                 f"from one address (UPLOAD_RATE_LIMIT); nothing was stored, try again in "
                                 f"{self.retry_after} s")


class DataUnavailable(DataError):
    """The measurement store cannot be opened, read or written; nothing was stored."""

    status = 503


class DataStoreFull(DataError):
    """The store is at its byte bound; sets already stored stay readable."""

    status = 507


@dataclass(frozen=True)
class StoredData:
    """A stored, parsed measurement set and its reference."""

    hash: str
    measurements: model.MeasurementSet
    name: str  # file name as uploaded (text only, for display)


def _digest(measurements: bytes, covariance: bytes | None) -> str:
    digest = hashlib.sha256()
    digest.update(len(measurements).to_bytes(8, "big"))
    digest.update(measurements)
    if covariance is not None:
        digest.update(b"covariance")
        digest.update(covariance)
    return digest.hexdigest()


def content_hash(measurements: bytes, covariance: bytes | None) -> str:
    """The reference of a pair of files: hex SHA-256 of both, cut to `codec.DATA_HASH_LENGTH`."""
    return _digest(measurements, covariance)[:codec.DATA_HASH_LENGTH]


def _as_bytes(value, field: str) -> bytes | None:
    if value is None:
        return None
    if isinstance(value, str):
        return value.encode("utf-8", "surrogatepass")
    if isinstance(value, (bytes, bytearray, memoryview)):
        return bytes(value)
    raise DataRejected(field, f"{field}: expected the file's text, got {type(value).__name__}")


def _parse(measurements: bytes, covariance: bytes | None) -> model.MeasurementSet:
    if len(measurements) > LIMITS.max_bytes:
        raise DataRejected("measurements", f"measurements file: {len(measurements)} bytes; the limit is "
                                           f"{LIMITS.max_bytes} bytes (1 MiB)", 1, 1)
    if covariance is not None and len(covariance) > LIMITS.max_covariance_bytes:
        raise DataRejected("covariance", f"covariance file: {len(covariance)} bytes; the limit is "
                                         f"{LIMITS.max_covariance_bytes} bytes (4 MiB)", 1, 1)
    try:
        return model.parse_measurements(measurements, covariance, limits=LIMITS)
    except model.MeasurementFormatError as err:
        raise DataRejected(err.source, str(err), err.line, err.column, err.column_name) from None


def _parsed_bytes(entry: StoredData) -> int:
    """Memory a parsed set holds: its arrays' bytes and its text columns (about 50 bytes of
    object per string), plus a little for the objects."""
    values = [getattr(entry.measurements, f.name) for f in fields(entry.measurements)]
    return 4096 + sum(v.nbytes for v in values if isinstance(v, np.ndarray)) + \
        sum(len(text) + 50 for v in values if isinstance(v, tuple) for text in v)


_MEMO = "fdesk_parsed_sets"  # app.extensions key: this app's parsed sets by hash, in this process


def _memo() -> LRU:
    """The app's parsed sets by hash (a page update scores several models against one set)."""
    return current_app.extensions[_MEMO]


# ----------------------------------------------------------------------------- the app's store


def attach(flask_app) -> SetStore:
    """Open the app's store (``DATABASE_URL``, ``DATA_MAX_BYTES``, ``DATA_STORE_TIMEOUT_SECONDS``)
    and migrate sets from the old cache location once. A store that cannot be opened is
    logged now, reported by ``/healthz`` and tried again on later requests."""
    config = flask_app.config
    store_ = SetStore(config["DATABASE_URL"] or None, max_bytes=int(config["DATA_MAX_BYTES"]),
                      timeout=float(config["DATA_STORE_TIMEOUT_SECONDS"]),
                      retry_seconds=float(config["CACHE_RETRY_SECONDS"]))
    flask_app.extensions[_EXTENSION] = store_
    flask_app.extensions[_MEMO] = LRU(PARSED_MEMO_BYTES, sizeof=_parsed_bytes)
    if store_.open():
        try:
            migrate_from_cache(flask_app, store_)
        except StoreUnavailable as err:
            logger.warning("measurement sets in the old cache location were not migrated yet: %s", err)
    return store_


def set_store(flask_app=None) -> SetStore:
    """The store of `flask_app` (default: the current app)."""
    return (flask_app or current_app).extensions[_EXTENSION]


def _is_old_entry(value) -> bool:
    return isinstance(value, dict) and isinstance(value.get("measurements"), bytes) and \
        isinstance(value.get("covariance"), (bytes, type(None))) and isinstance(value.get("name", ""), str)


def _old_cache_entries(flask_app):
    """Sets earlier versions kept in the cache backend: ``{"measurements", "covariance", "name"}``
    dicts, from the cache folder's files (any key prefix, expired or not) or Redis keys."""
    config = flask_app.config
    kind = str(config.get("CACHE_TYPE", "")).rsplit(".", 1)[-1]
    if kind == "FileSystemCache":
        folder = Path(config.get("CACHE_DIR") or "")
        if not folder.is_dir():
            return
        for path in sorted(folder.iterdir()):
            if not path.is_file() or path.name.startswith(".") or path.name.endswith(".__wz_cache"):
                continue
            try:
                with open(path, "rb") as handle:
                    head = handle.read(200)  # 4 bytes of expiry, then the pickle
                    if _OLD_KEY[:-1].encode() not in head:
                        continue  # a model result: not worth unpickling
                    handle.seek(4)
                    # read as the file cache itself reads them: this server's own files (README, Security)
                    value = FileSystemSerializer().load(handle)
            except Exception:  # noqa: BLE001 - an unreadable file is no set
                continue
            if _is_old_entry(value):
                yield value
    elif kind == "RedisCache":
        guarded = flask_app.extensions.get("cache", {}).get(cache)
        primary = getattr(guarded, "primary", guarded)
        client = getattr(primary, "_read_client", None)
        if client is None:
            return
        try:
            for key in client.scan_iter(match=f"*{_OLD_KEY}*", count=500):
                value = primary.serializer.loads(client.get(key))
                if _is_old_entry(value):
                    yield value
        except Exception as err:  # noqa: BLE001 - Redis down: tried again at the next start
            logger.warning("could not look for measurement sets in Redis (%s)", type(err).__name__)
            raise StoreUnavailable("Redis was not reachable") from None


def migrate_from_cache(flask_app, store_: SetStore) -> int:
    """Copy the sets found in the old cache location into the store, once per location;
    returns how many were new there. Sets are parsed first (an unreadable one is skipped)
    and copied whatever the byte bound (they were there before it)."""
    config = flask_app.config
    location = config.get("CACHE_DIR") if "FileSystem" in str(config.get("CACHE_TYPE")) else \
        config.get("CACHE_REDIS_URL") or config.get("CACHE_REDIS_HOST")
    marker = f"migrated-from-cache:{config.get('CACHE_TYPE')}:{location}"
    if store_.meta_get(marker) is not None:
        return 0
    copied = 0
    for value in _old_cache_entries(flask_app):
        raw, cov = value["measurements"], value["covariance"]
        try:
            parsed = _parse(raw, cov)
        except DataRejected:
            continue
        copied += store_.put(content_hash(raw, cov), _digest(raw, cov), raw, cov, value.get("name", "")[:120],
                             len(parsed), bounded=False)
    store_.meta_set(marker, f"{dt.datetime.now(dt.timezone.utc).isoformat()} {copied} sets")
    if copied:
        logger.warning("copied %d measurement sets from the old cache location into the data store", copied)
    return copied


# ----------------------------------------------------------------------------- store and load


def _note_upload(store_: SetStore) -> None:
    if not has_request_context():
        return
    config = current_app.config
    limit = int(config["UPLOAD_RATE_LIMIT"])
    if limit <= 0:
        return
    try:
        store_.note_upload(request.remote_addr or "unknown", limit,
                           float(config["UPLOAD_RATE_WINDOW_SECONDS"]))
    except RateLimited as err:
        raise UploadRateLimited(err.limit, err.window, err.retry_after) from None


def _unavailable(err: StoreUnavailable, stored: bool) -> DataUnavailable:
    logger.warning("data store: %s", err)
    what = "nothing was stored; try again later" if stored else "try again later"
    return DataUnavailable("data", f"data: {err}; {what}, or tell the server's keeper")


def store(measurements, covariance=None, name: str = "") -> StoredData:
    """Parse and store a measurement file (and covariance file); returns the stored set once
    its transaction has committed.

    Raises `DataRejected` (naming file, line and column) for anything the format refuses,
    `UploadRateLimited`, `DataStoreFull` or `DataUnavailable`; nothing is stored then. Storing
    the same files again costs nothing (and works when the store is full)."""
    store_ = set_store()
    try:
        _note_upload(store_)
    except StoreUnavailable as err:
        raise _unavailable(err, True) from None
    raw = _as_bytes(measurements, "measurements")
    if raw is None:
        raise DataRejected("measurements", "measurements: no file given; upload or paste a table "
                                           "with the columns z,kind,value,error")
    cov = _as_bytes(covariance, "covariance")
    if cov is not None and not cov.strip():
        cov = None  # an empty covariance field means: no covariance file
    parsed = _parse(raw, cov)
    full = _digest(raw, cov)
    digest = full[:codec.DATA_HASH_LENGTH]
    name = str(name or "")[:120]
    try:
        store_.put(digest, full, raw, cov, name, len(parsed))
    except StoreFull as err:
        raise DataStoreFull("data", f"data: this server's measurement store is full ({err.used} of "
                                    f"{err.limit} bytes used, DATA_MAX_BYTES; this set needs {err.size}); nothing "
                                    "was stored. Links to stored sets keep working; ask the server's keeper to "
                                    "remove old sets (python -m server.admin data prune)") from None
    except StoreUnavailable as err:
        raise _unavailable(err, True) from None
    entry = StoredData(digest, parsed, name)
    _memo().put(digest, entry)
    return entry


def _not_found(store_: SetStore, digest: str) -> DataNotFound:
    _memo().pop(digest)
    try:
        removed = store_.removed_at(digest) is not None
    except StoreUnavailable:
        removed = False
    if removed:
        return DataNotFound("data", f"data: {REMOVED_MESSAGE} (data={digest}); {_REUPLOAD}")
    return DataNotFound("data", f"data: the measurement set {digest} is no longer stored on this server, or was "
                                f"never uploaded to it; {_REUPLOAD}")


def load(digest: str) -> StoredData:
    """The stored set named `digest`. Raises `DataNotFound` when none is stored (removed, or
    never uploaded here), `DataUnavailable` when the store cannot be read and the set is not
    parsed in this process already, and `DataError` for a reference of the wrong form."""
    if not isinstance(digest, str) or codec.decode(f"data={digest}").view.data != digest:
        raise DataError("data", f"data: {digest!r} is not a stored-data reference; expected "
                                f"{codec.DATA_HASH_LENGTH} lowercase hexadecimal digits")
    store_ = set_store()
    hit = _memo().get(digest)
    try:
        if hit is not None:
            if store_.exists(digest):  # the store is the truth: a removed set is gone for every worker
                return hit
            raise _not_found(store_, digest)
        row = store_.get(digest)
    except StoreUnavailable as err:
        if hit is not None:
            return hit  # parsed here already: the link keeps working while the store is out
        raise _unavailable(err, False) from None
    if row is None:
        raise _not_found(store_, digest)
    entry = StoredData(digest, _parse(row.measurements, row.covariance), row.file_name)
    _memo().put(digest, entry)
    return entry


def demo_bytes() -> bytes:
    """The synthetic demo table shipped in ``server/demo/`` (made by scripts/make_demo_data.py)."""
    return DEMO_PATH.read_bytes()
