"""`model.binned_residuals` against the inverse-variance weighted mean written out by hand with
numpy (Bevington & Robinson 2003, eqs. 4.17 and 4.19, numbers from memory: mean = Σ w r / Σ w,
σ = 1/√Σw, w = 1/σ²)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import model

Z = np.array([0.05, 0.2, 0.45, 0.5, 0.9, 1.0, 2.5])
R = np.array([0.10, -0.30, 0.20, 0.05, -0.12, 0.40, 9.0])
E = np.array([0.10, 0.20, 0.15, 0.05, 0.30, 0.25, 1.0])


def _by_hand(rows):
    w = 1.0 / E[rows] ** 2
    return np.sum(w * R[rows]) / np.sum(w), 1.0 / np.sqrt(np.sum(w))


def test_means_and_errors_match_the_hand_computation_and_empty_bins_are_listed():
    b = model.binned_residuals(Z, R, E, [0.0, 0.3, 0.6, 0.8, 1.0])
    # 0 ≤ z < 0.3: rows 0, 1; 0.3 ≤ z < 0.6: rows 2, 3; 0.6-0.8 empty; 0.8 ≤ z ≤ 1 (closed): rows 4, 5
    expected = [_by_hand([0, 1]), _by_hand([2, 3]), _by_hand([4, 5])]
    np.testing.assert_allclose(b.mean, [m for m, _ in expected], rtol=1e-14)
    np.testing.assert_allclose(b.error, [s for _, s in expected], rtol=1e-14)
    np.testing.assert_array_equal(b.count, [2, 2, 2])
    np.testing.assert_array_equal(b.low, [0.0, 0.3, 0.8])
    np.testing.assert_array_equal(b.high, [0.3, 0.6, 1.0])
    assert b.empty == ((0.6, 0.8),)  # z = 2.5 lies beyond the last edge and is not counted


def test_one_point_per_bin_is_that_point():
    b = model.binned_residuals(Z[:3], R[:3], E[:3], [0.0, 0.1, 0.3, 0.5])
    np.testing.assert_allclose(b.mean, R[:3], rtol=1e-15)
    np.testing.assert_allclose(b.error, E[:3], rtol=1e-15)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(st.floats(0.0, 3.0), st.floats(-5, 5), st.floats(0.01, 3.0)), min_size=1, max_size=30))
def test_the_mean_lies_within_the_bins_residuals(points):
    z, r, e = (np.array(v, dtype=float) for v in zip(*points))
    b = model.binned_residuals(z, r, e, [0.0, 1.0, 2.0, 3.0])
    assert b.count.sum() == len(points)
    for lo, hi, mean, err in zip(b.low, b.high, b.mean, b.error):
        inside = (z >= lo) & ((z < hi) | ((hi == 3.0) & (z == hi)))
        assert r[inside].min() - 1e-12 <= mean <= r[inside].max() + 1e-12
        assert err <= e[inside].min() + 1e-15  # adding points never loosens the error


@pytest.mark.parametrize("edges, words", [([0.5], "edges"), ([1.0, 0.5], "edges"), ([0.0, 0.0, 1.0], "edges")])
def test_bad_edges_name_the_argument(edges, words):
    with pytest.raises(ValueError, match=words):
        model.binned_residuals(Z, R, E, edges)


def test_a_non_positive_error_is_refused():
    with pytest.raises(ValueError, match="error"):
        model.binned_residuals(Z, R, np.where(E > 0.2, 0.0, E), [0.0, 3.0])
