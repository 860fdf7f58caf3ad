"""The memo layer in front of the shared cache, and the compact x of evenly spaced curves.

Check values here are closed-form arithmetic (sums, counts) chosen for the test; the model's
own numbers are compared with `model.evaluate` directly.
"""

from __future__ import annotations

import numpy as np
import pytest

import model
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
        memo.flush_writes()
    assert calls == [(1.0, 2.0), (0.0, 1.0)]
    # a second app on the same folder (another worker) has an empty front but finds the files
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
