"""The durable store of uploaded measurement sets: one SQLAlchemy Core schema, SQLite or PostgreSQL.

`SetStore` is the whole interface the server uses: `put`, `get`, `exists`, `stats`, plus what
the admin command needs (`listing`, `remove`, `prune`), the per-address upload count
(`note_upload`) and a small key/value table for one-off jobs (`meta_get`, `meta_set`). It knows
nothing of Flask or of the measurement format: rows are raw bytes under their content hash.

Engines (``DATABASE_URL``, env ``FDESK_DATABASE_URL``, any SQLAlchemy URL):

* SQLite by default, one file in ``$XDG_DATA_HOME/friedmann-desk/`` (`default_url`), in WAL
  mode (``PRAGMA journal_mode=WAL``) so every worker of one host reads while one writes, with
  ``synchronous=FULL`` so a committed upload survives a power cut, and a busy timeout so
  concurrent writers wait instead of failing.
* PostgreSQL for several hosts: ``postgresql://...`` is read as ``postgresql+psycopg://...``
  (the ``psycopg`` driver, the project's ``postgres`` extra).

Tables, drawn as a tree::

    measurement_sets   hash (24 hex, the link's data=...) · sha256 · file_name · uploaded_at ·
                       byte_size · row_count · measurements (bytes) · covariance (bytes or NULL)
    removed_sets       hash · removed_at      (so a link to a removed set can say exactly that)
    upload_attempts    client (hashed address) · at   (the rate limit, kept for one window)
    store_meta         key · value            (e.g. that the old cache was migrated)

Errors: `StoreUnavailable` (cannot be opened, read or written: the transaction was rolled back,
nothing was stored) and `StoreFull` (the byte bound, ``DATA_MAX_BYTES``), both `StoreError`.
Every write is one transaction; `put` returns only after it has committed.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import logging
import os
import threading
import time
import weakref
from dataclasses import dataclass
from pathlib import Path

from sqlalchemy import (BigInteger, Column, DateTime, Float, Index, Integer, LargeBinary, MetaData, String, Table,
                        Text, create_engine, delete, event, func, insert, select, update)
from sqlalchemy.engine import make_url
from sqlalchemy.exc import DBAPIError, IntegrityError, SQLAlchemyError

__all__ = ["SetStore", "StoreError", "StoreUnavailable", "StoreFull", "RateLimited", "StoredRow",
           "default_url", "user_data_dir", "SCHEMA"]

logger = logging.getLogger(__name__)

SCHEMA = MetaData()
# small columns first, the blobs last: SQLite then reads a row's size without its overflow pages
sets = Table(
    "measurement_sets", SCHEMA,
    Column("hash", String(64), primary_key=True),
    Column("sha256", String(64), nullable=False),
    Column("file_name", Text, nullable=False),
    Column("uploaded_at", DateTime(timezone=True), nullable=False),
    Column("byte_size", BigInteger, nullable=False),
    Column("row_count", Integer, nullable=False),
    Column("measurements", LargeBinary, nullable=False),
    Column("covariance", LargeBinary, nullable=True),
    Index("ix_measurement_sets_uploaded_at", "uploaded_at"),
)
removed = Table(
    "removed_sets", SCHEMA,
    Column("hash", String(64), primary_key=True),
    Column("removed_at", DateTime(timezone=True), nullable=False),
)
uploads = Table(
    "upload_attempts", SCHEMA,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("client", String(64), nullable=False),
    Column("at", Float, nullable=False),
    Index("ix_upload_attempts_client_at", "client", "at"),
)
meta = Table(
    "store_meta", SCHEMA,
    Column("key", String(200), primary_key=True),
    Column("value", Text, nullable=False),
)


class StoreError(RuntimeError):
    """The store refused an operation; the message says why, for the person who asked."""


class StoreUnavailable(StoreError):
    """The store cannot be opened, read or written now (nothing was stored)."""


class StoreFull(StoreError):
    """Storing the set would take the store past its byte bound."""

    def __init__(self, used: int, size: int, limit: int):
        self.used, self.size, self.limit = used, size, limit
        super().__init__(f"the store holds {used} bytes of at most {limit}; this set needs {size} more")


class RateLimited(StoreError):
    """This client address has used its uploads for the current window."""

    def __init__(self, limit: int, window: float, retry_after: float):
        self.limit, self.window, self.retry_after = limit, window, retry_after
        super().__init__(f"at most {limit} uploads per {window:g} s from one address")


@dataclass(frozen=True)
class StoredRow:
    """One stored set as read back (`get`; `listing` leaves the bytes out)."""

    hash: str
    sha256: str
    file_name: str
    uploaded_at: dt.datetime
    byte_size: int
    row_count: int
    measurements: bytes | None = None
    covariance: bytes | None = None


def user_data_dir() -> Path:
    """Per-user data folder (XDG base directory rules): ``$XDG_DATA_HOME/friedmann-desk``."""
    base = os.environ.get("XDG_DATA_HOME") or os.path.join(os.path.expanduser("~"), ".local", "share")
    return Path(base) / "friedmann-desk"


def default_url() -> str:
    """The SQLite file used when no ``DATABASE_URL`` is configured."""
    return f"sqlite:///{user_data_dir() / 'measurements.sqlite3'}"


def _utc(value: dt.datetime) -> dt.datetime:
    """SQLite hands datetimes back without their zone; everything is stored in UTC."""
    return value if value.tzinfo is not None else value.replace(tzinfo=dt.timezone.utc)


def _client_key(address: str) -> str:
    """Addresses are kept hashed, and only for one rate window."""
    return hashlib.sha256(f"fdesk-upload:{address}".encode()).hexdigest()[:32]


def _dispose_after_fork(engine_ref) -> None:
    engine = engine_ref()
    if engine is not None:
        engine.dispose(close=False)  # a forked child opens its own connections (SQLAlchemy's advice)


class SetStore:
    """Measurement sets in one database (see the module docstring).

    `url` is any SQLAlchemy URL (None: `default_url`); `max_bytes` bounds the stored bytes
    (0: no bound); `timeout` is how long one operation waits for a lock or a connection, in
    seconds; after a failure the database is tried again on the next call `retry_seconds`
    later (calls in between fail at once)."""

    def __init__(self, url: str | None = None, *, max_bytes: int = 0, timeout: float = 5.0,
                 retry_seconds: float = 5.0):
        parsed = make_url(url or default_url())
        if parsed.drivername == "postgresql":
            parsed = parsed.set(drivername="postgresql+psycopg")
        self.url = parsed
        self.kind = "SQLite" if parsed.get_backend_name() == "sqlite" else (
            "PostgreSQL" if parsed.get_backend_name() == "postgresql" else parsed.get_backend_name())
        self.max_bytes = int(max_bytes or 0)
        self.timeout = float(timeout)
        self.retry_seconds = float(retry_seconds)
        self.engine = None
        self.problem: str | None = "not opened yet"
        self._next_try = 0.0
        self._lock = threading.Lock()

    # ------------------------------------------------------------------ opening and failures

    @property
    def where(self) -> str:
        """The database, for the server's own log (never the password)."""
        return self.url.render_as_string(hide_password=True)

    @property
    def available(self) -> bool:
        """True when the last operation succeeded (tries to open it again when due)."""
        if self.problem is not None and time.monotonic() >= self._next_try:
            self.open()
        return self.problem is None

    def open(self) -> bool:
        """Connect and create the tables when missing; False (and the reason in `problem`, one
        warning in the log) when the database cannot be opened."""
        with self._lock:
            try:
                if self.engine is None:
                    self.engine = self._create_engine()
                for attempt in (1, 2, 3):
                    try:
                        SCHEMA.create_all(self.engine)  # checks first: existing tables are kept
                        break
                    except DBAPIError:  # another worker created the same table meanwhile
                        if attempt == 3:
                            raise
                        time.sleep(0.05 * attempt)
            except (SQLAlchemyError, OSError) as err:
                self._fail(err)
                return False
            if self.problem is not None and self.problem != "not opened yet":
                logger.warning("data store %s is available again", self.where)
            self.problem = None
            return True

    def _create_engine(self):
        options: dict = {"pool_pre_ping": True}
        if self.kind == "SQLite":
            path = self.url.database
            if path and path != ":memory:":
                Path(path).expanduser().parent.mkdir(parents=True, exist_ok=True)
            options["connect_args"] = {"timeout": self.timeout}
        elif self.kind == "PostgreSQL":
            options["connect_args"] = {"connect_timeout": max(2, int(round(self.timeout))),
                                       "options": f"-c lock_timeout={int(self.timeout * 1000)}"}
        engine = create_engine(self.url, **options)
        if self.kind == "SQLite":
            @event.listens_for(engine, "connect")
            def _pragmas(dbapi_connection, _record):
                cursor = dbapi_connection.cursor()
                cursor.execute("PRAGMA journal_mode=WAL")  # readers and one writer at once
                cursor.execute("PRAGMA synchronous=FULL")  # a commit is on disk before it returns
                cursor.execute(f"PRAGMA busy_timeout={int(self.timeout * 1000)}")
                cursor.close()
        os.register_at_fork(after_in_child=lambda ref=weakref.ref(engine): _dispose_after_fork(ref))
        return engine

    def _fail(self, err: BaseException) -> None:
        reason = _reason(err)
        first = self.problem is None or self.problem == "not opened yet"
        self.problem = reason
        self._next_try = time.monotonic() + self.retry_seconds
        if first:
            logger.warning("data store %s unavailable (%s); uploads are refused with 503 until it is back",
                           self.where, reason)

    def ping(self) -> bool:
        """True when the database answers now (``SELECT 1``); a store marked unavailable is
        tried again when due. A failure marks it unavailable, with one warning."""
        if self.problem is not None:
            return self.available
        try:
            with self.engine.connect() as conn:
                conn.exec_driver_sql("SELECT 1")
        except (SQLAlchemyError, OSError) as err:
            self._fail(err)
            return False
        return True

    def _usable(self):
        if self.problem is not None:
            if time.monotonic() < self._next_try or not self.open():
                raise StoreUnavailable(f"the {self.kind} measurement store cannot be opened ({self.problem})")
        return self.engine

    def _run(self, work, *, write: bool):
        """Run `work(connection)` in one transaction; database failures become `StoreUnavailable`."""
        engine = self._usable()
        try:
            with engine.begin() as conn:
                return work(conn)
        except (StoreFull, RateLimited, IntegrityError):
            raise
        except (DBAPIError, SQLAlchemyError, OSError) as err:
            # unreachable: marked unavailable until it answers; merely locked or read-only: not
            self.ping()
            verb = "written" if write else "read"
            raise StoreUnavailable(f"the {self.kind} measurement store cannot be {verb} ({_reason(err)})") from None

    # ------------------------------------------------------------------ the interface

    def put(self, digest: str, sha256: str, measurements: bytes, covariance: bytes | None, file_name: str,
            row_count: int, *, bounded: bool = True, uploaded_at: dt.datetime | None = None) -> bool:
        """Store one set; True when it is new, False when it was stored already (content
        addressed: nothing is written then). Returns only once the transaction has committed.
        Raises `StoreFull` past the byte bound (unless `bounded` is false: migration),
        `StoreUnavailable` when the database cannot be written."""
        size = len(measurements) + len(covariance or b"")
        row = {"hash": digest, "sha256": sha256, "file_name": file_name, "byte_size": size,
               "row_count": int(row_count), "measurements": measurements, "covariance": covariance,
               "uploaded_at": uploaded_at or dt.datetime.now(dt.timezone.utc)}

        def work(conn):
            if conn.execute(select(sets.c.hash).where(sets.c.hash == digest)).first() is not None:
                return False
            # the insert takes the write lock first, so the total below counts every commit
            conn.execute(insert(sets).values(**row))
            if bounded and self.max_bytes:
                used = conn.execute(select(func.coalesce(func.sum(sets.c.byte_size), 0))).scalar_one()
                if used > self.max_bytes:
                    raise StoreFull(int(used) - size, size, self.max_bytes)  # rolled back
            conn.execute(delete(removed).where(removed.c.hash == digest))
            return True

        try:
            return self._run(work, write=True)
        except IntegrityError:
            return False  # another worker stored the same files at the same moment

    def get(self, digest: str) -> StoredRow | None:
        """The stored set with its bytes, or None."""
        found = self._run(lambda conn: conn.execute(select(sets).where(sets.c.hash == digest)).first(),
                          write=False)
        return None if found is None else _row(found)

    def exists(self, digest: str) -> bool:
        return self._run(lambda conn: conn.execute(select(sets.c.hash).where(sets.c.hash == digest)).first(),
                         write=False) is not None

    def removed_at(self, digest: str) -> dt.datetime | None:
        """When an administrator removed this set (None: never stored here, or stored now)."""
        when = self._run(lambda conn: conn.execute(select(removed.c.removed_at).where(removed.c.hash == digest))
                         .scalar(), write=False)
        return None if when is None else _utc(when)

    def stats(self) -> dict:
        """``{"engine", "sets", "bytes", "max_bytes", "oldest", "newest"}`` (times in UTC)."""
        def work(conn):
            return conn.execute(select(func.count(), func.coalesce(func.sum(sets.c.byte_size), 0),
                                       func.min(sets.c.uploaded_at), func.max(sets.c.uploaded_at))).one()
        count, used, oldest, newest = self._run(work, write=False)
        return {"engine": self.kind, "sets": int(count), "bytes": int(used), "max_bytes": self.max_bytes,
                "oldest": None if oldest is None else _utc(oldest), "newest": None if newest is None else _utc(newest)}

    def note_upload(self, address: str, limit: int, window: float, now: float | None = None) -> None:
        """Count one upload from `address`; `RateLimited` (nothing counted) when it has had
        `limit` in the last `window` seconds. Attempts older than the window are forgotten."""
        now = time.time() if now is None else now
        client = _client_key(address)

        def work(conn):
            conn.execute(delete(uploads).where(uploads.c.at < now - window))
            recent = conn.execute(select(func.count(), func.min(uploads.c.at))
                                  .where(uploads.c.client == client, uploads.c.at >= now - window)).one()
            if recent[0] >= limit:
                raise RateLimited(limit, window, max(1.0, recent[1] + window - now))
            conn.execute(insert(uploads).values(client=client, at=now))

        self._run(work, write=True)

    # ------------------------------------------------------------------ administration

    def listing(self) -> list[StoredRow]:
        """Every stored set, oldest first, without the bytes."""
        columns = [c for c in sets.c if c.name not in ("measurements", "covariance")]
        found = self._run(lambda conn: conn.execute(select(*columns).order_by(sets.c.uploaded_at)).all(),
                          write=False)
        return [_row(r) for r in found]

    def remove(self, digests: list[str], now: dt.datetime | None = None) -> list[str]:
        """Remove these sets (their links then say so); returns the ones that were stored."""
        when = now or dt.datetime.now(dt.timezone.utc)

        def work(conn):
            present = [h for h in digests if conn.execute(select(sets.c.hash).where(sets.c.hash == h)).first()]
            for h in present:
                conn.execute(delete(sets).where(sets.c.hash == h))
                if conn.execute(update(removed).where(removed.c.hash == h).values(removed_at=when)).rowcount == 0:
                    conn.execute(insert(removed).values(hash=h, removed_at=when))
            return present

        return self._run(work, write=True)

    def prune(self, older_than: dt.timedelta, dry_run: bool = False) -> list[StoredRow]:
        """Remove every set uploaded more than `older_than` ago; returns them (oldest first)."""
        cutoff = dt.datetime.now(dt.timezone.utc) - older_than
        old = [r for r in self.listing() if r.uploaded_at < cutoff]
        if not dry_run and old:
            self.remove([r.hash for r in old])
        return old

    def meta_get(self, key: str) -> str | None:
        return self._run(lambda conn: conn.execute(select(meta.c.value).where(meta.c.key == key)).scalar(),
                         write=False)

    def meta_set(self, key: str, value: str) -> None:
        def work(conn):
            if conn.execute(update(meta).where(meta.c.key == key).values(value=value)).rowcount == 0:
                conn.execute(insert(meta).values(key=key, value=value))
        try:
            self._run(work, write=True)
        except IntegrityError:
            pass  # another worker wrote it at the same moment

    def close(self) -> None:
        if self.engine is not None:
            self.engine.dispose()


def _row(found) -> StoredRow:
    values = found._mapping
    return StoredRow(hash=values["hash"], sha256=values["sha256"], file_name=values["file_name"],
                     uploaded_at=_utc(values["uploaded_at"]), byte_size=int(values["byte_size"]),
                     row_count=int(values["row_count"]),
                     measurements=None if values.get("measurements") is None else bytes(values["measurements"]),
                     covariance=None if values.get("covariance") is None else bytes(values["covariance"]))


def _reason(err: BaseException) -> str:
    """A short reason: the driver's exception type and the first line of its message."""
    original = getattr(err, "orig", None) or err
    text = str(original).strip().splitlines()[0] if str(original).strip() else ""
    return f"{type(original).__name__}: {text}"[:200] if text else type(original).__name__
