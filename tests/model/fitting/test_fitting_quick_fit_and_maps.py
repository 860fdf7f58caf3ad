"""quick_fit and chi2_map of model.fitting.

References: noiseless data must be fitted exactly (chi^2_min = 0 at the true parameters, the
definition of a least-squares estimate); the Gauss-Newton covariance (J^T J)^-1 must equal
2 H^-1 with H the Hessian of chi^2 (Press et al., Numerical Recipes, 3rd ed. 2007, section
15.5), here taken by central finite differences of chi^2 from model.evaluate; parameter pulls
(fit - truth)/sigma over noisy realisations are standard normal for a well-constrained
Gaussian problem (Cramer-Rao; e.g. Press et al. section 15.6); one parameter's Delta chi^2 = 1
marks its 1-sigma interval (Press et al. section 15.6); the two-parameter levels follow the
closed form delta chi^2 = -2 ln(1 - p) (Press et al. section 15.6).
"""

import math

import numpy as np
import pytest

from measurement_tables import BAO_DISTANCE, table_text
from model import (CONFIDENCE_LEVELS_2D, Cosmology, FitError, Nuisances, acoustic_scales,
                   chi2_map, evaluate, goodness_of_fit, parse_measurements, quick_fit)

TRUE = Cosmology(h0=69.0, omega_m=0.31, w0=-0.9, wa=-0.3, label="truth")
R_D = 147.5  # Mpc, for data made with r_d fixed
OFFSET = 0.37  # mag


def make_rows(truth, rng=None, n_sn=120, r_d=R_D, offset=OFFSET, sn_error=0.12, bao_frac=0.01,
              hubble=True, sn_z=None):
    """Rows of SN-like, BAO-like and H(z) measurements of ``truth``; noiseless without rng."""
    z_sn = np.linspace(0.02, 1.5, n_sn) if sn_z is None else sn_z
    mu = evaluate(truth, z_sn)["distance_modulus"] + offset
    rows = [{"z": z, "kind": "distance_modulus", "value": m, "error": sn_error} for z, m in zip(z_sn, mu)]
    z_b = [0.3, 0.5, 0.5, 0.8, 0.8, 1.2, 1.2, 2.3, 2.3]
    kinds = ["dv_over_rd", "dm_over_rd", "dh_over_rd"] + ["dm_over_rd", "dh_over_rd"] * 3
    for z, kind in zip(z_b, kinds):
        value = float(evaluate(truth, z)[BAO_DISTANCE[kind]]) / r_d
        rows.append({"z": z, "kind": kind, "value": value, "error": bao_frac * value})
    if hubble:
        for z in (0.0, 0.4, 1.0, 1.8):
            value = float(evaluate(truth, z)["hubble_parameter"])
            rows.append({"z": z, "kind": "hubble_parameter", "value": value, "error": 0.02 * value})
    if rng is not None:
        for row in rows:
            row["value"] += rng.normal(0.0, row["error"])
    return rows


def data_of(rows):
    return parse_measurements(table_text(rows))


START = Cosmology(h0=66.0, omega_m=0.27, w0=-1.0, wa=0.0, label="start")

CASES = [
    # free parameters, nuisance settings, data made with these r_d / offset
    ({"h0": (50, 90), "omega_m": (0.1, 0.6), "w0": (-2, 0), "wa": (-3, 2)}, Nuisances(r_d=R_D)),
    ({"omega_m": (0.1, 0.6), "w0": (-2, 0), "wa": (-3, 2), "r_d": (100, 200), "offset": None},
     Nuisances(r_d="free")),
    ({"h0": (50, 90), "omega_m": (0.1, 0.6), "omega_k": (-0.3, 0.3), "w0": (-2, 0), "wa": (-3, 2)},
     Nuisances(r_d=R_D)),
]


@pytest.mark.parametrize("free, nuisances", CASES, ids=["h0-om-w0-wa", "nuisances-explicit", "curved"])
def test_noiseless_data_give_back_the_truth(free, nuisances):
    truth = TRUE.replace(omega_k=0.05) if "omega_k" in free else TRUE
    start = START.replace(h0=truth.h0) if "h0" not in free else START
    data = data_of(make_rows(truth))
    fit = quick_fit(start, data, free, nuisances)
    want = {"h0": truth.h0, "omega_m": truth.omega_m, "omega_k": truth.omega_k, "w0": truth.w0,
            "wa": truth.wa, "r_d": R_D, "offset": OFFSET}
    for name, value in fit.best.items():
        assert value == pytest.approx(want[name], rel=1e-6, abs=1e-6), name
    assert fit.chi2_min < 1e-8 and fit.success and not fit.at_bound
    assert fit.goodness.chi2 == pytest.approx(fit.chi2_min, abs=1e-7)  # evaluate path agrees
    assert fit.dof == len(data) - len(fit.names) - (0 if "offset" in free else 1)
    assert isinstance(fit.cosmology, Cosmology)
    for name in ("h0", "omega_m", "omega_k", "w0", "wa"):
        assert getattr(fit.cosmology, name) == pytest.approx(want[name] if name in free else
                                                             getattr(start, name), rel=1e-6, abs=1e-6)


def test_r_d_from_the_model_follows_h0_and_omega_m():
    # Data whose BAO rows use the truth's own r_drag; fit h0 and omega_m with r_d from the model
    truth = Cosmology(h0=69.0, omega_m=0.31)
    r_d = acoustic_scales(truth)["r_drag"]
    data = data_of(make_rows(truth, r_d=r_d))
    start = Cosmology(h0=65.0, omega_m=0.28, omega_b=truth.omega_b)
    fit = quick_fit(start, data, {"h0": (50, 90), "omega_m": (0.1, 0.6)}, Nuisances(r_d="model"))
    assert fit.best["h0"] == pytest.approx(69.0, rel=1e-6)
    assert fit.best["omega_m"] == pytest.approx(0.31, rel=1e-6)
    assert fit.goodness.r_d == pytest.approx(r_d, rel=1e-6)


def chi2_hessian(fit, data, nuisances, steps):
    """Hessian of chi^2 from goodness_of_fit (model.evaluate) by central differences."""
    names, theta = fit.names, fit.values

    def chi2(values):
        changes = dict(zip(names, values))
        cosmological = {k: v for k, v in changes.items() if k not in ("r_d", "offset")}
        fixed = Nuisances(r_d=changes.get("r_d", nuisances.r_d),
                          offset=changes.get("offset", nuisances.offset))
        return goodness_of_fit(fit.cosmology.replace(**cosmological), data, fixed).chi2

    p = len(names)
    hessian = np.empty((p, p))
    for i in range(p):
        for j in range(i, p):
            total = 0.0
            for si, sj, sign in ((1, 1, 1), (1, -1, -1), (-1, 1, -1), (-1, -1, 1)):
                shifted = theta.copy()
                shifted[i] += si * steps[i]
                shifted[j] += sj * steps[j]
                total += sign * chi2(shifted)
            hessian[i, j] = hessian[j, i] = total / (4 * steps[i] * steps[j])
    return hessian


@pytest.mark.parametrize("noisy", [False, True], ids=["noiseless", "noisy"])
def test_jacobian_errors_match_a_finite_difference_hessian(noisy):
    rng = np.random.default_rng(31) if noisy else None
    data = data_of(make_rows(TRUE, rng))
    nuisances = Nuisances(r_d="free")
    start = START.replace(wa=TRUE.wa)  # wa is not fitted: noiseless data are then fitted exactly
    fit = quick_fit(start, data, {"omega_m": (0.1, 0.6), "w0": (-2, 0), "h0": (50, 90)}, nuisances)
    assert noisy or fit.chi2_min < 1e-8
    hessian = chi2_hessian(fit, data, nuisances, steps=0.05 * fit.errors)
    covariance = 2.0 * np.linalg.inv(hessian)  # Press et al. 2007, section 15.5
    # Gauss-Newton drops the residual-weighted second derivatives: exact without noise,
    # a few per cent with it.
    tolerance = 2e-4 if not noisy else 0.05
    np.testing.assert_allclose(fit.errors, np.sqrt(np.diag(covariance)), rtol=tolerance)
    d = np.sqrt(np.diag(covariance))
    np.testing.assert_allclose(fit.correlation, covariance / np.outer(d, d), atol=tolerance)
    assert np.allclose(np.diag(fit.correlation), 1.0)


def test_parameter_pulls_over_noisy_realisations_are_standard_normal():
    rng = np.random.default_rng(32)
    truth = Cosmology(h0=70.0, omega_m=0.3, w0=-1.0)
    clean = make_rows(truth, n_sn=40, sn_error=0.1, bao_frac=0.01, hubble=False)
    free = {"omega_m": (0.05, 0.8), "w0": (-3, 0.5)}
    pulls = []
    for _ in range(200):
        rows = [dict(row, value=row["value"] + rng.normal(0.0, row["error"])) for row in clean]
        fit = quick_fit(truth, data_of(rows), free, Nuisances(r_d=R_D))
        pulls.append((fit.values - np.array([0.3, -1.0])) / fit.errors)
    pulls = np.array(pulls)
    n = pulls.shape[0]
    # 4 standard errors of the mean and of the standard deviation of n normal draws
    np.testing.assert_array_less(np.abs(pulls.mean(axis=0)), 4.0 / math.sqrt(n))
    np.testing.assert_array_less(np.abs(pulls.std(axis=0) - 1.0), 4.0 / math.sqrt(2 * n))


def test_map_nodes_match_goodness_of_fit_and_the_minimum_is_the_truth():
    truth = Cosmology(h0=70.0, omega_m=0.3, w0=-0.9)
    data = data_of(make_rows(truth))
    x = np.linspace(0.2, 0.4, 21)  # contains 0.3
    y = np.linspace(-1.2, -0.6, 31)  # contains -0.9
    m = chi2_map(truth.replace(omega_m=0.25, w0=-1.0), data, "omega_m", x, "w0", y,
                 Nuisances(r_d=R_D))
    assert m.chi2.shape == (31, 21)
    assert m.best == {"omega_m": pytest.approx(0.3), "w0": pytest.approx(-0.9)}
    assert m.chi2_min < 1e-8 and np.nanmin(m.delta_chi2) == 0.0
    for j, i in [(0, 0), (30, 20), (5, 13), (17, 3)]:
        ref = goodness_of_fit(truth.replace(omega_m=x[i], w0=y[j]), data, Nuisances(r_d=R_D)).chi2
        assert m.chi2[j, i] == pytest.approx(ref, rel=1e-6)


def test_map_delta_chi2_of_one_is_the_conditional_one_sigma_of_the_fit():
    rng = np.random.default_rng(33)
    data = data_of(make_rows(TRUE, rng))
    nuisances = Nuisances(r_d=R_D)
    fit = quick_fit(START, data, {"omega_m": (0.1, 0.6), "w0": (-2, 0)}, nuisances)
    om, w0 = fit.values
    # conditional 1 sigma of omega_m at fixed w0: 1/sqrt(F_11), F = inverse covariance
    sigma = 1.0 / math.sqrt(np.linalg.inv(fit.covariance)[0, 0])
    m = chi2_map(fit.cosmology, data, "omega_m", om + sigma * np.array([-1.0, 0.0, 1.0]),
                 "w0", np.array([w0, w0 + 1e-3]), nuisances)
    np.testing.assert_allclose(m.chi2[0] - m.chi2[0, 1], [1.0, 0.0, 1.0], atol=0.03)


def test_two_parameter_levels_are_the_gaussian_one_and_two_sigma_regions():
    # Press et al., Numerical Recipes, 3rd ed. 2007, section 15.6: for two parameters the
    # region of probability p is delta chi^2 < -2 ln(1 - p) (chi^2 of 2 dof, closed form),
    # 2.30 and 6.18 at the Gaussian 1 and 2 sigma probabilities 68.27 % and 95.45 %.
    (p1, d1), (p2, d2) = CONFIDENCE_LEVELS_2D
    assert p1 == pytest.approx(math.erf(1 / math.sqrt(2)), rel=1e-15)
    assert p2 == pytest.approx(math.erf(2 / math.sqrt(2)), rel=1e-15)
    assert (round(100 * p1, 1), round(100 * p2, 1)) == (68.3, 95.4)
    assert d1 == pytest.approx(-2 * math.log(1 - p1), rel=1e-12)
    assert d2 == pytest.approx(-2 * math.log(1 - p2), rel=1e-12)
    assert (round(d1, 2), round(d2, 2)) == (2.30, 6.18)


def test_a_parameter_outside_its_bounds_is_reported_at_the_bound():
    data = data_of(make_rows(TRUE))
    fit = quick_fit(START, data, {"omega_m": (0.1, 0.25), "w0": (-2, 0), "wa": (-3, 2)},
                    Nuisances(r_d=R_D))
    assert fit.best["omega_m"] == pytest.approx(0.25, abs=1e-6)
    assert "omega_m" in fit.at_bound


def test_bad_requests_are_refused_with_the_reason():
    data = data_of(make_rows(TRUE, hubble=False, n_sn=10))
    sn_only = parse_measurements(table_text(make_rows(TRUE, n_sn=10)[:10]))
    cases = [
        (lambda: quick_fit(START, data, {"omega_q": None}), "unknown parameter"),
        (lambda: quick_fit(START, data, {"omega_m": (0.5, 0.1)}), "low < high"),
        (lambda: quick_fit(START, data, {"omega_m": ("a", 1)}), "two numbers"),
        (lambda: quick_fit(START, data, {}), "at least one"),
        (lambda: quick_fit(START, sn_only, ["omega_m", "r_d"]), "no measurement depends on r_d"),
        (lambda: chi2_map(START, data, "w0", [-1, -0.9], "w0", [-1, -0.9]), "must differ"),
        (lambda: chi2_map(START, data, "w0", [-1], "wa", [0, 1]), "at least two"),
        (lambda: chi2_map(START, data, "w0", [-1, 3], "wa", [0, 1]), "within"),
    ]
    for call, words in cases:
        with pytest.raises(FitError, match=words):
            call()


def test_a_fit_and_a_map_past_their_deadline_stop_with_a_clear_error(demo_set):
    import time as _time

    import model

    data = demo_set
    cosmo = model.Cosmology(h0=67.36, omega_m=0.3153)
    past = _time.monotonic() - 1.0
    with pytest.raises(model.FitError, match="time budget"):
        model.quick_fit(cosmo, data, ["omega_m", "w0"], deadline=past)
    with pytest.raises(model.FitError, match="time budget"):
        model.chi2_map(cosmo, data, "omega_m", np.linspace(0.2, 0.4, 40), "w0", np.linspace(-1.2, -0.8, 40),
                       deadline=past)
    # with time to spare the blocked map equals the one-pass result of the same nodes (2 x 1200)
    a = model.chi2_map(cosmo, data, "omega_m", np.linspace(0.2, 0.4, 60), "w0", np.linspace(-1.2, -0.8, 40),
                       deadline=_time.monotonic() + 600)
    b = model.chi2_map(cosmo, data, "omega_m", np.linspace(0.2, 0.4, 60), "w0", np.linspace(-1.2, -0.8, 40))
    np.testing.assert_array_equal(a.chi2, b.chi2)
