"""Uploaded measurement sets, stored under their content hash in the configured cache backend.

A link names a stored set as ``data=<hash>``: the first `codec.DATA_HASH_LENGTH` hex digits of
the SHA-256 of the measurement file and the covariance file (the raw bytes as uploaded, so the
same files always give the same link). The files are parsed (all or nothing, by
`model.parse_measurements`) *before* they are stored, so the store only ever holds valid sets.

Bounds: each file is refused above the parser's limits (`model.MeasurementLimits`: 1 MiB of
measurements, 5000 rows, 200 characters a cell) and a covariance file above
`MAX_COVARIANCE_BYTES`; the number of stored entries is bounded by the backend's threshold
(``CACHE_THRESHOLD``) shared with the model results; each set expires ``DATA_TIMEOUT`` seconds
(config, env ``FDESK_DATA_TIMEOUT``, default `DEFAULT_TIMEOUT`) after it was last stored. An
expired or unknown reference raises `DataNotFound`, whose message says so plainly.

Errors, drawn as a tree::

    ValueError
    └── DataError                 a stored-data reference or upload cannot be used; .field
        ├── DataNotFound          no set under this hash (expired, or never stored here)
        └── DataRejected          the upload breaks the format; .line, .column (from the parser)
"""

from __future__ import annotations

import hashlib
import importlib.resources
from dataclasses import dataclass

from flask import current_app

import model
from server import codec
from server.cache import LRU, cache

__all__ = ["DataError", "DataNotFound", "DataRejected", "StoredData", "store", "load", "content_hash",
           "demo_bytes", "DEMO_PATH", "DEFAULT_TIMEOUT", "MAX_COVARIANCE_BYTES", "LIMITS"]

# package data (pyproject's package-data), so an installed copy and the container have it
DEMO_PATH = importlib.resources.files("server").joinpath("demo", "demo_synthetic.csv")
DEFAULT_TIMEOUT = 30 * 24 * 3600  # a month: long enough for a link mailed round a group (judgement)
# A covariance of a few hundred rows is tens of kB; 4 MiB (about 500 x 500 entries of 16
# characters) keeps one stored entry small for the shared cache (judgement, no source).
MAX_COVARIANCE_BYTES = 4 << 20
LIMITS = model.MeasurementLimits(max_covariance_bytes=MAX_COVARIANCE_BYTES)
_PARSED_ENTRIES = 16  # parsed sets kept per process (a few hundred rows are a few hundred kB)
_KEY_PREFIX = "measurements:"


class DataError(ValueError):
    """A stored-data reference or an upload cannot be used. `field` names the link key or the
    upload field at fault; the message says what is accepted."""

    def __init__(self, field: str, message: str):
        self.field = field
        super().__init__(message)


class DataNotFound(DataError):
    """No measurement set is stored under this hash (it expired, or was never stored here)."""


class DataRejected(DataError):
    """An upload breaks the measurement format; `line` and `column` come from the parser."""

    def __init__(self, field: str, message: str, line: int | None = None, column: int | None = None,
                 column_name: str | None = None):
        self.line, self.column, self.column_name = line, column, column_name
        super().__init__(field, message)


@dataclass(frozen=True)
class StoredData:
    """A stored, parsed measurement set and its reference."""

    hash: str
    measurements: model.MeasurementSet
    name: str  # file name as uploaded (text only, for display)


def content_hash(measurements: bytes, covariance: bytes | None) -> str:
    """The reference of a pair of files: hex SHA-256 of both, cut to `codec.DATA_HASH_LENGTH`."""
    digest = hashlib.sha256()
    digest.update(len(measurements).to_bytes(8, "big"))
    digest.update(measurements)
    if covariance is not None:
        digest.update(b"covariance")
        digest.update(covariance)
    return digest.hexdigest()[:codec.DATA_HASH_LENGTH]


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


# Parsed sets by hash, in this process: a page update scores several models against one set.
_parsed = LRU(_PARSED_ENTRIES)


def _timeout() -> int:
    return int(current_app.config.get("DATA_TIMEOUT", DEFAULT_TIMEOUT))


def store(measurements, covariance=None, name: str = "") -> StoredData:
    """Parse and store a measurement file (and covariance file); returns the stored set.

    Raises `DataRejected` (naming file, line and column) for anything the format refuses;
    nothing is stored then. Storing the same files again renews their expiry."""
    raw = _as_bytes(measurements, "measurements")
    if raw is None:
        raise DataRejected("measurements", "measurements: no file given; upload or paste a table "
                                           "with the columns z,kind,value,error")
    cov = _as_bytes(covariance, "covariance")
    if cov is not None and not cov.strip():
        cov = None  # an empty covariance field means: no covariance file
    parsed = _parse(raw, cov)
    digest = content_hash(raw, cov)
    name = str(name or "")[:120]
    ok = cache.set(_KEY_PREFIX + digest, {"measurements": raw, "covariance": cov, "name": name},
                   timeout=_timeout())
    if ok is False:
        raise DataError("data", "data: the measurement set could not be stored (the cache refused it); "
                                "try again, or ask the server's keeper to check the cache")
    entry = StoredData(digest, parsed, name)
    _parsed.put(digest, entry)
    return entry


def load(digest: str) -> StoredData:
    """The stored set named `digest`. Raises `DataNotFound` when none is stored (expired or
    never uploaded here) and `DataError` for a reference of the wrong form."""
    if not isinstance(digest, str) or codec.decode(f"data={digest}").view.data != digest:
        raise DataError("data", f"data: {digest!r} is not a stored-data reference; expected "
                                f"{codec.DATA_HASH_LENGTH} lowercase hexadecimal digits")
    hit = _parsed.get(digest)
    stored = cache.get(_KEY_PREFIX + digest)
    if not isinstance(stored, dict):
        # the shared store is the truth: a set that expired there is gone for every worker
        _parsed.pop(digest)
        raise DataNotFound("data", f"data: the measurement set {digest} is no longer stored (stored sets "
                                   f"expire after {_timeout() // 86400} days, or it was never uploaded to "
                                   "this server); upload the file again to get a working link")
    if hit is not None:
        return hit
    entry = StoredData(digest, _parse(stored["measurements"], stored.get("covariance")),
                       stored.get("name", ""))
    _parsed.put(digest, entry)
    return entry


def demo_bytes() -> bytes:
    """The synthetic demo table shipped in ``server/demo/`` (made by scripts/make_demo_data.py)."""
    return DEMO_PATH.read_bytes()
