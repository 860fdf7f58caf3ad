"""Scale-out: two gunicorn instances on different loopback ports sharing one real Redis server
(apt's redis-server, started and stopped by PID), including Redis being unreachable at start,
going away mid-run and coming back.

The cache outcome is read from the ``X-Fdesk-Cache`` header each response carries; the check
values are the Redis server's own key count and the app's answers themselves."""

from __future__ import annotations

import json
import time

import pytest

from benchmarks._serving import Gunicorn, RedisServer, free_port, get

RETRY_SECONDS = 0.3


def _compare(server: Gunicorn, h0: float):
    status, headers, body = get(server.port, f"/api/v1/compare?m1.label=Shared&m1.h0={h0}&m2.w0=-0.9&z=0.5")
    assert status == 200, body[:300]
    return headers["x-fdesk-cache"], json.loads(body)


def _wait_for_keys(redis_server: RedisServer, at_least: int, timeout: float = 10.0) -> None:
    client = redis_server.client()
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if len(client.keys("fdesk-*")) >= at_least:
            return
        time.sleep(0.05)
    raise AssertionError("the results never reached Redis")


def _warnings(server: Gunicorn, text: str) -> int:
    return server.stderr().count(text)


@pytest.fixture(scope="module")
def pair():
    redis_server = RedisServer(port=free_port())  # not started: Redis is unreachable at start
    env = {"FDESK_CACHE_TYPE": "RedisCache", "FDESK_CACHE_REDIS_URL": redis_server.url,
           "FDESK_CACHE_RETRY_SECONDS": str(RETRY_SECONDS)}
    first, second = Gunicorn(env=env, workers=1), Gunicorn(env=env, workers=1)
    try:
        first.start()
        second.start()
        yield redis_server, first, second
    finally:
        first.stop()
        second.stop()
        redis_server.stop()


def test_unreachable_at_start_then_shared_then_gone_then_back(pair):
    redis_server, first, second = pair

    # Redis unreachable at start: both serve, computing; one warning each
    for h0 in (61.0, 61.5):
        outcome, body = _compare(first, h0)
        assert outcome == "miss" and body["models"][0]["params"]["h0"] == h0
    assert _compare(second, 61.0)[0] == "miss"
    assert _warnings(first, "unavailable") == 1 and _warnings(second, "unavailable") == 1
    assert json.loads(get(first.port, "/healthz")[2])["shared_cache"] == "unavailable"

    # Redis comes up: after the retry interval it is used, and what one computed the other reads
    redis_server.start()
    time.sleep(RETRY_SECONDS * 2)
    assert _compare(first, 62.0)[0] == "miss"
    _wait_for_keys(redis_server, 2)  # both models of that link
    outcome, via_second = _compare(second, 62.0)
    assert outcome == "hit-shared"
    assert via_second["models"] == _compare(first, 62.0)[1]["models"]
    assert _warnings(first, "is back") == 1
    assert json.loads(get(first.port, "/healthz")[2])["shared_cache"] == "ok"

    # Redis goes away mid-run: still serving (computing), one more warning
    redis_server.stop()
    for h0 in (63.0, 63.5):
        assert _compare(first, h0)[0] == "miss"
    assert _compare(second, 62.0)[0] == "hit"  # its own in-process copy
    assert _warnings(first, "unavailable") == 2

    # ... and returns (empty): shared again
    redis_server.start()
    time.sleep(RETRY_SECONDS * 2)
    assert _compare(first, 64.0)[0] == "miss"
    _wait_for_keys(redis_server, 2)
    assert _compare(second, 64.0)[0] == "hit-shared"
    assert _warnings(first, "unavailable") == 2 and _warnings(first, "is back") == 2
    # nothing a user typed reaches the logs
    for server in (first, second):
        assert "Shared" not in server.stdout() + server.stderr()
