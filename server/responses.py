"""Whole responses of the panel callback, kept per process by the exact request body.

The callback that draws the open panel (output ``fd-panel.children`` and its companions) is a
pure function of what the browser sends: the link, the inputs and which of them changed are
all in the POST body of ``_dash-update-component``. Its models come memoized already
(`server.cache`), but building and serialising a panel of several hundred kB still costs
milliseconds; an identical body (a reload, Back and Forward, a colleague opening the same
link on the same worker) is answered with the same bytes instead.

Entries live at most `TTL_SECONDS` in a worker (so a stored data set that expires is noticed
soon) and the whole store is bounded in bytes (`MAX_BYTES`, least recently used first out). A
worker that has not seen a body yet looks in the shared cache (where every worker also leaves
its answers once the response has been sent, with the same time to live), so the workers and
hosts of one instance answer a link once between them. Bodies of other callbacks (data upload, fits,
downloads) are never answered from here.
"""

from __future__ import annotations

import hashlib

from flask import Flask, Response, g, request

from server import cache as memo
from server.cache import CACHE_COUNTS, LRU

__all__ = ["install_response_cache", "response_store", "PANEL_OUTPUT", "TTL_SECONDS", "MAX_BYTES"]

PANEL_OUTPUT = b'"..fd-panel.children'  # start of that callback's multi-output spec
TTL_SECONDS = 600.0
MAX_BYTES = 64 * 1024 * 1024
_MAX_BODY = 256 * 1024  # larger bodies are not the panel callback's


def response_store(max_bytes: int = MAX_BYTES, ttl: float = TTL_SECONDS) -> LRU:
    """Response bodies by request hash: at most `max_bytes` in all (a body over an eighth of
    that is not kept), each for `ttl` seconds, least recently used out first."""
    return LRU(max_bytes, sizeof=len, ttl=ttl, largest=max_bytes // 8)


def _is_panel_update(flask_request) -> bool:
    return (flask_request.method == "POST"
            and flask_request.path.endswith("_dash-update-component")
            and (flask_request.content_length or 0) <= _MAX_BODY)


def install_response_cache(flask_app: Flask) -> LRU:
    """Answer repeated panel-callback bodies from a per-app, per-process `response_store`, then
    from the shared cache (under a prefix with the code's fingerprint)."""
    store = response_store()
    flask_app.extensions["fdesk_responses"] = store
    shared_prefix = f"panel-response-{memo.code_fingerprint()}:"

    @flask_app.before_request
    def _answer_from_store():
        if not _is_panel_update(request):
            return None
        body = request.get_data(cache=True)
        if PANEL_OUTPUT not in body:
            return None
        key = hashlib.sha256(body).hexdigest()
        found, where = store.get(key), "local"
        if found is None:
            try:
                found, where = memo.cache.get(shared_prefix + key), "shared"
            except Exception:  # noqa: BLE001 - the guarded backend already said why
                found = None
            if isinstance(found, bytes):
                store.put(key, found)
            else:
                found = None
        if found is not None:
            request.environ[CACHE_COUNTS] = {"local": int(where == "local"),
                                             "shared": int(where == "shared"), "computed": 0}
            return Response(found, status=200, mimetype="application/json")
        g.fdesk_response_key = key
        return None

    @flask_app.after_request
    def _keep_in_store(response):
        key = g.pop("fdesk_response_key", None)
        if key is not None and response.status_code == 200 and not response.is_streamed:
            data = response.get_data()
            if store.put(key, data):  # too large for the store: not shared either
                memo.store_shared({shared_prefix + key: data}, int(TTL_SECONDS))
        return response

    return store
