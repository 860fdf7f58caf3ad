"""Stored measurement sets (server.data_store on server.set_store) against real engines: SQLite in
the test's folder and a real PostgreSQL server started here (apt's PostgreSQL 15) on a free port.

Check values: the hash against hashlib's SHA-256 of the documented byte layout; parsed sets
against model.parse_measurements called directly; the journal mode against SQLite's own
``PRAGMA journal_mode``; status codes per RFC 9110 (400, 404, 503), RFC 6585 (429) and
RFC 4918 (507); the rest against what the store itself reports."""

from __future__ import annotations

import datetime as dt
import hashlib
import io
import os
import sqlite3
import subprocess
import sys
import time

import numpy as np
import pytest
from cachelib.file import FileSystemCache

import model
from benchmarks._serving import ROOT, free_port
from server import admin, codec, data_store

TABLE = b"z,kind,value,error,label\n0.51,dm_over_rd,13.6,0.25,made-up survey A\n0.8,hubble_parameter,95,9,\n"
COVARIANCE = b"0.0625,0.1\n0.1,81\n"
QUERY = "m1.label=Base&m2.w0=-0.9"


def table(i: int) -> bytes:
    """A different valid one-row table for each i."""
    return f"z,kind,value,error\n0.5,dm_over_rd,{13 + i * 1e-4:.4f},0.2\n".encode()


@pytest.fixture
def make_app(app_factory, database_url):
    def build(**overrides):
        return app_factory(CACHE_TYPE="SimpleCache", DATABASE_URL=database_url, **overrides)
    return build


@pytest.fixture
def app(make_app):
    app = make_app()
    with app.server.app_context():
        yield app


def post(client, body: bytes, address: str = "127.0.0.1"):
    return client.post("/api/v1/data", data=body, content_type="text/csv", environ_overrides={"REMOTE_ADDR": address})


def test_hash_is_the_documented_sha256_prefix_and_a_second_upload_costs_nothing(app):
    stored = data_store.store(TABLE)
    expected = hashlib.sha256(len(TABLE).to_bytes(8, "big") + TABLE).hexdigest()
    assert stored.hash == expected[:codec.DATA_HASH_LENGTH]
    before = data_store.set_store().stats()
    assert data_store.store(TABLE).hash == stored.hash  # same file, same link, no new row
    assert data_store.set_store().stats() == before == {**before, "sets": 1, "bytes": len(TABLE)}
    with_cov = data_store.store(TABLE, COVARIANCE)
    assert with_cov.hash != stored.hash and with_cov.measurements.covariance_source == "file"
    assert data_store.set_store().stats()["bytes"] == 2 * len(TABLE) + len(COVARIANCE)


def test_round_trip_keeps_bytes_name_time_size_and_rows(app):
    stored = data_store.store(TABLE, COVARIANCE, "survey.csv")
    data_store._memo().clear()  # as in another worker: read back from the store
    loaded = data_store.load(stored.hash)
    direct = model.parse_measurements(TABLE, COVARIANCE)
    assert loaded.name == "survey.csv"
    for name in ("z", "value", "error", "covariance"):
        np.testing.assert_array_equal(getattr(loaded.measurements, name), getattr(direct, name))
    assert loaded.measurements.kind.tolist() == direct.kind.tolist()
    row = data_store.set_store().get(stored.hash)
    assert (row.measurements, row.covariance, row.file_name) == (TABLE, COVARIANCE, "survey.csv")
    assert row.sha256 == hashlib.sha256(len(TABLE).to_bytes(8, "big") + TABLE + b"covariance" + COVARIANCE).hexdigest()
    assert (row.byte_size, row.row_count) == (len(TABLE) + len(COVARIANCE), 2)
    assert abs(row.uploaded_at - dt.datetime.now(dt.timezone.utc)) < dt.timedelta(minutes=1)


def test_removed_set_says_exactly_so_and_offers_reupload(app):
    stored = data_store.store(TABLE)
    assert data_store.set_store().remove([stored.hash]) == [stored.hash]
    with pytest.raises(data_store.DataNotFound) as err:
        data_store.load(stored.hash)  # its parsed copy in this process is not believed
    message = str(err.value)
    assert err.value.field == "data" and "this data set was removed from this server" in message
    assert "upload the file again on the Data tab" in message
    r = app.server.test_client().get(f"/api/v1/compare?{QUERY}&data={stored.hash}")
    assert r.status_code == 404 and r.get_json()["error"]["message"] == message
    assert data_store.store(TABLE).hash == stored.hash  # uploaded again: the same link works again
    assert data_store.load(stored.hash).measurements.z.tolist() == [0.51, 0.8]
    assert data_store.set_store().removed_at(stored.hash) is None


def test_unknown_reference_does_not_claim_a_removal(app):
    with pytest.raises(data_store.DataNotFound) as err:
        data_store.load("ab" * (codec.DATA_HASH_LENGTH // 2))
    assert "removed" not in str(err.value) and "never uploaded" in str(err.value)


@pytest.mark.parametrize("text, line, column", [
    (b"z,kind,value,error\n0.5,dm_over_rd,13,0.2\n0.6,dm_over_rd,13,-0.2\n", 3, 4),
    (b"z,kind,value,error\n0.5,dm_over_rd,13,0.2\n0.6,nonsense,13,0.2\n", 3, 2),
])
def test_a_bad_file_stores_nothing(app, text, line, column):
    with pytest.raises(data_store.DataRejected) as err:
        data_store.store(text)
    assert (err.value.line, err.value.column) == (line, column)
    assert data_store.set_store().stats()["sets"] == 0


def test_size_limits(app):
    big = b"z,kind,value,error\n" + b"0.5,dm_over_rd,13,0.2\n" * 60000  # > 1 MiB
    with pytest.raises(data_store.DataRejected, match="limit"):
        data_store.store(big)
    with pytest.raises(data_store.DataRejected, match="covariance file"):
        data_store.store(TABLE, b"1" * (data_store.MAX_COVARIANCE_BYTES + 1))
    with pytest.raises(data_store.DataRejected, match="no file"):
        data_store.store(None)


def test_malformed_reference(app):
    with pytest.raises(data_store.DataError, match="hexadecimal"):
        data_store.load("ABC")


def test_byte_bound_refuses_new_sets_with_507_while_existing_links_keep_working(make_app):
    app = make_app(DATA_MAX_BYTES=3 * len(table(0)) + 10)
    client = app.server.test_client()
    first = post(client, table(0)).get_json()["data"]
    assert [post(client, table(i)).status_code for i in (1, 2)] == [201, 201]
    refused = post(client, table(3))
    assert refused.status_code == 507
    error = refused.get_json()["error"]
    assert error["field"] == "data" and "full" in error["message"] and "DATA_MAX_BYTES" in error["message"]
    assert post(client, table(0)).status_code == 201  # already stored: costs nothing, still answered
    scored = client.get(f"/api/v1/compare?{QUERY}&data={first}")
    assert scored.status_code == 200 and scored.get_json()["data"]["rows"] == 1
    with app.server.app_context():
        assert data_store.set_store().stats()["sets"] == 3


def test_rate_limit_refuses_one_address_with_429_naming_the_limit(make_app):
    app = make_app(UPLOAD_RATE_LIMIT=3, UPLOAD_RATE_WINDOW_SECONDS=600)
    client = app.server.test_client()
    assert [post(client, table(i), "192.0.2.7").status_code for i in range(3)] == [201, 201, 201]
    refused = post(client, table(3), "192.0.2.7")
    assert refused.status_code == 429
    error = refused.get_json()["error"]
    assert (error["field"], error["limit"], error["window_s"]) == ("data", 3, 600)
    assert "at most 3 uploads per 600 s" in error["message"]
    assert 1 <= int(refused.headers["Retry-After"]) <= 600 and error["retry_after_s"] == int(refused.headers["Retry-After"])
    assert post(client, table(3), "192.0.2.8").status_code == 201  # another address is not affected
    with app.server.app_context():
        assert data_store.set_store().stats()["sets"] == 4  # the refused upload stored nothing


def test_a_locked_sqlite_store_never_acknowledges(app_factory, tmp_path):
    path = tmp_path / "locked.sqlite3"
    app = app_factory(CACHE_TYPE="SimpleCache", DATABASE_URL=f"sqlite:///{path}", DATA_STORE_TIMEOUT_SECONDS=0.2)
    client = app.server.test_client()
    holder = sqlite3.connect(path, isolation_level=None)
    holder.execute("BEGIN EXCLUSIVE")  # another process holding the write lock past the timeout
    try:
        r = post(client, TABLE)
        assert r.status_code == 503
        error = r.get_json()["error"]
        assert error["field"] == "data" and "SQLite measurement store cannot be written" in error["message"]
        assert "nothing was stored" in error["message"]
    finally:
        holder.execute("ROLLBACK")
        holder.close()
    with app.server.app_context():
        store = data_store.set_store()
        store._next_try = 0.0  # do not wait for the retry interval
        assert store.stats()["sets"] == 0
    assert post(client, TABLE).status_code == 201


def test_a_read_only_postgresql_store_never_acknowledges(app_factory, postgres):
    url = postgres.create_database(f"readonly_{os.getpid()}")
    app = app_factory(CACHE_TYPE="SimpleCache", DATABASE_URL=url)
    client = app.server.test_client()
    with postgres.connect() as conn:
        conn.execute(f'ALTER DATABASE "readonly_{os.getpid()}" SET default_transaction_read_only = on')
    with app.server.app_context():
        data_store.set_store().engine.dispose()  # new sessions see the setting
    r = post(client, TABLE)
    assert r.status_code == 503
    assert "PostgreSQL measurement store cannot be written" in r.get_json()["error"]["message"]
    with postgres.connect(f"readonly_{os.getpid()}") as conn:
        assert conn.execute("SELECT count(*) FROM measurement_sets").fetchone()[0] == 0


def test_postgresql_going_away_mid_run_is_reported_and_refused_then_used_again(app_factory, postgres):
    url = postgres.create_database(f"away_{os.getpid()}")
    app = app_factory(CACHE_TYPE="SimpleCache", DATABASE_URL=url, CACHE_RETRY_SECONDS=0.2,
                      DATA_STORE_TIMEOUT_SECONDS=1)
    client = app.server.test_client()
    first = post(client, table(0)).get_json()["data"]
    postgres.stop()
    try:
        assert client.get("/healthz").get_json()["data_store"] == "unavailable"
        r = post(client, table(1))
        assert r.status_code == 503 and "PostgreSQL measurement store" in r.get_json()["error"]["message"]
        # a set this worker has parsed keeps working while the store is out
        assert client.get(f"/api/v1/compare?{QUERY}&data={first}").status_code == 200
    finally:
        postgres.start()
    time.sleep(0.3)  # the retry interval
    assert client.get("/healthz").get_json()["data_store"] == "ok"
    assert post(client, table(1)).status_code == 201


@pytest.mark.parametrize("engine", ["sqlite", "postgresql"])
def test_a_store_that_cannot_be_opened_is_reported_and_refuses_uploads(app_factory, tmp_path, engine, caplog):
    if engine == "sqlite":
        (tmp_path / "not-a-folder").write_text("a file where the store's folder should be")
        url = f"sqlite:///{tmp_path / 'not-a-folder' / 'measurements.sqlite3'}"
    else:
        url = f"postgresql://fdesk@/postgres?host={tmp_path}&port={free_port()}"  # nothing listens there
    app = app_factory(CACHE_TYPE="SimpleCache", DATABASE_URL=url, DATA_STORE_TIMEOUT_SECONDS=1)
    assert "unavailable" in caplog.text  # said at start-up
    client = app.server.test_client()
    health = client.get("/healthz")
    assert health.status_code == 200 and health.get_json()["data_store"] == "unavailable"
    r = post(client, TABLE)
    assert r.status_code == 503 and "cannot be opened" in r.get_json()["error"]["message"]
    r = client.get(f"/api/v1/compare?{QUERY}&data={'ab' * (codec.DATA_HASH_LENGTH // 2)}")
    assert r.status_code == 503 and r.get_json()["error"]["field"] == "data"
    assert client.get(f"/api/v1/compare?{QUERY}").status_code == 200  # the models are still served


def test_default_store_is_sqlite_in_wal_mode_under_xdg_data_home(app_factory, tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path / "xdg"))
    app = app_factory(CACHE_TYPE="SimpleCache", DATABASE_URL=None)
    assert app.server.test_client().get("/healthz").get_json()["data_store"] == "ok"
    with app.server.app_context():
        data_store.store(TABLE)
    path = tmp_path / "xdg" / "friedmann-desk" / "measurements.sqlite3"
    with sqlite3.connect(path) as conn:
        assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert conn.execute("SELECT file_name, byte_size FROM measurement_sets").fetchall() == [("", len(TABLE))]


def test_sets_in_the_old_cache_folder_are_copied_once(app_factory, tmp_path, database_url):
    old = FileSystemCache(str(tmp_path / "old-cache"))
    # as earlier versions stored them: under their fingerprint's key prefix, with an expiry
    digest = data_store.content_hash(TABLE, COVARIANCE)
    old.set(f"fdesk-0123456789ab-measurements:{digest}",
            {"measurements": TABLE, "covariance": COVARIANCE, "name": "old.csv"}, timeout=60)
    old.set("fdesk-0123456789ab-model_curves:abc", ({"measurements": "not a set"},), timeout=60)
    config = {"CACHE_TYPE": "FileSystemCache", "CACHE_DIR": str(tmp_path / "old-cache"), "DATABASE_URL": database_url}
    app = app_factory(**config)
    with app.server.app_context():
        loaded = data_store.load(digest)
        assert loaded.name == "old.csv" and loaded.measurements.covariance_source == "file"
        assert data_store.set_store().stats()["sets"] == 1
        data_store.set_store().remove([digest])
    app = app_factory(**config)  # a second start does not copy it back
    with app.server.app_context():
        assert data_store.set_store().stats()["sets"] == 0


def test_admin_command_lists_removes_and_prunes(make_app, database_url, monkeypatch):
    app = make_app()
    with app.server.app_context():
        store = data_store.set_store()
        recent = data_store.store(table(1), None, "recent.csv").hash
        old = data_store.content_hash(table(2), None)
        store.put(old, "0" * 64, table(2), None, "old.csv", 1,
                  uploaded_at=dt.datetime.now(dt.timezone.utc) - dt.timedelta(days=400))
    monkeypatch.setenv("FDESK_DATABASE_URL", database_url)

    def run(*argv):
        out = io.StringIO()
        assert admin.main(["data", *argv], out=out) == 0
        return out.getvalue()

    listing = run("list")
    assert listing.index(old) < listing.index(recent) and "old.csv" in listing and "recent.csv" in listing
    assert "2 sets" in run("stats")
    assert old in run("prune", "--older-than", "365d", "--dry-run")
    pruned = run("prune", "--older-than", "365d")
    assert old in pruned and recent not in pruned and "1 sets were removed" in pruned
    assert f"{recent}: removed" in run("remove", recent)
    assert run("list").strip().count("\n") == 0  # the header only
    with app.server.app_context():
        for digest in (old, recent):
            with pytest.raises(data_store.DataNotFound, match="this data set was removed from this server"):
                data_store.load(digest)
    with pytest.raises(SystemExit):
        admin.main(["data", "prune", "--older-than", "a year"])


def test_admin_command_runs_as_a_module(database_url):
    env = {**os.environ, "FDESK_DATABASE_URL": database_url}
    done = subprocess.run([sys.executable, "-m", "server.admin", "data", "stats"], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stderr
    assert "0 sets, 0 bytes (bound: 2147483648 bytes)" in done.stdout
    done = subprocess.run([sys.executable, "-m", "server.admin", "data", "list"], cwd=ROOT,
                          env={**env, "FDESK_DATABASE_URL": "sqlite:////proc/no-such-folder/x.sqlite3"},
                          capture_output=True, text=True, timeout=60)
    assert done.returncode == 1 and "cannot be opened" in done.stderr


def test_parsed_sets_memo_is_bounded_in_bytes_and_the_store_backs_it(app, monkeypatch):
    one = data_store._parsed_bytes(data_store.store(table(0)))
    arrays = data_store.load(data_store.content_hash(table(0), None)).measurements
    assert one >= sum(getattr(arrays, n).nbytes for n in ("z", "value", "error", "covariance"))
    memo = data_store.LRU(int(2.5 * one), sizeof=data_store._parsed_bytes)  # room for two sets
    monkeypatch.setitem(app.server.extensions, data_store._MEMO, memo)
    digests = [data_store.store(table(i)).hash for i in range(3)]
    assert len(memo) == 2 and memo.get(digests[0]) is None and memo.size <= memo.limit
    assert data_store.load(digests[0]).measurements.value.tolist() == [13.0]  # read back from the store


def test_sets_in_an_old_redis_cache_are_copied(app_factory, database_url):
    from cachelib.serializers import RedisSerializer

    from benchmarks._serving import RedisServer

    with RedisServer() as redis_server:
        digest = data_store.content_hash(TABLE, None)
        client = redis_server.client()
        # as earlier versions stored them: flask-caching's RedisCache serializer, under a key prefix
        client.set(f"fdesk-0123456789ab-measurements:{digest}",
                   RedisSerializer().dumps({"measurements": TABLE, "covariance": None, "name": "kept.csv"}))
        client.set("fdesk-0123456789ab-model_curves:abc", RedisSerializer().dumps(({"a": 1},)))
        app = app_factory(CACHE_TYPE="RedisCache", CACHE_REDIS_URL=redis_server.url, DATABASE_URL=database_url)
        with app.server.app_context():
            assert data_store.set_store().stats()["sets"] == 1
            assert data_store.load(digest).name == "kept.csv"
