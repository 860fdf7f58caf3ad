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
its answers, after the response, with the same time to live), so the workers and hosts of one
instance answer a link once between them. Bodies of other callbacks (data upload, fits,
downloads) are never answered from here.
"""

from __future__ import annotations

import collections
import hashlib
import threading
import time
from pathlib import Path

from flask import Flask, Response, g, request

from server import cache as memo
from server.cache import CACHE_COUNTS

__all__ = ["install_response_cache", "ResponseStore", "PANEL_OUTPUT", "TTL_SECONDS", "MAX_BYTES"]

PANEL_OUTPUT = b'"..fd-panel.children'  # start of that callback's multi-output spec
TTL_SECONDS = 600.0
MAX_BYTES = 64 * 1024 * 1024
_MAX_BODY = 256 * 1024  # larger bodies are not the panel callback's



def _page_code_fingerprint() -> str:
    """Hash of everything that shapes a panel (server/ and layouts/ sources): the shared-cache
    key carries it, so another version's answers are never served after an upgrade."""
    root = Path(__file__).resolve().parent.parent
    digest = hashlib.sha256()
    for folder in ("server", "layouts"):
        for path in sorted((root / folder).glob("*.py")):
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return digest.hexdigest()[:12]


_SHARED_PREFIX = f"panel-response-{_page_code_fingerprint()}:"


class ResponseStore:
    """A byte-bounded LRU of response bodies with a time to live."""

    def __init__(self, max_bytes: int = MAX_BYTES, ttl: float = TTL_SECONDS):
        self.max_bytes, self.ttl = max_bytes, ttl
        self._items: "collections.OrderedDict[str, tuple[float, bytes]]" = collections.OrderedDict()
        self._bytes = 0
        self._lock = threading.Lock()

    def get(self, key: str) -> bytes | None:
        with self._lock:
            found = self._items.get(key)
            if found is None:
                return None
            born, body = found
            if time.monotonic() - born > self.ttl:
                self._drop(key)
                return None
            self._items.move_to_end(key)
            return body

    def put(self, key: str, body: bytes) -> None:
        if len(body) > self.max_bytes // 8:
            return
        with self._lock:
            if key in self._items:
                self._drop(key)
            self._items[key] = (time.monotonic(), body)
            self._bytes += len(body)
            while self._bytes > self.max_bytes and self._items:
                self._drop(next(iter(self._items)))

    def _drop(self, key: str) -> None:
        _, body = self._items.pop(key)
        self._bytes -= len(body)


def _is_panel_update(flask_request) -> bool:
    return (flask_request.method == "POST"
            and flask_request.path.endswith("_dash-update-component")
            and (flask_request.content_length or 0) <= _MAX_BODY)


def install_response_cache(flask_app: Flask) -> ResponseStore:
    """Answer repeated panel-callback bodies from a per-app, per-process `ResponseStore`."""
    store = ResponseStore()
    flask_app.extensions["fdesk_responses"] = store

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
                found, where = memo.cache.get(_SHARED_PREFIX + key), "shared"
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
            store.put(key, data)
            if len(data) <= store.max_bytes // 8:
                memo.store_behind(_SHARED_PREFIX + key, data, int(TTL_SECONDS))
        return response

    return store
