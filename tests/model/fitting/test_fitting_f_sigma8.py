"""The f_sigma8 measurement kind: predicted as f σ8 D(z)/D(0) (its definition; e.g. Percival &
White 2009, MNRAS 393, 297, from memory), scored with correlated pairs and covariance files
(χ² against numpy's dense solve of rᵀC⁻¹r), fitted with σ8 free, and mapped.

Tables here are invented: values made from a model of our own, then the fit must find it back.
"""

from __future__ import annotations

import numpy as np
import pytest

import model

TRUTH = model.Cosmology(h0=70.0, omega_m=0.3, sigma8=0.76, t_cmb=0.0, m_nu=())
Z = np.array([0.15, 0.38, 0.51, 0.7, 1.1, 1.48])


def _table(cosmo, z=Z, scale=1.0, error=0.02, extra=""):
    v = model.evaluate(cosmo, z)["f_sigma8"] * scale
    lines = ["z,kind,value,error,label,group,correlation"]
    lines += [f"{float(zz)!r},f_sigma8,{float(vv)!r},{error},invented RSD {i},," for i, (zz, vv) in enumerate(zip(z, v))]
    return "\n".join(lines) + "\n" + extra


def test_kind_is_registered_dimensionless_and_predicted_from_growth():
    kind = model.MEASUREMENT_KINDS["f_sigma8"]
    assert kind.unit == "" and kind.quantity == "f_sigma8" and kind.nuisance == "" and kind.zero_redshift
    data = model.parse_measurements(_table(TRUTH))
    g = model.goodness_of_fit(TRUTH, data)
    d, f = model.linear_growth(TRUTH, Z)
    np.testing.assert_allclose(g.prediction, 0.76 * f * d, rtol=1e-12)  # f σ8 D/D(0)
    assert g.chi2 < 1e-20 and g.dof == Z.size


def test_chi2_with_a_correlated_pair_and_a_covariance_file_equals_the_dense_solve():
    other = TRUTH.replace(sigma8=0.8)
    text = _table(TRUTH, Z[:2], scale=1.03)
    rows = text.strip().split("\n")
    rows[1] = rows[1][:-1] + "P,0.4"
    rows[2] = rows[2][:-1] + "P,0.4"
    text = "\n".join(rows) + "\n0.61,dh_over_rd,20.1,0.5,invented BAO,,\n"
    data = model.parse_measurements(text)
    g = model.goodness_of_fit(other, data, model.Nuisances(r_d=147.0))
    residual = data.value - g.prediction
    cov = np.diag(data.error ** 2)
    cov[0, 1] = cov[1, 0] = 0.4 * data.error[0] * data.error[1]
    assert g.chi2 == pytest.approx(residual @ np.linalg.solve(cov, residual), rel=1e-12)
    full = "\n".join(",".join(repr(float(x)) for x in row) for row in cov)
    plain = "\n".join(r.rsplit(",", 2)[0] for r in text.strip().split("\n")) + "\n"  # no pair columns
    g_file = model.goodness_of_fit(other, model.parse_measurements(plain, full), model.Nuisances(r_d=147.0))
    assert g_file.chi2 == pytest.approx(g.chi2, rel=1e-10)


def test_quick_fit_with_sigma8_free_finds_the_invented_truth():
    data = model.parse_measurements(_table(TRUTH))
    start = TRUTH.replace(sigma8=0.9)
    result = model.quick_fit(start, data, ["sigma8"])
    # the fits solve growth on a coarser grid than evaluate (about 1e-6 relative)
    assert result.values[0] == pytest.approx(0.76, rel=1e-5)
    assert result.cosmology.sigma8 == pytest.approx(0.76, rel=1e-5) and result.chi2_min < 1e-6
    both = model.quick_fit(TRUTH.replace(sigma8=0.85, omega_m=0.26), data, {"omega_m": (0.1, 0.6),
                                                                             "sigma8": (0.3, 1.5)})
    np.testing.assert_allclose(both.values, [0.3, 0.76], rtol=1e-4)


def test_sigma8_free_without_growth_rows_is_refused_by_name():
    data = model.parse_measurements("z,kind,value,error\n1.2,hubble_parameter,118.0,9.0\n")
    with pytest.raises(model.FitError, match="sigma8"):
        model.quick_fit(TRUTH, data, ["sigma8"])


def test_chi2_map_over_omega_m_and_sigma8_is_lowest_at_the_truth():
    data = model.parse_measurements(_table(TRUTH))
    m = model.chi2_map(TRUTH, data, "omega_m", np.linspace(0.2, 0.4, 5), "sigma8", np.linspace(0.66, 0.86, 5))
    assert m.best == {"omega_m": pytest.approx(0.3), "sigma8": pytest.approx(0.76)}
    # a node's χ² equals goodness_of_fit of that model (to the fits' coarser growth grid)
    g = model.goodness_of_fit(TRUTH.replace(omega_m=0.25, sigma8=0.81), data)
    assert g.chi2 > 1.0 and m.chi2[3, 1] == pytest.approx(g.chi2, rel=1e-4)
