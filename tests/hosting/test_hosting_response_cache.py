"""Repeated panel-callback bodies are answered with the same bytes from a per-process store.

Check value: the response a fresh app (empty caches) computes for the same body — the store
must never change what the browser receives, only how fast."""

from __future__ import annotations

import json
import time

from benchmarks._serving import page_update_payload
from server.responses import response_store

LINK = "?m1.label=Store%20A&m1.h0=68.5&m2.label=Store%20B&m2.w0=-0.93&tab=distances"


def _panel_body(client, search):
    deps = json.loads(client.get("/_dash-dependencies").data)
    return json.dumps(page_update_payload(deps, search))


def _post(client, body):
    # buffered: the response is finished (as a WSGI server finishes it), so its writes are done
    return client.post("/_dash-update-component", data=body, content_type="application/json", buffered=True)


def test_a_repeated_body_gets_the_same_bytes_and_counts_as_a_hit(app_factory):
    client = app_factory().server.test_client()
    body = _panel_body(client, LINK)
    first = _post(client, body)
    second = _post(client, body)
    assert first.status_code == second.status_code == 200
    assert first.headers["X-Fdesk-Cache"] == "miss"
    assert second.headers["X-Fdesk-Cache"] == "hit"
    assert second.data == first.data
    # and it is what an app with nothing cached computes for that body
    fresh = app_factory(CACHE_DIR=None, CACHE_TYPE="SimpleCache").server.test_client()
    assert _post(fresh, body).data == first.data


def test_another_link_is_computed_on_its_own(app_factory):
    client = app_factory().server.test_client()
    a = _post(client, _panel_body(client, LINK))
    b = _post(client, _panel_body(client, LINK.replace("68.5", "70.5")))
    assert a.status_code == b.status_code == 200
    assert b.headers["X-Fdesk-Cache"] == "miss" and a.data != b.data


def test_other_callbacks_are_never_answered_from_the_store(app_factory):
    app = app_factory()
    client = app.server.test_client()
    body = json.loads(_panel_body(client, LINK))
    body["output"] = body["output"].replace("..fd-panel.children", "..fd-other.children")
    _post(client, json.dumps(body))
    assert len(app.server.extensions["fdesk_responses"]) == 0


def test_the_store_is_bounded_in_bytes_and_time():
    store = response_store(max_bytes=800, ttl=0.05)
    for k in range(10):
        store.put(str(k), bytes(90))
    assert store.size == 720 and store.get("0") is None and store.get("9") == bytes(90)
    store.put("big", bytes(101))  # over an eighth of the bound: not kept
    assert store.get("big") is None
    time.sleep(0.06)
    assert store.get("9") is None


def test_another_worker_gets_the_same_bytes_from_the_shared_cache(app_factory):
    first_app = app_factory()
    client = first_app.server.test_client()
    body = _panel_body(client, LINK.replace("68.5", "69.25"))
    first = _post(client, body)
    other = app_factory().server.test_client()  # same cache folder, empty process store
    second = _post(other, body)
    assert first.headers["X-Fdesk-Cache"] == "miss"
    assert second.headers["X-Fdesk-Cache"] == "hit-shared"
    assert second.data == first.data
