"""The cache's two layers (the in-process LRU and the shared backend), the code fingerprint in
the shared keys, and the compact x of evenly spaced curves.

Check values here are closed-form arithmetic (sums, counts) chosen for the test; the model's
own numbers are compared with `model.evaluate` directly.
"""

from __future__ import annotations

import threading
import time

import numpy as np
import pytest

import model
from benchmarks._serving import page_update_payload
from layouts.figures import figure, uniform_step
from server import cache as memo
from server import compute


def _counting(calls):
    def add(a, b):
        calls.append((a, b))
        if a < 0:
            raise ValueError("negative")
        return None if a == 0 else a + b
    add.__qualname__ = f"add_{id(calls)}"  # a key space of its own for this test
    return memo.memoized(add)


def test_results_come_from_memory_then_from_the_shared_cache(app_factory):
    calls = []
    add = _counting(calls)
    first = app_factory()
    with first.server.app_context():
        assert add(1.0, 2.0) == 3.0 and add(1.0, 2.0) == 3.0
        assert add(0.0, 1.0) is None and add(0.0, 1.0) is None  # None is a result, not a miss
    assert calls == [(1.0, 2.0), (0.0, 1.0)]
    # a second app on the same folder (another worker) has an empty front but finds the files
    # (outside a request the shared cache is written at once)
    second = app_factory()
    with second.server.app_context():
        assert memo.fetch_many(add, [(1.0, 2.0), (0.0, 1.0), (2.0, 2.0)]) == [3.0, None, 4.0]
    assert calls == [(1.0, 2.0), (0.0, 1.0), (2.0, 2.0)]


def test_a_failing_call_is_returned_in_its_place_and_not_cached(app_factory):
    calls = []
    add = _counting(calls)
    with app_factory().server.app_context():
        out = memo.fetch_many(add, [(-1.0, 0.0), (5.0, 1.0)], return_exceptions=True)
        assert isinstance(out[0], ValueError) and out[1] == 6.0
        with pytest.raises(ValueError):
            add(-1.0, 0.0)
    assert calls.count((-1.0, 0.0)) == 2


def test_cached_curves_are_read_only_and_equal_a_fresh_computation(app_factory):
    with app_factory().server.app_context():
        key = "h0=70"
        curves = compute.model_curves(key, 3.0)
        assert compute.model_curves(key, 3.0) is curves
        with pytest.raises(ValueError):
            curves["z"][0] = 1.0
        direct = model.evaluate(compute.cosmology_for(key), curves["z"])["luminosity_distance"]
        np.testing.assert_allclose(curves["at"]["luminosity_distance"], direct, rtol=1e-5)


QUERY = "/api/v1/compare?m1.label=Layers&m1.h0=67.75&m2.w0=-0.95&z=0.5"


def _entries(app) -> list[str]:
    """The shared cache folder's entry files (its count file excluded)."""
    return list(app.server.extensions["cache"][memo.cache].primary._list_dir())


def test_a_request_writes_the_shared_cache_once_its_response_is_finished(app_factory):
    first = app_factory()
    response = first.server.test_client().get(QUERY)
    assert response.status_code == 200 and response.headers["X-Fdesk-Cache"] == "miss"
    assert _entries(first) == []  # answered before anything was written
    response.close()  # what a WSGI server does once it has sent the body
    assert len(_entries(first)) == 2 + 2 + 1  # two models' curves, their values, the answer
    other = app_factory().server.test_client().get(QUERY)  # another worker on the same folder
    assert other.status_code == 200 and other.headers["X-Fdesk-Cache"] == "hit-shared"
    assert other.get_json()["models"] == response.get_json()["models"]


def test_no_thread_is_started_to_serve_and_store(app_factory):
    before = set(threading.enumerate())
    app = app_factory()
    client = app.server.test_client()
    for h0 in (66.0, 66.5):
        client.get(QUERY.replace("67.75", str(h0)), buffered=True)
    assert len(_entries(app)) > 0 and set(threading.enumerate()) == before


def test_two_code_fingerprints_on_one_cache_folder_never_share_an_entry(app_factory, monkeypatch):
    calls = []
    add = _counting(calls)

    def app_of(fingerprint):
        monkeypatch.setattr(memo, "code_fingerprint", lambda: fingerprint)
        return app_factory()

    old, new, old_again = app_of("0ld0ld0ld0ld"), app_of("new0new0new0"), app_of("0ld0ld0ld0ld")
    with old.server.app_context():
        assert add(2.0, 3.0) == 5.0
        memo.cache.set("plain-key", "old value")
    with new.server.app_context():
        assert add(2.0, 3.0) == 5.0  # computed again: the old version's entry is not seen
        assert memo.cache.get("plain-key") is None
    with old_again.server.app_context():
        assert add(2.0, 3.0) == 5.0 and memo.cache.get("plain-key") == "old value"  # same version: shared
    assert calls == [(2.0, 3.0), (2.0, 3.0)]
    # the same through the whole app: answers and model results, and whole panel responses
    old.server.test_client().get(QUERY, buffered=True)
    assert new.server.test_client().get(QUERY).headers["X-Fdesk-Cache"] == "miss"
    assert old_again.server.test_client().get(QUERY).headers["X-Fdesk-Cache"] == "hit-shared"
    client = old.server.test_client()
    panel = page_update_payload(client.get("/_dash-dependencies").get_json(), "?m1.h0=71.25&tab=time")
    client.post("/_dash-update-component", json=panel, buffered=True)
    outcomes = [app.server.test_client().post("/_dash-update-component", json=panel).headers["X-Fdesk-Cache"]
                for app in (new, old_again)]
    assert outcomes == ["miss", "hit-shared"]


def test_the_lru_is_bounded_by_count_or_size_and_by_age():
    by_count = memo.LRU(3)
    for k in range(5):
        by_count.put(k, str(k))
    assert len(by_count) == 3 and by_count.get(0) is None and by_count.get(4) == "4"
    by_count.get(2)  # used: now the most recent
    by_count.put(5, "5")
    assert by_count.get(2) == "2" and by_count.get(3) is None
    by_size = memo.LRU(100, sizeof=len, largest=40)
    for k in range(4):
        assert by_size.put(k, bytes(30))
    assert by_size.size == 90 and len(by_size) == 3 and by_size.get(0) is None
    assert not by_size.put("big", bytes(41)) and by_size.get("big") is None
    by_size.pop(1)
    assert by_size.size == 60 and by_size.get(1) is None
    aged = memo.LRU(4, ttl=0.05)
    aged.put("a", 1)
    assert aged.get("a") == 1
    time.sleep(0.06)
    assert aged.get("a") is None and len(aged) == 0


def test_in_process_memo_keeps_results_not_exceptions():
    calls = []

    @memo.in_process(2)
    def half(x):
        calls.append(x)
        if x < 0:
            raise ValueError("negative")
        return x / 2

    assert half(4.0) == half(4.0) == 2.0 and calls == [4.0]
    for _ in range(2):
        with pytest.raises(ValueError):
            half(-1.0)
    assert calls == [4.0, -1.0, -1.0]
    half(1.0), half(2.0)  # two more: 4.0 is the least recently used and goes
    assert half(4.0) == 2.0 and calls.count(4.0) == 2
    half.cache_clear()
    assert half(2.0) == 1.0 and calls.count(2.0) == 2


def test_evenly_spaced_x_travels_as_start_and_step():
    assert uniform_step(np.linspace(0.0, 3.0, 400)) == pytest.approx((0.0, 3.0 / 399))
    assert uniform_step(compute.round_significant(np.linspace(0.0, 3.0, 400))) is not None
    assert uniform_step(np.geomspace(1e-3, 1.0, 400)) is None
    assert uniform_step([0.0, 1.0, np.nan, 3.0]) is None
    spec = {"title": "t", "series": [
        {"name": "even", "slot": 1, "x": np.linspace(0.0, 2.0, 5), "y": np.arange(5.0)},
        {"name": "uneven", "slot": 2, "x": np.array([0.0, 0.1, 1.0, 1.5, 2.0]), "y": np.arange(5.0)}]}
    even, uneven = figure(spec)["data"]
    assert "x" not in even and even["x0"] == 0.0 and even["dx"] == pytest.approx(0.5)
    assert "x0" not in uneven and uneven["x"]["dtype"] == "f4"
