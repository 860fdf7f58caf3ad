"""Request limits: link length, request body size and a computation time budget.

Every refusal is a 4xx JSON answer ``{"error": {"field", "message"}}`` naming what was too big:

* a query string longer than `codec.MAX_QUERY_LENGTH` characters: 414, field ``query``
  (the message names the longest key); the page shows the same problem on its notice;
* a request body larger than ``MAX_CONTENT_LENGTH`` bytes: 413, field ``body``;
* a request whose computations run past ``REQUEST_BUDGET_SECONDS``: 422, field ``query``. The
  budget is checked before each new model computation (`server.cache.fetch_many`), so a worker
  is held for at most the budget plus one model's computation; whatever was finished stays
  cached, so asking again continues where the refused request stopped.

Anything unexpected is a generic 500 JSON answer whose log line carries the path and the
exception's type, never the request's values (`server.requestlog`).
"""

from __future__ import annotations

import time

from flask import Flask, jsonify, request
from werkzeug.exceptions import RequestEntityTooLarge

from server import codec
from server.cache import _DEADLINE, BudgetExceeded

__all__ = ["install_limits"]


def _refusal(status: int, field: str, message: str):
    return jsonify({"error": {"field": field, "message": message}}), status


def install_limits(flask_app: Flask) -> None:
    """Attach the checks and the JSON refusals to `flask_app`."""
    budget = float(flask_app.config["REQUEST_BUDGET_SECONDS"])

    @flask_app.before_request
    def _start_budget_and_check_length():
        request.environ[_DEADLINE] = (time.monotonic() + budget, budget)
        raw = request.query_string
        if len(raw) > codec.MAX_QUERY_LENGTH:
            return _refusal(414, "query", codec.too_long_problem(raw.decode("utf-8", errors="replace")).message)
        return None

    @flask_app.errorhandler(BudgetExceeded)
    def _over_budget(err: BudgetExceeded):
        return _refusal(422, "query", f"query: this comparison needs more than the {err.budget:g} s "
                                      "a request may compute; the models finished so far are kept, so "
                                      "ask again, or compare fewer new models at once")

    @flask_app.errorhandler(RequestEntityTooLarge)
    def _body_too_large(_err):
        limit = flask_app.config.get("MAX_CONTENT_LENGTH")
        return _refusal(413, "body", f"body: the request body is larger than {limit} bytes")

    @flask_app.errorhandler(500)
    def _internal(_err):
        return _refusal(500, "", "the server failed on this request; the failure is logged without "
                                 "the request's values")
