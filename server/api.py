"""JSON routes: ``GET /healthz``, ``GET /api/v1/compare?<link query>`` and ``POST /api/v1/data``.

``POST /api/v1/catalogue`` streams a redshift file back with every evaluate() column added
(`server.catalogue`). ``POST /api/v1/data`` stores a measurement table (and optional covariance file) and answers its
reference once the set is committed to the durable store; ``compare`` with ``data=<hash>`` adds
chi^2 per model (``server.data_store``). A malformed upload is a 400 naming file, line and column;
a removed or unknown reference a 404; too many uploads from one address a 429; a store that
cannot be written a 503 (never a 201); a full store a 507 (`data_store.DataError.status`).

Any input the page would flag is a 400 ``{"error": {"field", "message"}}``; keys we do not know
are listed in ``warnings``. NaN and infinities are sent as null. Never a 500 for bad input.
"""

from __future__ import annotations

import json
from importlib import metadata

from flask import Blueprint, current_app, jsonify, request

from server import catalogue, codec, compute, data_store
from server.cache import BudgetExceeded, Uncacheable, cache, memoized

__all__ = ["make_blueprint", "compare_payload", "API_VERSION"]

API_VERSION = 1


def _package_version() -> str:
    try:
        return metadata.version("friedmann-desk")
    except metadata.PackageNotFoundError:
        return "0+unknown"


def _error(field: str, message: str):
    return jsonify({"error": {"field": field, "message": message}}), 400


def _data_error(err: "data_store.DataError"):
    """The JSON answer for a refused upload or reference, with the status its class names."""
    body = {"field": err.field, "message": str(err)}
    if isinstance(err, data_store.DataRejected):
        body.update(line=err.line, column=err.column, column_name=err.column_name)
    if isinstance(err, data_store.UploadRateLimited):
        body.update(limit=err.limit, window_s=err.window, retry_after_s=err.retry_after)
    response = jsonify({"error": body})
    response.status_code = err.status
    if isinstance(err, data_store.UploadRateLimited):
        response.headers["Retry-After"] = str(err.retry_after)
    return response


def compare_payload(query: str) -> tuple[dict, codec.Problem | None]:
    """The compare response for a query string, or the first problem in canonical key order."""
    state = codec.decode(query)
    problems = state.problems()
    if problems:
        return {}, problems[0]
    resolved = compute.resolve_all(state)
    for r in resolved:
        if r.problem is not None:
            return {}, r.problem
    models = []
    for r in resolved:
        curves = compute.model_curves(r.key, state.view.zmax)
        at = compute.values_at(r.key, state.view.redshifts)
        models.append({
            "slot": r.state.slot,
            "label": r.state.label,
            "params": curves["params"],
            "epochs": curves["epochs"],
            "acoustic": curves["acoustic"],
            "at": {"z": list(state.view.redshifts), **at},
        })
    if state.view.data is not None:
        scores = _data_scores(state, resolved)  # raises data_store.DataError
        for entry, score in zip(models, scores["models"]):
            entry["data"] = score
    payload = {
        "version": API_VERSION,
        "query": codec.encode(state),
        "reference": codec.reference_slot(state),
        "models": models,
        "warnings": [f"{key}: unknown key, ignored" for key in state.unknown],
    }
    if state.view.data is not None:
        payload["data"] = scores["summary"]
    return compute.json_ready(payload), None


@memoized
def _answer(canonical: str) -> dict | None:
    """A valid canonical link's compare answer (plain JSON types), or None when a model is refused."""
    payload, problem = compare_payload(canonical)
    return None if problem is not None else payload


def _memoized_answer(query: str) -> dict | None:
    """Whole answers are memoized by canonical link (a cached link then costs a decode and one
    small look-up instead of four models' results); links with stored data are not, since a
    data set can be removed. The link's own unknown keys are the warnings."""
    state = codec.decode(query)
    if state.problems() or getattr(state.view, "data", None) is not None:
        return None
    payload = _answer(codec.encode(state))
    if payload is None:
        return None
    return {**payload, "warnings": [f"{key}: unknown key, ignored" for key in state.unknown]}


@memoized(front_entries=1024, shared=False)  # answers are ~10 kB: ~10 MB a worker
def _answer_text(query: str) -> str:
    """The response body for a query exactly as sent (the same link clicked again is answered
    from the worker's memory, without decoding). In process only: anyone can vary a query's
    spelling for free, so these must not fill the shared cache (`_answer`, by canonical link,
    is shared). Refused links raise `Uncacheable`: they are answered, not stored."""
    answer = _memoized_answer(query)
    if answer is None:
        raise Uncacheable(query)
    return current_app.json.dumps(answer) + "\n"


def _data_scores(state: codec.LinkState, resolved: list) -> dict:
    """chi^2, dof, p-value, AIC/BIC and delta chi^2 against the reference of every model."""
    stored = data_store.load(state.view.data)
    rows = [compute.goodness(r.key, stored.hash, state.view.r_d, compute.fitted_count(state.view, r.state.slot))
            for r in resolved]
    ref = next(g for r, g in zip(resolved, rows) if r.state.slot == codec.reference_slot(state))
    keys = ("chi2", "dof", "p_value", "n_points", "n_parameters", "aic", "bic", "r_d", "offset")
    return {
        "models": [{**{k: g[k] for k in keys}, "delta_chi2": g["chi2"] - ref["chi2"]} for g in rows],
        "summary": {"hash": stored.hash, "rows": len(stored.measurements),
                    "kinds": {k: int((stored.measurements.kind == k).sum())
                              for k in stored.measurements.kinds_present},
                    "covariance": stored.measurements.covariance_source, "r_d": state.view.r_d,
                    "units": {"chi2": "1", "r_d": "Mpc", "offset": "mag"}},
    }


# Largest request body POST /api/v1/data reads: both files at their limits plus form overhead.
_MAX_UPLOAD = data_store.LIMITS.max_bytes + data_store.LIMITS.max_covariance_bytes + 65536


def _upload_fields() -> tuple[bytes | None, bytes | None, str]:
    """(measurements, covariance, name) from a multipart form, a JSON body or a raw body."""
    if request.mimetype == "multipart/form-data" or request.mimetype == "application/x-www-form-urlencoded":
        def field(name):
            if name in request.files:
                upload = request.files[name]
                return upload.read(), upload.filename or ""
            if name in request.form:
                return request.form[name].encode("utf-8", "surrogatepass"), ""
            return None, ""
        measurements, name = field("measurements")
        covariance, _ = field("covariance")
        if measurements is None and covariance is None:
            received = request.content_length if request.content_length is not None else "an unknown number of"
            raise data_store.DataRejected("measurements", (
                f"measurements: received {received} bytes as {request.mimetype} with no 'measurements' field "
                "(curl -d sends this type by default); send the table as a file field of a multipart form "
                "(curl -F measurements=@table.csv) or as the body itself with Content-Type: text/csv "
                "(curl --data-binary @table.csv -H 'Content-Type: text/csv')"))
        return measurements, covariance, name
    # Read one byte past what could be accepted: a chunked body (no Content-Length) that is too
    # large is then refused as "more than" the limit, not reported at the size it was cut to.
    limit = data_store.LIMITS.max_bytes + (data_store.LIMITS.max_covariance_bytes
                                           if request.mimetype == "application/json" else 0)
    body = request.stream.read(limit + 1)
    if len(body) > limit:
        field = "body" if request.mimetype == "application/json" else "measurements"
        raise data_store.DataRejected(field, f"{field}: more than {limit} bytes were sent; the limit is "
                                             f"{limit} bytes ({limit / 1048576:g} MiB)")
    if request.mimetype == "application/json":
        try:
            document = json.loads(body.decode("utf-8"))
        except (UnicodeDecodeError, ValueError, RecursionError) as err:
            reason = "nested too deeply" if isinstance(err, RecursionError) else err
            raise data_store.DataRejected("body", f"body: not valid JSON ({reason}); send "
                                                  '{"measurements": "<table text>", "covariance": "<optional>"}')
        if not isinstance(document, dict) or not isinstance(document.get("measurements"), str) or \
                not isinstance(document.get("covariance", ""), (str, type(None))):
            raise data_store.DataRejected("body", 'body: expected a JSON object {"measurements": "<table text>", '
                                                  '"covariance": "<optional text>"}')
        return document["measurements"].encode("utf-8", "surrogatepass"), (
            document["covariance"].encode("utf-8", "surrogatepass") if document.get("covariance") else None), ""
    return body, None, ""


def make_blueprint() -> Blueprint:
    bp = Blueprint("fdesk_api", __name__)

    @bp.get("/healthz")
    def healthz():
        return jsonify({
            "status": "ok",
            "version": _package_version(),
            "cache": current_app.config["CACHE_TYPE"],
            "shared_cache": "ok" if getattr(cache.cache, "available", True) else "unavailable",
            "data_store": "ok" if data_store.set_store().ping() else "unavailable",
        })

    @bp.post("/api/v1/data")
    def store_data():
        if request.content_length is not None and request.content_length > _MAX_UPLOAD:
            return jsonify({"error": {"field": "body", "message": (
                f"body: {request.content_length} bytes; at most {_MAX_UPLOAD} are read (measurement file "
                f"≤ {data_store.LIMITS.max_bytes} bytes, covariance file ≤ "
                f"{data_store.LIMITS.max_covariance_bytes} bytes)")}}), 413
        try:
            measurements, covariance, name = _upload_fields()
            stored = data_store.store(measurements, covariance, name)  # returns once committed
        except data_store.DataError as err:
            return _data_error(err)
        data = stored.measurements
        return jsonify({"data": stored.hash, "query": f"data={stored.hash}", "rows": len(data),
                        "kinds": {k: int((data.kind == k).sum()) for k in data.kinds_present},
                        "covariance": data.covariance_source}), 201

    @bp.post("/api/v1/catalogue")
    def catalogue_columns():
        return catalogue.handle()

    @bp.get("/api/v1/compare")
    def compare():
        query = request.query_string.decode("utf-8", errors="replace")
        try:
            if "data=" not in query:
                try:
                    return current_app.response_class(_answer_text(query), mimetype="application/json")
                except Uncacheable:
                    pass  # refused or not memoized: answered below
            payload, problem = compare_payload(query)
        except data_store.DataError as err:  # 404 removed or unknown, 503 store out, else 400
            return _data_error(err)
        except BudgetExceeded:
            raise  # answered by server.limits (422, field "query")
        except Exception as err:  # noqa: BLE001 - a model failure must still answer in JSON
            # the query is not logged: it holds what users typed (server.requestlog)
            current_app.logger.exception("compare failed (%d-character query)", len(query))
            return jsonify({"error": {"field": "", "message": f"the computation failed: {err}"}}), 422
        if problem is not None:
            return _error(problem.key, problem.message)
        return jsonify(payload)

    return bp
