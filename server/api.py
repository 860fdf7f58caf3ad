"""JSON routes: ``GET /healthz`` and ``GET /api/v1/compare?<link query>``.

Any input the page would flag is a 400 ``{"error": {"field", "message"}}``; keys we do not know
are listed in ``warnings``. NaN and infinities are sent as null. Never a 500 for bad input.
"""

from __future__ import annotations

from importlib import metadata

from flask import Blueprint, current_app, jsonify, request

from server import codec, compute

__all__ = ["make_blueprint", "compare_payload", "API_VERSION"]

API_VERSION = 1


def _package_version() -> str:
    try:
        return metadata.version("friedmann-desk")
    except metadata.PackageNotFoundError:
        return "0+unknown"


def _error(field: str, message: str):
    return jsonify({"error": {"field": field, "message": message}}), 400


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
    payload = {
        "version": API_VERSION,
        "query": codec.encode(state),
        "reference": codec.reference_slot(state),
        "models": models,
        "warnings": [f"{key}: unknown key, ignored" for key in state.unknown],
    }
    return compute.json_ready(payload), None


def make_blueprint() -> Blueprint:
    bp = Blueprint("fdesk_api", __name__)

    @bp.get("/healthz")
    def healthz():
        return jsonify({
            "status": "ok",
            "version": _package_version(),
            "cache": current_app.config["CACHE_TYPE"],
        })

    @bp.get("/api/v1/compare")
    def compare():
        query = request.query_string.decode("utf-8", errors="replace")
        try:
            payload, problem = compare_payload(query)
        except Exception as err:  # noqa: BLE001 - a model failure must still answer in JSON
            current_app.logger.exception("compare failed for %r", query)
            return jsonify({"error": {"field": "", "message": f"the computation failed: {err}"}}), 422
        if problem is not None:
            return _error(problem.key, problem.message)
        return jsonify(payload)

    return bp
