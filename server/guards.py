"""Malformed requests get a 4xx JSON answer naming what is wrong, never a 500.

* Page updates (``POST .../_dash-update-component``): the body must be JSON nested at most
  `MAX_JSON_DEPTH` deep, name one of this page's callbacks by its ``output``, and carry that
  callback's inputs and states (same count, ids and properties); text properties (``search``,
  ``href``, ``filename``, ``contents``...) must be text. Anything else is a 400, field ``body``.
  A callback that still fails on what it was sent answers 400 as well, with one log line
  naming the callback and the exception type (never the values).
* Dash's component files (``.../_dash-component-suites/...``): a file that is not there, or a
  path outside the served packages, is a 404.
* Under the API prefix (``.../api/``) every error is JSON: an unknown path is a 404 naming the
  endpoints, a known path with the wrong method a 405 naming the right one, and Flask's own
  400/404/405/413/415 pages become ``{"error": {"field", "message"}}``.
"""

from __future__ import annotations

import logging

from dash.exceptions import DependencyException
from flask import Flask, jsonify, request
from werkzeug.exceptions import BadRequest, HTTPException

__all__ = ["install_guards", "MAX_JSON_DEPTH", "API_ENDPOINTS"]

MAX_JSON_DEPTH = 64  # Dash's own update bodies nest about 8 deep (judgement, no source)
# Every route of the API, for the message of a 404 under the API prefix.
API_ENDPOINTS = ("GET api/v1/compare", "POST api/v1/data", "POST api/v1/catalogue", "GET healthz")
# Properties whose value the page always sends as text (or null).
_TEXT_PROPERTIES = {"search", "href", "pathname", "hash", "filename", "contents"}
_COUNT_PROPERTIES = {"n_clicks", "n_clicks_timestamp"}

logger = logging.getLogger(__name__)


class MalformedUpdate(Exception):
    """A page-update body that does not fit any callback of this page."""


def _refusal(status: int, field: str, message: str):
    return jsonify({"error": {"field": field, "message": message}}), status


def _depth(value, limit: int) -> int:
    """Nesting depth of a parsed JSON value, counted up to `limit + 1` (iteratively)."""
    deepest, stack = 0, [(value, 1)]
    while stack:
        item, depth = stack.pop()
        if isinstance(item, (list, dict)):
            deepest = max(deepest, depth)
            if deepest > limit:
                return deepest
            stack.extend((child, depth + 1) for child in (item.values() if isinstance(item, dict) else item))
    return deepest


def _check_value(prop: str, value, where: str) -> None:
    if prop in _TEXT_PROPERTIES and value is not None and not isinstance(value, str):
        raise MalformedUpdate(f"{where}: {prop} must be text or null, not {type(value).__name__}")
    if prop in _COUNT_PROPERTIES and value is not None and (
            isinstance(value, bool) or not isinstance(value, int)):
        raise MalformedUpdate(f"{where}: {prop} must be a whole number or null, not {type(value).__name__}")


def _check_items(sent, declared: list, what: str) -> None:
    if not isinstance(sent, list) or len(sent) != len(declared):
        count = len(sent) if isinstance(sent, list) else type(sent).__name__
        raise MalformedUpdate(f"{what}: expected a list of {len(declared)} items, got {count}")
    for i, (item, spec) in enumerate(zip(sent, declared)):
        group = item if isinstance(item, list) else [item]  # pattern-matching ids send lists
        for entry in group:
            if not isinstance(entry, dict) or "id" not in entry or entry.get("property") != spec["property"]:
                raise MalformedUpdate(f"{what}[{i}]: expected {{id, property: {spec['property']!r}, value}}")
            _check_value(spec["property"], entry.get("value"), f"{what}[{i}]")


def check_update(body, callback_map: dict) -> None:
    """Raise `MalformedUpdate` unless `body` is an update this page's callbacks can take."""
    if not isinstance(body, dict):
        raise MalformedUpdate(f"expected a JSON object with output, inputs and state, got {type(body).__name__}")
    output = body.get("output")
    if not isinstance(output, str) or output not in callback_map:
        raise MalformedUpdate("output: not a callback of this page; reload the page")
    spec = callback_map[output]
    _check_items(body.get("inputs"), spec.get("inputs", []), "inputs")
    _check_items(body.get("state", []), spec.get("state", []), "state")
    changed = body.get("changedPropIds", [])
    if not isinstance(changed, list) or not all(isinstance(c, str) for c in changed):
        raise MalformedUpdate("changedPropIds: expected a list of 'id.property' texts")


def install_guards(flask_app: Flask, dash_app, api_prefix: str) -> None:
    """Attach the checks and JSON answers to `flask_app` (before the other request hooks)."""
    update_path = dash_app.config.routes_pathname_prefix + "_dash-update-component"
    suites_path = dash_app.config.routes_pathname_prefix + "_dash-component-suites/"
    api_root = api_prefix.rstrip("/") + "/api/"

    def is_api() -> bool:
        return request.path.startswith(api_root)

    @flask_app.before_request
    def _check_page_update():
        if request.path != update_path or request.method != "POST":
            return None
        try:
            body = request.get_json(silent=False)
        except RecursionError:
            return _refusal(400, "body", f"body: JSON nested deeper than {MAX_JSON_DEPTH} levels")
        except BadRequest:
            return _refusal(400, "body", "body: not JSON; a page update is a JSON object sent by the page")
        if _depth(body, MAX_JSON_DEPTH) > MAX_JSON_DEPTH:
            return _refusal(400, "body", f"body: JSON nested deeper than {MAX_JSON_DEPTH} levels")
        try:
            check_update(body, dash_app.callback_map)
        except MalformedUpdate as err:
            return _refusal(400, "body", f"body: {err}")
        return None

    @flask_app.errorhandler(DependencyException)
    def _no_such_component_file(_err):
        return _refusal(404, "path", "path: no such component file on this server")

    @flask_app.errorhandler(RecursionError)
    def _too_deep(_err):
        return _refusal(400, "body", f"body: nested too deeply to read (at most {MAX_JSON_DEPTH} levels)")

    @flask_app.errorhandler(HTTPException)
    def _http_error(err: HTTPException):
        if is_api() or request.path.startswith(suites_path) or request.path == update_path:
            field = {413: "body", 415: "body", 400: "body"}.get(err.code or 0, "path")
            text = (err.description or err.name).split(". ")[0].rstrip(".")
            return _refusal(err.code or 400, field, f"{field}: {text}")
        return err

    @flask_app.errorhandler(Exception)
    def _unexpected(err: Exception):
        if isinstance(err, HTTPException):
            return _http_error(err)
        if request.path == update_path:
            body = request.get_json(silent=True) or {}
            logger.warning("page update for %s failed: %s", str(body.get("output", "?"))[:80],
                           type(err).__name__)
            return _refusal(400, "body", "body: this update could not be applied to the page's state; "
                                         "reload the page")
        flask_app.log_exception((type(err), err, err.__traceback__))  # redacted (server.requestlog)
        return _refusal(500, "", "the server failed on this request; the failure is logged without "
                                 "the request's values")

    def api_fallback(rest: str = ""):
        adapter = flask_app.url_map.bind_to_environ(request.environ)
        allowed = []
        for method in ("GET", "POST", "PUT", "PATCH", "DELETE"):
            try:
                rule, _ = adapter.match(request.path, method=method, return_rule=True)
            except HTTPException:
                continue
            if rule.endpoint != "fdesk_api_fallback":
                allowed.append(method)
        if allowed:
            response = jsonify({"error": {"field": "method", "message": (
                f"method: {request.path} answers {', '.join(allowed)}, not {request.method}")}})
            response.headers["Allow"] = ", ".join(allowed)
            return response, 405
        return _refusal(404, "path", f"path: {request.path} is not an API endpoint; this server answers "
                                     + "; ".join(f"{m} {api_prefix.rstrip('/')}/{p}" for m, p in
                                                 (e.split(" ", 1) for e in API_ENDPOINTS)))

    # Registered after the API's own routes, so it answers only what they do not; it keeps Dash's
    # catch-all (the page) from answering an API path with HTML.
    for rule in (api_root, api_root + "<path:rest>"):
        flask_app.add_url_rule(rule, "fdesk_api_fallback", api_fallback,
                               methods=["GET", "POST", "PUT", "PATCH", "DELETE"])
