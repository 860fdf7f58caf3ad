"""Faults the server survives: a cache folder that cannot be written (at start or mid-run), a
shared backend that fails and returns, a worker killed under load, and a computation past the
request's time budget.

Check values are the app's own answers computed without any fault (the same request on a
healthy app), HTTP status codes (RFC 9110) and counts of log lines."""

from __future__ import annotations

import http.client
import json
import logging
import os
import signal
import threading
import time

import pytest

from benchmarks._serving import Gunicorn, get
from server import cache as memo

QUERY = "/api/v1/compare?m1.label=Fault%20check&m1.h0=69.5&m2.ok=-0.01&z=0.3,1.2"


def _body(response):
    return json.loads(response.get_data(as_text=True))


def test_unwritable_cache_folder_at_start_falls_back_to_memory_with_one_warning(app_factory, tmp_path, caplog):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")  # a folder cannot be made under a file, even by root
    reference = _body(app_factory().server.test_client().get(QUERY))
    with caplog.at_level(logging.WARNING):
        app = app_factory(CACHE_DIR=str(blocker / "cache"))
    warnings = [r for r in caplog.records if "not writable" in r.getMessage()]
    assert len(warnings) == 1
    client = app.server.test_client()
    health = _body(client.get("/healthz"))
    assert health["cache"] == "SimpleCache"
    first, second = client.get(QUERY), client.get(QUERY)
    assert first.status_code == second.status_code == 200
    assert first.headers["X-Fdesk-Cache"] == "miss" and second.headers["X-Fdesk-Cache"] == "hit"
    assert _body(first)["models"] == reference["models"]


def test_cache_folder_lost_mid_run_switches_to_memory_and_comes_back(app_factory, tmp_path, caplog):
    folder = tmp_path / "shared"
    app = app_factory(CACHE_DIR=str(folder), CACHE_RETRY_SECONDS=0.2)
    client = app.server.test_client()
    # buffered: each response is finished (as a WSGI server finishes it), so its writes are done
    assert client.get(QUERY, buffered=True).status_code == 200
    # the folder disappears and a file takes its place: every write now fails (as on a full disk)
    for child in folder.iterdir():
        child.unlink()
    folder.rmdir()
    folder.write_text("in the way")
    with caplog.at_level(logging.WARNING):
        for h0 in (70.1, 70.2, 70.3):
            assert client.get(QUERY.replace("69.5", str(h0)), buffered=True).status_code == 200
    assert len([r for r in caplog.records if "unavailable" in r.getMessage()]) == 1
    backend = app.server.extensions["cache"][memo.cache]
    assert not backend.available
    assert _body(client.get("/healthz"))["shared_cache"] == "unavailable"
    # the folder comes back: after the retry interval the shared cache is used again
    folder.unlink()
    folder.mkdir()
    time.sleep(0.3)
    with caplog.at_level(logging.WARNING):
        assert client.get(QUERY.replace("69.5", "70.4"), buffered=True).status_code == 200
    assert backend.available
    assert any(folder.iterdir())  # results written there again
    assert len([r for r in caplog.records if "is back" in r.getMessage()]) == 1


class _Flaky:
    """A backend double that fails while `down` is set."""

    def __init__(self):
        self.down, self.calls, self.store = True, 0, {}

    def get_many(self, *keys):
        self.calls += 1
        if self.down:
            raise ConnectionError("refused")
        return [self.store.get(k) for k in keys]

    def set_many(self, mapping, timeout=None):
        self.calls += 1
        if self.down:
            raise ConnectionError("refused")
        self.store.update(mapping)
        return list(mapping)


def test_guarded_backend_waits_the_retry_interval_between_attempts(caplog):
    flaky = _Flaky()
    guarded = memo.GuardedBackend(flaky, "Flaky", retry_seconds=0.2)
    with caplog.at_level(logging.WARNING):
        assert guarded.get_many("a") == [None]  # from the in-process fallback
        assert guarded.set_many({"a": (1,)}) == ["a"]
        assert guarded.get_many("a") == [(1,)]
        assert flaky.calls == 1  # the second and third calls did not wait on the failing backend
        flaky.down = False
        time.sleep(0.25)
        assert guarded.get_many("a") == [None]  # the shared backend again (it never got "a")
        assert guarded.available and flaky.calls == 2
    messages = [r.getMessage() for r in caplog.records]
    assert sum("unavailable" in m for m in messages) == 1 and sum("is back" in m for m in messages) == 1


def test_over_budget_request_is_refused_with_a_clear_message_and_cached_work_still_answers(app_factory):
    slow = app_factory(REQUEST_BUDGET_SECONDS=0.0)  # every new computation is over budget
    refused = slow.server.test_client().get(QUERY)
    assert refused.status_code == 422
    error = _body(refused)["error"]
    assert error["field"] == "query" and "0 s" in error["message"] and "ask again" in error["message"]
    # the same models computed by another worker within its budget: the slow app answers them
    healthy = app_factory().server.test_client().get(QUERY, buffered=True)
    again = slow.server.test_client().get(QUERY)
    assert again.status_code == 200 and _body(again)["models"] == _body(healthy)["models"]
    assert again.headers["X-Fdesk-Cache"] == "hit-shared"


def test_over_budget_page_update_is_refused_not_a_server_error(app_factory):
    from benchmarks._serving import page_update_payload

    app = app_factory(REQUEST_BUDGET_SECONDS=0.0)
    client = app.server.test_client()
    payload = page_update_payload(client.get("/_dash-dependencies").get_json(), "?m1.h0=66.6&tab=distances")
    response = client.post("/_dash-update-component", json=payload)
    assert response.status_code == 422 and _body(response)["error"]["field"] == "query"


def test_a_worker_killed_under_load_fails_only_its_requests_and_is_replaced():
    with Gunicorn(workers=2) as server:
        assert get(server.port, QUERY)[0] == 200  # warm: the load below is cached requests
        before = server.worker_pids()
        results: list[int | str] = []
        stop = threading.Event()

        failed_by = [0] * 6

        def client(number):
            while not stop.is_set():
                try:
                    results.append(get(server.port, QUERY, timeout=10)[0])
                except (OSError, http.client.HTTPException) as err:  # a reply cut off by the kill
                    results.append(type(err).__name__)
                    failed_by[number] += 1

        threads = [threading.Thread(target=client, args=(n,)) for n in range(6)]
        for t in threads:
            t.start()
        time.sleep(1.0)
        victim = before[0]
        os.kill(victim, signal.SIGKILL)
        end = time.monotonic() + 30
        while time.monotonic() < end and not (len(server.worker_pids()) == 2 and victim not in server.worker_pids()):
            time.sleep(0.05)
        settled = len(results)
        end = time.monotonic() + 30
        while time.monotonic() < end and len(results) < settled + 40:  # load goes on after the replacement
            time.sleep(0.05)
        stop.set()
        for t in threads:
            t.join()
        after = server.worker_pids()
        assert victim not in after and len(after) == 2  # the master replaced it
        failures = [r for r in results if r != 200]
        # a threaded worker (gunicorn.conf.py) serves several requests at once: only those in
        # flight on it when it died fail, at most one per client (each has one request out)
        assert len(failures) <= len(threads) and max(failed_by) <= 1, (failures, failed_by)
        assert len(results) >= settled + 40 and all(r == 200 for r in results[settled + 6:])
