"""Correlated pairs are kept as 2 x 2 blocks, never as an N x N matrix, and a dense covariance
file is limited in rows.

Check values: scipy.linalg.cholesky of the dense covariance (built from the definition
cov_ij = r sigma_i sigma_j) and scipy.linalg.solve_triangular / scipy.linalg.solve for the
whitened residuals and chi^2 = r^T C^-1 r. The tables are made up here (random errors and
correlations); the timing of a 5000-row table is in benchmarks/bench_store.py."""

import dataclasses

import numpy as np
import pytest
from scipy import linalg

from model import (Cosmology, MeasurementFormatError, MeasurementLimits, Nuisances, goodness_of_fit,
                   parse_measurements)
from model.fitting._likelihood import _whiten


def pairs_text(rng, pairs: int, singles: int = 3) -> str:
    """Pairs of D_M/r_d and D_H/r_d rows, interleaved with singles so a pair's rows are not
    always neighbours."""
    z = np.sort(rng.uniform(0.2, 2.3, pairs))
    rows = ["z,kind,value,error,label,z_helio,group,correlation"]
    for i in range(pairs):
        r = rng.uniform(-0.9, 0.9)
        rows.append(f"{z[i]:.4f},dm_over_rd,{20 * z[i]:.5f},{rng.uniform(0.1, 0.6):.4f},,,g{i},{r:.4f}")
        if i < singles:
            rows.append(f"{z[i]:.4f},hubble_parameter,{70 * (1 + z[i]):.3f},{rng.uniform(2, 9):.3f},,,,")
        rows.append(f"{z[i]:.4f},dh_over_rd,{25 / (1 + z[i]):.5f},{rng.uniform(0.1, 0.9):.4f},,,g{i},{r:.4f}")
    return "\n".join(rows) + "\n"


def test_blocks_equal_the_dense_cholesky_factor_and_solve():
    rng = np.random.default_rng(4)
    data = parse_measurements(pairs_text(rng, 40))
    dense = data.covariance  # from the definition: error^2 on the diagonal, r e_i e_j for each pair
    assert np.count_nonzero(dense - np.diag(np.diag(dense))) == 2 * len(data.pair_rows) == 80
    np.testing.assert_allclose(np.diag(dense), data.error**2, rtol=1e-15)
    reference = linalg.cholesky(dense, lower=True)
    np.testing.assert_allclose(data.cholesky, reference, rtol=1e-14, atol=1e-15)
    x = rng.normal(size=(3, len(data)))
    np.testing.assert_allclose(_whiten(data, x.copy()), linalg.solve_triangular(reference, x.T, lower=True).T,
                               rtol=1e-12, atol=1e-14)
    gof = goodness_of_fit(Cosmology(h0=67.36, omega_m=0.3153), data, Nuisances(r_d=147.0))
    r = data.value - gof.prediction
    assert gof.chi2 == pytest.approx(float(r @ linalg.solve(dense, r)), rel=1e-10)


def test_a_5000_row_pairs_table_keeps_no_square_array():
    rng = np.random.default_rng(5)
    data = parse_measurements(pairs_text(rng, 2500, singles=0))
    assert len(data) == 5000 and data.covariance_source == "pairs" and len(data.pair_rows) == 2500
    for field in dataclasses.fields(data):
        value = getattr(data, field.name)
        if isinstance(value, np.ndarray):
            assert value.size <= 2 * len(data), field.name
    assert data.file_covariance is None and data.file_cholesky is None


def test_a_covariance_file_covers_at_most_max_covariance_rows():
    assert MeasurementLimits().max_covariance_rows == 2000  # the documented default
    table = "z,kind,value,error\n" + "".join(f"0.{i + 1},hubble_parameter,{70 + i},2\n" for i in range(4))
    covariance = "".join(",".join("4" if i == j else "0" for j in range(4)) + "\n" for i in range(4))
    parsed = parse_measurements(table, covariance, limits=MeasurementLimits(max_covariance_rows=4))
    np.testing.assert_array_equal(parsed.cholesky, 2 * np.eye(4))  # sqrt of the diagonal, 4
    with pytest.raises(MeasurementFormatError) as err:
        parse_measurements(table, covariance, limits=MeasurementLimits(max_covariance_rows=3))
    assert (err.value.source, err.value.line, err.value.column) == ("covariance", 1, 1)
    assert "at most 3 measurement rows" in str(err.value) and "group and correlation" in str(err.value)
