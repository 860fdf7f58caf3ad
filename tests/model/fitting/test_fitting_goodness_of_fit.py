"""chi^2, nuisance treatment, p-values, information criteria and residuals of model._likelihood.

Independent references: numpy/scipy linear algebra for r^T C^-1 r, scipy.integrate.quad for
the brute-force marginalisation over the supernova offset (Goliath et al. 2001, A&A 380, 6;
Conley et al. 2011, ApJS 192, 1, appendix C), scipy.optimize for the profile over r_d, closed
forms of the chi^2 survival function for even degrees of freedom (Abramowitz & Stegun 1964,
eq. 26.4.21), and the definitions of AIC (Akaike 1974) and BIC (Schwarz 1978).
"""

import math

import numpy as np
import pytest
from scipy import integrate, linalg, optimize

from measurement_tables import BAO_DISTANCE, measurement_set, table_text
from model import (Cosmology, Nuisances, compare_models, evaluate, goodness_of_fit,
                   parse_measurements)

TRUE = Cosmology(h0=70.0, omega_m=0.3, w0=-0.95, label="truth")
OTHER = Cosmology(h0=67.0, omega_m=0.35, label="other")


def random_covariance(rng, sigma, correlation=0.3):
    """An SPD covariance with the given diagonal errors and random correlations."""
    n = sigma.size
    a = rng.normal(size=(n, n))
    c = correlation * (a @ a.T) / n + np.eye(n)
    d = 1.0 / np.sqrt(np.diag(c))
    return (c * np.outer(d, d)) * np.outer(sigma, sigma)


def supernovae(rng, n=25, offset=0.3, covariance=True):
    z = np.sort(rng.uniform(0.02, 1.2, n))
    sigma = rng.uniform(0.1, 0.2, n)
    cov = random_covariance(rng, sigma) if covariance else np.diag(sigma**2)
    mu = evaluate(TRUE, z)["distance_modulus"] + offset + rng.multivariate_normal(np.zeros(n), cov)
    data = measurement_set(z, "distance_modulus", mu, sigma, cov if covariance else None)
    return data, np.asarray(data.covariance)


def test_chi2_with_full_covariance_matches_direct_solve():
    rng = np.random.default_rng(11)
    data, cov = supernovae(rng)
    gof = goodness_of_fit(OTHER, data, Nuisances(offset=0.25))
    r = data.value - (evaluate(OTHER, data.z)["distance_modulus"] + 0.25)
    # r^T C^-1 r with scipy's general solver (no Cholesky), the definition of chi^2
    assert gof.chi2 == pytest.approx(float(r @ linalg.solve(cov, r)), rel=1e-10)
    assert gof.dof == len(data) and gof.n_parameters == 0


def test_offset_marginalisation_matches_brute_force_quadrature():
    rng = np.random.default_rng(12)
    data, cov = supernovae(rng, n=30)
    gof = goodness_of_fit(OTHER, data)  # offset free: analytically marginalised
    residual0 = data.value - evaluate(OTHER, data.z)["distance_modulus"]
    inverse = linalg.inv(cov)

    def chi2_of(offset):
        r = residual0 - offset
        return float(r @ inverse @ r)

    # -2 ln ∫ exp(-chi^2(M)/2) dM with a flat prior on M, by quadrature around a shift that
    # keeps the integrand of order one (the shift is any number; here chi2 at M = 0).
    shift = chi2_of(0.0)
    centre = optimize.minimize_scalar(chi2_of).x
    value, _ = integrate.quad(lambda m: math.exp(-(chi2_of(m) - shift) / 2.0),
                              centre - 3.0, centre + 3.0, epsabs=0.0, epsrel=1e-12, limit=200)
    brute = shift - 2.0 * math.log(value)
    e = float(np.ones(len(data)) @ inverse @ np.ones(len(data)))
    # Goliath et al. 2001: chi2_marg = a - b^2/e + ln(e / 2 pi); the reported chi^2 leaves
    # out the model-independent ln(e / 2 pi).
    assert gof.chi2 + math.log(e / (2.0 * math.pi)) == pytest.approx(brute, abs=1e-6)
    assert gof.offset == pytest.approx(centre, abs=1e-6)
    assert gof.n_parameters == 1 and gof.dof == len(data) - 1


def bao_rows(rng, cosmo, r_d, noise=True):
    z = np.array([0.3, 0.5, 0.5, 0.9, 0.9, 1.5, 2.3])
    kinds = ["dv_over_rd", "dm_over_rd", "dh_over_rd", "dm_over_rd", "dh_over_rd", "dv_over_rd",
             "dh_over_rd"]
    q = evaluate(cosmo, z)
    value = np.array([q[BAO_DISTANCE[k]][i] for i, k in enumerate(kinds)]) / r_d
    error = 0.02 * value
    if noise:
        value = value + rng.normal(0.0, error)
    return z, kinds, value, error


def test_free_r_d_is_the_profile_minimum():
    rng = np.random.default_rng(13)
    z, kinds, value, error = bao_rows(rng, TRUE, 147.0)
    data = measurement_set(z, kinds, value, error)
    gof = goodness_of_fit(OTHER, data, Nuisances(r_d="free"))
    q = evaluate(OTHER, z)
    distance = np.array([q[BAO_DISTANCE[k]][i] for i, k in enumerate(kinds)])

    def chi2_of(r_d):
        return float(np.sum(((value - distance / r_d) / error) ** 2))

    best = optimize.minimize_scalar(chi2_of, bounds=(100.0, 200.0), method="bounded",
                                    options={"xatol": 1e-10})
    assert gof.r_d == pytest.approx(best.x, rel=1e-7)
    assert gof.chi2 == pytest.approx(best.fun, rel=1e-9)
    # r_d from the model: the sound horizon of model.acoustic_scales
    from model import acoustic_scales
    gof_model = goodness_of_fit(OTHER, data)
    assert gof_model.r_d == acoustic_scales(OTHER)["r_drag"]
    assert gof_model.chi2 == pytest.approx(chi2_of(gof_model.r_d), rel=1e-10)


def test_p_value_matches_closed_forms_for_even_dof():
    rng = np.random.default_rng(14)
    # 3 supernovae with the offset free: dof = 2, P(chi2 > x) = exp(-x/2)
    data, _ = supernovae(rng, n=3, covariance=False)
    gof = goodness_of_fit(OTHER, data)
    assert gof.dof == 2
    assert gof.p_value == pytest.approx(math.exp(-gof.chi2 / 2.0), rel=1e-12)
    # 5: dof = 4, P = exp(-x/2) (1 + x/2)  (Abramowitz & Stegun 1964, eq. 26.4.21)
    data, _ = supernovae(rng, n=5, covariance=False)
    gof = goodness_of_fit(OTHER, data)
    x = gof.chi2
    assert gof.dof == 4 and gof.p_value == pytest.approx(math.exp(-x / 2) * (1 + x / 2), rel=1e-12)


def test_information_criteria_follow_their_definitions():
    rng = np.random.default_rng(15)
    data, _ = supernovae(rng, n=40)
    gof = goodness_of_fit(OTHER, data, n_free=3)
    k = 3 + 1  # three fitted parameters and the free offset
    assert gof.n_parameters == k and gof.dof == 40 - k
    assert gof.aic == pytest.approx(gof.chi2 + 2 * k, rel=1e-15)          # Akaike 1974
    assert gof.bic == pytest.approx(gof.chi2 + k * math.log(40), rel=1e-15)  # Schwarz 1978


def test_compare_models_gives_delta_chi2_against_the_reference():
    rng = np.random.default_rng(16)
    data, _ = supernovae(rng, n=40)
    results = compare_models([TRUE, OTHER], data, reference=1)
    single = [goodness_of_fit(m, data) for m in (TRUE, OTHER)]
    assert [r.label for r in results] == ["truth", "other"]
    assert results[1].delta_chi2 == 0.0
    assert results[0].delta_chi2 == pytest.approx(single[0].chi2 - single[1].chi2, rel=1e-12)
    with pytest.raises(ValueError, match="reference"):
        compare_models([TRUE], data, reference=2)


def test_residuals_and_pulls_by_kind():
    rng = np.random.default_rng(17)
    z_b, kinds_b, value_b, error_b = bao_rows(rng, TRUE, 147.0)
    z_s = np.array([0.05, 0.4])
    mu = evaluate(TRUE, z_s)["distance_modulus"]
    rows = [{"z": z, "kind": k, "value": v, "error": e} for z, k, v, e in zip(z_b, kinds_b, value_b, error_b)]
    rows += [{"z": z, "kind": "distance_modulus", "value": m, "error": 0.1, "z_helio": z + 0.001}
             for z, m in zip(z_s, mu)]
    rows += [{"z": 0.0, "kind": "hubble_parameter", "value": 71.0, "error": 1.0},
             {"z": 1.0, "kind": "luminosity_distance", "value": 6700.0, "error": 100.0},
             {"z": 1.0, "kind": "angular_diameter_distance", "value": 1700.0, "error": 50.0},
             {"z": 1.0, "kind": "comoving_distance", "value": 3400.0, "error": 70.0}]
    data = parse_measurements(table_text(rows))
    gof = goodness_of_fit(TRUE, data, Nuisances(r_d=147.0, offset=0.0))
    parts = gof.by_kind()
    assert set(parts) == set(data.kind.tolist())
    assert sum(p.z.size for p in parts.values()) == len(data)
    q1 = evaluate(TRUE, np.array([0.0, 1.0]))
    expected = {  # Hogg 1999 definitions, from model.evaluate's own keys
        "hubble_parameter": q1["hubble_parameter"][0],
        "luminosity_distance": q1["luminosity_distance"][1],
        "angular_diameter_distance": q1["angular_diameter_distance"][1],
        "comoving_distance": q1["comoving_distance"][1],
    }
    for kind, value in expected.items():
        assert parts[kind].prediction[0] == pytest.approx(value, rel=1e-12)
    # heliocentric redshift: D_L = (1 + z_helio) D_M(z) (Davis et al. 2011, ApJ 741, 67; from memory)
    d_m = evaluate(TRUE, z_s)["transverse_comoving_distance"]
    np.testing.assert_allclose(parts["distance_modulus"].prediction,
                               5 * np.log10((1 + z_s + 0.001) * d_m) + 25, rtol=0, atol=1e-12)
    for part in parts.values():
        np.testing.assert_allclose(part.residual, part.value - part.prediction, rtol=0, atol=1e-12)
        np.testing.assert_allclose(part.pull, part.residual / part.error, rtol=1e-14)
        # units of docs/measurements-format.md (CONVENTIONS: Mpc, mag, km/s/Mpc; ratios "")
        assert part.unit == {"distance_modulus": "mag", "hubble_parameter": "km/s/Mpc"}.get(
            part.kind, "" if part.kind.endswith("_over_rd") else "Mpc"), part.kind
    # the BAO rows at the truth with r_d = 147 Mpc carry only the 2 % noise drawn above
    assert np.all(np.abs(parts["dm_over_rd"].pull) < 5)


def test_pulls_at_the_true_model_are_standard_normal_up_to_the_offset_leverage():
    """Over 300 noisy realisations of 40 supernovae with the offset free, the pulls at the true
    model have mean 0 and variance 1 - 1/N (GLS residuals: Var r_i = sigma^2 (1 - h_ii), hat
    matrix leverage h_ii = 1/N for one additive parameter and equal errors; e.g. Draper &
    Smith, Applied Regression Analysis, 3rd ed. 1998, section 8.1)."""
    rng = np.random.default_rng(18)
    n, realisations = 40, 300
    z = np.sort(rng.uniform(0.02, 1.2, n))
    mu = evaluate(TRUE, z)["distance_modulus"]
    pulls = []
    for _ in range(realisations):
        data = measurement_set(z, "distance_modulus", mu + 0.2 + rng.normal(0.0, 0.15, n), 0.15)
        pulls.append(goodness_of_fit(TRUE, data).pull)
    pulls = np.concatenate(pulls)
    tolerance = 4.0 / math.sqrt(pulls.size)  # 4 standard errors
    assert abs(pulls.mean()) < tolerance
    assert pulls.std() == pytest.approx(math.sqrt(1 - 1 / n), abs=4.0 / math.sqrt(2 * pulls.size))


def test_nuisance_settings_are_validated():
    for bad in ({"r_d": -1.0}, {"r_d": "fitted"}, {"offset": float("nan")}, {"offset": "model"},
                {"r_d": True}):
        with pytest.raises(ValueError):
            Nuisances(**bad)


def test_chi2_with_correlated_pairs_in_any_row_order_matches_direct_solve():
    rng = np.random.default_rng(19)
    z, kinds, value, error = bao_rows(rng, TRUE, 147.0)
    # pairs on rows (1, 4) and (2, 6): not adjacent, and a row between them
    group = ["", "a", "b", "", "a", "", "b"]
    correlation = [None, -0.4, 0.3, None, -0.4, None, 0.3]
    data = measurement_set(z, kinds, value, error, group=group, correlation=correlation)
    assert data.covariance_source == "pairs"
    gof = goodness_of_fit(OTHER, data, Nuisances(r_d=150.0))
    r = value - gof.prediction
    assert gof.chi2 == pytest.approx(float(r @ linalg.solve(data.covariance, r)), rel=1e-12)
    cov = np.diag(np.asarray(error) ** 2)
    cov[1, 4] = cov[4, 1] = -0.4 * error[1] * error[4]
    cov[2, 6] = cov[6, 2] = 0.3 * error[2] * error[6]
    np.testing.assert_allclose(data.covariance, cov, rtol=1e-15)
