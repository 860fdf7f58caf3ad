"""Fits and maps keep to the request's computation budget (server.limits sets it per request):
past it they stop with a message the data panel shows, and nothing half-done is memoized."""

from __future__ import annotations

import time

import pytest
from flask import request

import model
from server import codec, compute, data_store
from server.cache import _DEADLINE, BudgetExceeded


def test_a_fit_or_map_asked_for_after_the_deadline_is_refused_before_it_starts(app_factory):
    app = app_factory(CACHE_TYPE="SimpleCache")
    with app.server.test_request_context():
        digest = data_store.store(data_store.demo_bytes(), None, "demo_synthetic.csv").hash
        key = codec.model_cache_key(codec.decode("m1.h0=67.8").models[0])
        request.environ[_DEADLINE] = (time.monotonic() - 1.0, 5.0)
        with pytest.raises(BudgetExceeded):
            compute.fit(key, digest, (("omega_m", 0.1, 0.6),), "model")


def test_fit_and_map_that_run_past_the_request_deadline_stop_with_a_clear_error(app_factory, monkeypatch):
    app = app_factory(CACHE_TYPE="SimpleCache")
    with app.server.test_request_context():
        digest = data_store.store(data_store.demo_bytes(), None, "demo_synthetic.csv").hash
        key = codec.model_cache_key(codec.decode("m1.h0=67.9").models[0])
        request.environ[_DEADLINE] = (time.monotonic() + 600.0, 600.0)
        # the budget runs out once the computation has started
        monkeypatch.setattr(compute, "request_deadline", lambda: time.monotonic() - 1.0)
        with pytest.raises(model.FitError, match="time budget"):
            compute.fit(key, digest, (("omega_m", 0.1, 0.6), ("w0", -2.0, -0.3)), "model")
        with pytest.raises(model.FitError, match="time budget"):
            compute.chi2_grid(key, digest, ("omega_m", 0.1, 0.6), ("w0", -2.0, -0.3), 60, "model")
        # with time to spare, the same request computes (the refusal was not memoized)
        monkeypatch.setattr(compute, "request_deadline", lambda: time.monotonic() + 600.0)
        fitted = compute.fit(key, digest, (("omega_m", 0.1, 0.6), ("w0", -2.0, -0.3)), "model")
        assert fitted["names"] == ["omega_m", "w0"] and fitted["chi2_min"] > 0
