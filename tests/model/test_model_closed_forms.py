"""The model against textbook closed forms (T_CMB = 0 unless a radiation case says otherwise).

Each closed form lives in closed_forms.py with its source named beside it. Distances are
compared in units of the model's own D_H = c/H0 (checked separately against c = 299792.458 km/s
exactly) and times in units of t_H = 1/H0.
"""

import mpmath as mp
import numpy as np
import pytest

import closed_forms as cf
import model
import reference as ref
from helpers import RTOL, Mismatches

ZS = np.array([1e-3, 0.01, 0.1, 0.5, 1.0, 2.0, 5.0, 10.0, 100.0, 1100.0])
H0 = 70.0
D_H = 299792.458 / H0                                   # Mpc; c exact (SI)
T_H = float(ref.MPC_M / (H0 * 1000) / ref.GYR_S)         # Gyr; IAU pc, Julian year


def _ev(cosmo, zs=ZS):
    return model.evaluate(cosmo, zs)


def _check_series(mm, name, got, zs, fn, scale):
    for g, z in zip(np.asarray(got).reshape(-1), zs):
        mm.check(name, z, g, scale * fn(float(z)), RTOL)


def test_hubble_distance_and_time_units():
    c = model.Cosmology(h0=H0, omega_m=0.3, t_cmb=0.0)
    assert abs(c.hubble_distance / D_H - 1) < 1e-14     # c = 299 792.458 km/s exactly (SI)
    # 1/H0 with 1 Mpc = 1e6 * 648000/pi au, 1 au = 149 597 870 700 m, Julian year: 13.968 Gyr
    assert abs(c.hubble_time / T_H - 1) < 1e-14
    assert abs(c.hubble_time - 977.792221 / H0) < 1e-6   # 977.792 Gyr km/s/Mpc, from memory


def test_einstein_de_sitter():
    # Omega_m = 1: t0 = 2/(3 H0), D_C = 2 D_H (1 - 1/sqrt(1+z)), q = 1/2
    c = model.Cosmology(h0=H0, omega_m=1.0, t_cmb=0.0)
    out = _ev(c)
    mm = Mismatches("Einstein-de Sitter")
    _check_series(mm, "comoving_distance", out["comoving_distance"], ZS, cf.eds_comoving_distance, D_H)
    _check_series(mm, "age", out["age"], ZS, cf.eds_age, T_H)
    _check_series(mm, "particle_horizon", out["particle_horizon"], ZS, cf.eds_particle_horizon, D_H)
    _check_series(mm, "deceleration_parameter", out["deceleration_parameter"], ZS, lambda z: 0.5, 1)
    mm.check("age_today", 0, model.epochs(c)["age_today"], 2 * mp.mpf(T_H) / 3, RTOL)
    assert not mm, mm.report()


def test_milne():
    # empty open universe: D_L = D_H z (1 + z/2), D_C = D_H ln(1+z), t0 = 1/H0, q = 0
    c = model.Cosmology.from_dark_energy(omega_de=0.0, h0=H0, omega_m=0.0, t_cmb=0.0)
    assert abs(c.omega_k - 1) < 1e-15
    out = _ev(c)
    mm = Mismatches("Milne")
    _check_series(mm, "luminosity_distance", out["luminosity_distance"], ZS, cf.milne_luminosity_distance, D_H)
    _check_series(mm, "comoving_distance", out["comoving_distance"], ZS, cf.milne_comoving_distance, D_H)
    _check_series(mm, "lookback_time", out["lookback_time"], ZS, cf.milne_lookback, T_H)
    _check_series(mm, "age", out["age"], ZS, lambda z: 1 / (1 + z), T_H)
    for q, z in zip(out["deceleration_parameter"], ZS):
        assert abs(q) < 1e-9, (z, q)
    assert not mm, mm.report()


def test_de_sitter():
    # Omega_Lambda = 1: E = 1, D_C = D_H z, t_L = t_H ln(1+z), comoving event horizon D_H (1+z),
    # q = -1, and an infinite age (int_0 da / a diverges)
    c = model.Cosmology(h0=H0, omega_m=0.0, t_cmb=0.0)
    out = _ev(c)
    mm = Mismatches("de Sitter")
    _check_series(mm, "comoving_distance", out["comoving_distance"], ZS, cf.de_sitter_comoving_distance, D_H)
    _check_series(mm, "lookback_time", out["lookback_time"], ZS, cf.de_sitter_lookback, T_H)
    _check_series(mm, "event_horizon", out["event_horizon"], ZS, cf.de_sitter_event_horizon, D_H)
    _check_series(mm, "deceleration_parameter", out["deceleration_parameter"], ZS, lambda z: -1.0, 1)
    assert not mm, mm.report()
    assert not np.any(np.isfinite(out["age"])), out["age"]


def _unit_radiation_temperature(h0):
    """T_CMB [K] that makes photons + three massless neutrinos exactly the critical density."""
    probe = ref.RefCosmology(h0=h0, omega_m=0.0, m_nu=())
    return float(mp.mpf(probe.t_cmb) * mp.root(1 / probe.omega_r, 4))


def test_radiation_only():
    # Omega_r = 1 (a ~ t^(1/2)): t0 = 1/(2 H0), D_C = D_H z/(1+z), age(z) = t_H a^2 / 2.
    # With this API radiation is set by T_CMB (photons, plus N_eff massless neutrinos with
    # m_nu = ()), so choose T_CMB to give Omega_r = 1 at this H0, with Omega_m = 0 and
    # Omega_k = 0; Omega_de = 1 - Omega_r then vanishes to rounding.
    t = _unit_radiation_temperature(H0)
    spec = {p.name: p for p in model.PARAMETERS}["t_cmb"]
    if spec.maximum is not None and t > spec.maximum:
        pytest.fail(f"radiation-only needs T_CMB = {t:.3f} K, above the accepted {spec.maximum} K")
    c = model.Cosmology(h0=H0, omega_m=0.0, t_cmb=t, m_nu=())
    assert abs(c.omega_r - 1) < 1e-9 and abs(c.omega_de) < 1e-9
    out = _ev(c)
    mm = Mismatches(f"radiation only, T_CMB = {t:.4f} K")
    mm.check("age_today", 0, model.epochs(c)["age_today"], mp.mpf(T_H) / 2, RTOL)
    _check_series(mm, "age", out["age"], ZS, cf.radiation_only_age, T_H)
    _check_series(mm, "comoving_distance", out["comoving_distance"], ZS, cf.radiation_only_comoving_distance, D_H)
    _check_series(mm, "deceleration_parameter", out["deceleration_parameter"], ZS, lambda z: 1.0, 1)
    assert not mm, mm.report()


def test_radiation_with_curvature_and_radiation_with_lambda():
    # default T_CMB = 2.7255 K, massless neutrinos, no matter; Omega_r from the reference
    k = model.Cosmology.from_dark_energy(omega_de=0.0, h0=H0, omega_m=0.0, m_nu=())
    lam = model.Cosmology(h0=H0, omega_m=0.0, m_nu=())
    o_r = ref.RefCosmology(h0=H0, omega_m=0.0, m_nu=()).omega_r
    mm = Mismatches("radiation + curvature / radiation + Lambda")
    ok, ol = _ev(k), _ev(lam)
    _check_series(mm, "age (r+k)", ok["age"], ZS, lambda z: cf.radiation_curvature_age(o_r, z), T_H)
    _check_series(mm, "comoving_distance (r+k)", ok["comoving_distance"], ZS,
                  lambda z: cf.radiation_curvature_comoving_distance(o_r, z), D_H)
    _check_series(mm, "age (r+L)", ol["age"], ZS, lambda z: cf.radiation_lambda_age(o_r, z), T_H)
    assert not mm, mm.report()


@pytest.mark.parametrize("omega_m", [0.05, 0.3, 0.6, 2.0])
def test_mattig_relation_matter_only(omega_m):
    # Mattig 1958: D_L = 2 D_H [Om z + (Om - 2)(sqrt(1 + Om z) - 1)] / Om^2 (open and closed, Lambda = 0)
    c = model.Cosmology.from_dark_energy(omega_de=0.0, h0=H0, omega_m=omega_m, t_cmb=0.0)
    zs = ZS      # Om = 2: the big bang lies exactly on the equator (cos theta0 = 2/Om - 1 = 0)
    out = _ev(c, zs)
    mm = Mismatches(f"Mattig, Omega_m = {omega_m}")
    _check_series(mm, "luminosity_distance", out["luminosity_distance"], zs,
                  lambda z: cf.mattig_luminosity_distance(omega_m, z), D_H)
    # parametric (cycloid) matter-only solutions for the age
    _check_series(mm, "age", out["age"], zs, lambda z: cf.matter_only_age(omega_m, z), T_H)
    assert not mm, mm.report()


@pytest.mark.parametrize("omega_m", [0.1, 0.3, 0.7])
def test_flat_matter_lambda_age_and_carlson_distance(omega_m):
    c = model.Cosmology(h0=H0, omega_m=omega_m, t_cmb=0.0)
    out = _ev(c)
    mm = Mismatches(f"flat matter + Lambda, Omega_m = {omega_m}")
    # t0 = 2/(3 H0 sqrt(OL)) asinh sqrt(OL/Om), and t(z) with a^(3/2) inside the asinh
    mm.check("age_today", 0, model.epochs(c)["age_today"], T_H * cf.flat_lambda_age(omega_m), RTOL)
    _check_series(mm, "age", out["age"], ZS, lambda z: cf.flat_lambda_age(omega_m, z), T_H)
    # Carlson R_F form of D_C (Baes, Camps & Van De Putte 2017), evaluated by scipy.special.elliprf
    carlson = D_H * cf.flat_lambda_comoving_distance_carlson(omega_m, ZS)
    for g, w, z in zip(out["comoving_distance"], carlson, ZS):
        mm.check("comoving_distance (Carlson)", z, g, w, RTOL)
    assert not mm, mm.report()


def test_flat_matter_lambda_epochs():
    # q = Om (1+z)^3 / 2 - OL / ... = 0  ->  1 + z_acc = (2 OL / Om)^(1/3); Om (1+z)^3 = OL at equality
    c = model.Cosmology(h0=H0, omega_m=0.3, t_cmb=0.0)
    ep = model.epochs(c)
    mm = Mismatches("flat matter + Lambda epochs")
    mm.check("z_acceleration", "-", ep["z_acceleration"], cf.flat_lambda_acceleration_redshift(0.3), 1e-5)
    mm.check("z_dark_energy_equality", "-", ep["z_dark_energy_equality"],
             cf.flat_lambda_de_equality_redshift(0.3), 1e-5)
    z_acc = cf.flat_lambda_acceleration_redshift(0.3)
    mm.check("age_acceleration", "-", ep["age_acceleration"], T_H * cf.flat_lambda_age(0.3, z_acc), 2e-5)
    assert ep["fate"] == "eternal expansion"
    assert not mm, mm.report()
