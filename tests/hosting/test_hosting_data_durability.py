"""A link with ``data=<hash>`` outlives everything that happens to the cache and the server, on
both stores: SQLite (a file in the test's folder) and a real PostgreSQL server started here.

The cases: 600 other uploads plus 300 new model links on a 100-entry cache; a server restart;
a flushed Redis cache; two gunicorn workers; two app instances sharing one store. In every case
the first link must still reproduce its scores, checked against model.goodness_of_fit run
directly on the uploaded file (and the p-value against scipy.stats.chi2.sf)."""

from __future__ import annotations

import json
import math
import re
from concurrent.futures import ThreadPoolExecutor

from scipy import stats

import model
from benchmarks._serving import Gunicorn, RedisServer, free_port, get, post
from server import data_store

DEMO_BYTES = data_store.DEMO_PATH.read_bytes()
DEMO = model.read_measurements(data_store.DEMO_PATH)
QUERY = "m1.label=Lantern%20baseline&m1.h0=68&m1.om=0.31&m2.label=Candidate%20Ember&m2.w0=-0.88&m2.wa=-0.35"
MODELS = [model.Cosmology(h0=68.0, omega_m=0.31), model.Cosmology(w0=-0.88, wa=-0.35, h0=67.36, omega_m=0.3153)]
EXPECTED = [model.goodness_of_fit(m, DEMO) for m in MODELS]


def assert_reproduces(payload: dict, digest: str) -> None:
    assert payload["data"]["hash"] == digest and payload["data"]["rows"] == len(DEMO)
    for entry, expected in zip(payload["models"], EXPECTED):
        assert math.isclose(entry["data"]["chi2"], expected.chi2, rel_tol=1e-9)
        assert entry["data"]["dof"] == expected.dof
        assert math.isclose(entry["data"]["p_value"], stats.chi2.sf(expected.chi2, expected.dof), rel_tol=1e-9)


def other_table(i: int) -> bytes:
    return f"z,kind,value,error\n0.5,dm_over_rd,{13 + i * 1e-5:.5f},0.2\n".encode()


def test_600_uploads_and_300_new_links_on_a_100_entry_cache_leave_the_first_link_working(app_factory, tmp_path,
                                                                                         database_url):
    config = {"DATABASE_URL": database_url, "CACHE_THRESHOLD": 100, "UPLOAD_RATE_LIMIT": 0}
    client = app_factory(**config).server.test_client()
    first = client.post("/api/v1/data", data=DEMO_BYTES, content_type="text/csv")
    assert first.status_code == 201
    digest = first.get_json()["data"]
    assert_reproduces(client.get(f"/api/v1/compare?{QUERY}&data={digest}").get_json(), digest)
    for i in range(600):
        r = client.post("/api/v1/data", data=other_table(i), content_type="text/csv")
        assert r.status_code == 201, r.get_data(as_text=True)
    for i in range(300):
        r = client.get(f"/api/v1/compare?m1.h0={60 + i * 0.03:.2f}&z=0.5")
        assert r.status_code == 200
    cache_files = [p for p in (tmp_path / "cache").iterdir() if not p.name.startswith(".")]
    assert len(cache_files) <= 101  # the cache did evict (100 entries and its count file)
    # in this app, and in a fresh one (another worker: nothing in its memory) on the same store
    assert_reproduces(client.get(f"/api/v1/compare?{QUERY}&data={digest}").get_json(), digest)
    fresh = app_factory(**config).server.test_client()
    assert_reproduces(fresh.get(f"/api/v1/compare?{QUERY}&data={digest}").get_json(), digest)
    with fresh.application.app_context():
        assert data_store.set_store().stats()["sets"] == 601


def _compare(port: int, digest: str) -> dict:
    status, _, body = get(port, f"/api/v1/compare?{QUERY}&data={digest}")
    assert status == 200, body[:300]
    return json.loads(body)


def _pids_answering(server: Gunicorn) -> set[int]:
    return {int(m) for m in re.findall(r"GET /api/v1/compare 200 .* pid=(\d+)", server.stdout())}


def test_restart_flushed_redis_two_workers_and_two_instances_keep_the_link(database_url):
    redis_server = RedisServer(port=free_port()).start()
    shared = {"FDESK_DATABASE_URL": database_url, "FDESK_CACHE_RETRY_SECONDS": "0.3"}
    first = Gunicorn(env={**shared, "FDESK_CACHE_TYPE": "RedisCache", "FDESK_CACHE_REDIS_URL": redis_server.url},
                     workers=2)
    second = Gunicorn(env=shared, workers=1)  # its own file cache, the same store
    try:
        first.start()
        second.start()
        status, _, body = post(first.port, "/api/v1/data", {"measurements": DEMO_BYTES.decode()})
        assert status == 201, body[:300]
        digest = json.loads(body)["data"]

        # two workers: concurrent requests until both have answered, each with the same scores
        with ThreadPoolExecutor(8) as pool:
            for _ in range(10):
                for payload in pool.map(lambda _: _compare(first.port, digest), range(16)):
                    assert_reproduces(payload, digest)
                if len(_pids_answering(first)) == 2:
                    break
        assert _pids_answering(first) == set(first.worker_pids())

        # a flushed Redis cache (every model result gone): the set is not in it
        redis_server.client().flushall()
        assert len(redis_server.client().keys("*")) == 0
        assert_reproduces(_compare(first.port, digest), digest)

        # a second instance (no shared cache with the first) on the same store
        assert_reproduces(_compare(second.port, digest), digest)
        assert json.loads(get(second.port, "/healthz")[2])["data_store"] == "ok"

        # a restart of the first instance (new processes) and of its Redis (empty again)
        first.stop()
        redis_server.stop()
        redis_server.start()
        first.start()
        assert_reproduces(_compare(first.port, digest), digest)
        for server in (first, second):
            assert "Traceback" not in server.stderr()
    finally:
        first.stop()
        second.stop()
        redis_server.stop()
