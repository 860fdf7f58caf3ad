"""Whole compare answers are memoized by canonical link (what lets cached requests cost about
as much as a trivial one): a memoized answer equals a fresh computation, keeps the link's own
unknown-key warnings, and is shared through the cache like any model result.

Check value: `server.api.compare_payload` computed directly, without the memo."""

from __future__ import annotations

import json

from server import api
from server import cache as memo

LINK = "m1.label=Memo%20A&m1.h0=68.25&m2.label=Memo%20B&m2.wa=-0.2&z=0.4,2.2"


def test_memoized_answer_equals_a_fresh_computation_and_keeps_warnings(app_factory):
    app = app_factory()
    client = app.server.test_client()
    first = client.get(f"/api/v1/compare?{LINK}&colour=red")
    second = client.get(f"/api/v1/compare?{LINK}&shape=round")
    assert first.status_code == second.status_code == 200
    assert second.headers["X-Fdesk-Cache"] == "hit"  # the same canonical link: one look-up
    with app.server.test_request_context():
        fresh, problem = api.compare_payload(LINK)
    assert problem is None
    one, two = json.loads(first.data), json.loads(second.data)
    assert one["warnings"] == ["colour: unknown key, ignored"] and two["warnings"] == ["shape: unknown key, ignored"]
    for body in (one, two):
        body.pop("warnings")
        assert body == json.loads(json.dumps({k: v for k, v in fresh.items() if k != "warnings"}))


def test_another_worker_reads_the_whole_answer_from_the_shared_cache(app_factory):
    # buffered: the response is finished (as a WSGI server finishes it), so its writes are done
    assert app_factory().server.test_client().get(f"/api/v1/compare?{LINK}", buffered=True).status_code == 200
    other = app_factory().server.test_client().get(f"/api/v1/compare?{LINK}")
    assert other.status_code == 200 and other.headers["X-Fdesk-Cache"] == "hit-shared"


def test_refused_links_are_answered_as_before(app_factory):
    client = app_factory().server.test_client()
    for _ in range(2):
        response = client.get("/api/v1/compare?m1.om=abc")
        assert response.status_code == 400 and response.get_json()["error"]["field"] == "m1.om"


def test_small_results_keep_a_longer_front_of_their_own(app_factory):
    calls = []

    def square(x):
        calls.append(x)
        return x * x

    square.__qualname__ = f"square_{id(calls)}"  # a key space of its own for this test
    long_front = memo.memoized(square, front_entries=memo.FRONT_ENTRIES * 2)
    app = app_factory()
    n = memo.FRONT_ENTRIES + 20  # more than the default front holds
    with app.server.test_request_context():
        assert [long_front(float(i)) for i in range(n)] == [float(i * i) for i in range(n)]
    with app.server.test_request_context() as context:
        assert long_front(0.0) == 0.0  # still in this process's memory, not re-read
        assert memo.request_cache_status(context.request.environ) == "hit"
    assert len(calls) == n


def test_spellings_of_a_link_are_kept_per_process_only(app_factory):
    app = app_factory()
    client = app.server.test_client()
    for extra in ("a", "b", "c"):  # three spellings (unknown keys) of one canonical link
        assert client.get(f"/api/v1/compare?{LINK}&{extra}=1", buffered=True).status_code == 200
    answers = list(app.server.extensions["cache"][memo.cache].primary._list_dir())
    # the shared folder holds the two models, their values and one canonical answer, not three
    other = app_factory().server.test_client().get(f"/api/v1/compare?{LINK}&d=1")
    assert other.headers["X-Fdesk-Cache"] == "hit-shared"
    assert len(answers) == 2 + 2 + 1
