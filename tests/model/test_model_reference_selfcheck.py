"""Checks of the mpmath reference itself against closed forms, before it is trusted to judge the model.

Nothing here imports ``model``. Tolerances are far tighter than the model's (1e-7), so a wrong
reference cannot hide behind them.
"""

import mpmath as mp
import pytest

import closed_forms as cf
import reference as ref

pytestmark = pytest.mark.slow  # backed by the 30-digit mpmath reference (tests/model/reference.py)

TIGHT = mp.mpf("1e-18")   # for pure mpmath closed forms
FLOAT = 1e-13             # for float closed forms (scipy.special.elliprf)


def rel(a, b):
    return abs(mp.mpf(a) / mp.mpf(b) - 1)


# ---------------------------------------------------------------- Fermi-Dirac integrals
@pytest.mark.parametrize("y", ["1e-6", "5e-4", "0.002", "0.3", "1", "3.7", "42", "900", "2e3", "1e5"])
def test_fermi_dirac_table_matches_direct_quadrature(y):
    # direct quadrature of the defining integrals (CONVENTIONS.md) at 30 digits
    assert rel(ref.fd_energy(y), ref.fd_energy_direct(y)) < 1e-12
    assert rel(ref.fd_pressure(y), ref.fd_pressure_direct(y)) < 1e-12


@pytest.mark.parametrize("y", ["0.01", "0.5", "2", "30", "400"])
def test_fermi_dirac_energy_conservation_identity(y):
    # d ln rho / d ln a = -3(1+w) for one species  <=>  y F'(y) = F(y) - P(y)
    y = mp.mpf(y)
    deriv = mp.diff(lambda u: ref.fd_energy(mp.exp(u)), mp.log(y))
    assert rel(deriv, ref.fd_energy(y) - ref.fd_pressure(y)) < 1e-9


def test_fermi_dirac_limits():
    # F(0) = 1 (relativistic limit exact, CONVENTIONS.md); non-relativistic F -> 180 zeta(3) y / (7 pi^4)
    # (int x^2/(e^x+1) = 3 zeta(3)/2 over int x^3/(e^x+1) = 7 pi^4/120)
    assert abs(ref.fd_energy("1e-9") - 1) < 1e-17
    y = mp.mpf(10) ** 6
    assert rel(ref.fd_energy(y), 180 * mp.zeta(3) * y / (7 * mp.pi**4)) < 1e-11


def test_photon_density_parameter():
    # Omega_gamma h^2 = 2.47e-5 at 2.7255 K (commonly quoted value, from memory; 3 digits)
    c = ref.RefCosmology(h0=70, omega_m=0.3, m_nu=())
    assert abs(c.omega_gamma * c.h**2 / mp.mpf("2.47e-5") - 1) < 2e-3


# ---------------------------------------------------------------- closed forms, no radiation
ZS = ["0.001", "0.1", "1", "3", "10", "1100"]


def test_einstein_de_sitter():
    c = ref.RefCosmology(h0=70, omega_m=1.0, t_cmb=0)
    res = c.evaluate_many(ZS)
    for z, r in res.items():
        assert rel(r["comoving_distance"] / c.hubble_distance, cf.eds_comoving_distance(z)) < TIGHT
        assert rel(r["age"] / c.hubble_time, cf.eds_age(z)) < TIGHT
        assert rel(r["particle_horizon"] / c.hubble_distance, cf.eds_particle_horizon(z)) < TIGHT
        assert rel(r["deceleration_parameter"], mp.mpf(1) / 2) < TIGHT


def test_milne():
    c = ref.RefCosmology.from_dark_energy(omega_de=0.0, h0=70, omega_m=0.0, t_cmb=0)
    assert c.omega_curv == 1
    for z, r in c.evaluate_many(ZS).items():
        assert rel(r["luminosity_distance"] / c.hubble_distance, cf.milne_luminosity_distance(z)) < TIGHT
        assert rel(r["comoving_distance"] / c.hubble_distance, cf.milne_comoving_distance(z)) < TIGHT
        assert rel(r["lookback_time"] / c.hubble_time, cf.milne_lookback(z)) < TIGHT
        assert abs(r["deceleration_parameter"]) < TIGHT
    assert rel(c.age(0), c.hubble_time) < TIGHT


def test_de_sitter():
    c = ref.RefCosmology(h0=70, omega_m=0.0, t_cmb=0)
    assert c.omega_de == 1
    for z, r in c.evaluate_many(ZS, event_horizon=True).items():
        assert rel(r["comoving_distance"] / c.hubble_distance, cf.de_sitter_comoving_distance(z)) < TIGHT
        assert rel(r["lookback_time"] / c.hubble_time, cf.de_sitter_lookback(z)) < TIGHT
        assert rel(r["event_horizon"] / c.hubble_distance, cf.de_sitter_event_horizon(z)) < TIGHT
        assert rel(r["deceleration_parameter"], -1) < TIGHT


@pytest.mark.parametrize("omega_m", [0.2, 0.5, 2.5])
def test_mattig_and_matter_only_ages(omega_m):
    c = ref.RefCosmology.from_dark_energy(omega_de=0.0, h0=70, omega_m=omega_m, t_cmb=0)
    for z, r in c.evaluate_many(["0.01", "1", "5", "50"]).items():
        assert rel(r["luminosity_distance"] / c.hubble_distance,
                   cf.mattig_luminosity_distance(omega_m, z)) < TIGHT
        assert rel(r["age"] / c.hubble_time, cf.matter_only_age(omega_m, z)) < TIGHT


def test_closed_matter_only_turnaround():
    c = ref.RefCosmology.from_dark_energy(omega_de=0.0, h0=70, omega_m=2.5, t_cmb=0)
    a_max, t_max, _ = cf.closed_matter_only_turnaround(2.5)
    assert rel(c.a_turnaround_future(), a_max) < TIGHT
    assert rel(c.time_at_scale_factor(a_max) / c.hubble_time, t_max) < 1e-15  # sqrt end point


@pytest.mark.parametrize("omega_m", [0.05, 0.3, 0.9])
def test_flat_lambda_age_and_carlson_distance(omega_m):
    c = ref.RefCosmology(h0=70, omega_m=omega_m, t_cmb=0)
    for z, r in c.evaluate_many(ZS).items():
        assert rel(r["age"] / c.hubble_time, cf.flat_lambda_age(omega_m, z)) < 1e-15
        carlson = cf.flat_lambda_comoving_distance_carlson(omega_m, float(z))
        assert rel(r["comoving_distance"] / c.hubble_distance, carlson) < FLOAT * (1 + 1 / float(z))


def test_flat_lambda_epochs():
    c = ref.RefCosmology(h0=70, omega_m=0.3, t_cmb=0)
    assert rel(1 / c.a_acceleration() - 1, cf.flat_lambda_acceleration_redshift(0.3)) < 1e-15
    assert rel(1 / c.a_dark_energy_equality() - 1, cf.flat_lambda_de_equality_redshift(0.3)) < 1e-15
    d = ref.RefCosmology(h0=70, omega_m=0.8, t_cmb=0)
    a_acc, t_acc = cf.flat_lambda_future_acceleration(0.8)
    assert rel(d.a_future_acceleration(), a_acc) < 1e-15
    assert rel(d.time_at_scale_factor(a_acc) / d.hubble_time, t_acc) < 1e-15


# ---------------------------------------------------------------- closed forms with radiation
def _t_cmb_for_unit_radiation(h0):
    probe = ref.RefCosmology(h0=h0, omega_m=0.0, m_nu=())
    return float(mp.mpf(probe.t_cmb) * mp.root(1 / probe.omega_r, 4))


def test_radiation_only():
    t = _t_cmb_for_unit_radiation(70)
    c = ref.RefCosmology(h0=70, omega_m=0.0, m_nu=(), t_cmb=t)
    assert abs(c.omega_r - 1) < 1e-14 and abs(c.omega_de) < 1e-14
    for z, r in c.evaluate_many(ZS).items():
        assert rel(r["age"] / c.hubble_time, cf.radiation_only_age(z)) < 1e-13
        assert rel(r["comoving_distance"] / c.hubble_distance, cf.radiation_only_comoving_distance(z)) < 1e-13


def test_radiation_with_curvature_and_with_lambda():
    k = ref.RefCosmology.from_dark_energy(omega_de=0.0, h0=70, omega_m=0.0, m_nu=())
    lam = ref.RefCosmology(h0=70, omega_m=0.0, m_nu=())
    for z in ZS:
        assert rel(k.age(z) / k.hubble_time, cf.radiation_curvature_age(k.omega_r, z)) < TIGHT
        assert rel(k.comoving_distance(z) / k.hubble_distance,
                   cf.radiation_curvature_comoving_distance(k.omega_r, z)) < TIGHT
        assert rel(lam.age(z) / lam.hubble_time, cf.radiation_lambda_age(lam.omega_r, z)) < TIGHT


# ---------------------------------------------------------------- internal consistency
def _busy_model():
    return ref.RefCosmology(h0=68, omega_m=0.31, omega_b=0.049, omega_k=-0.04, w0=-0.9, wa=-0.3,
                            n_eff=3.1, m_nu=(0.05, 0.2, 0.0))


def test_deceleration_from_pressures_equals_derivative_of_hubble_rate():
    c = _busy_model()
    for z in ["0", "0.7", "3", "1100", "3e4"]:
        a = 1 / (1 + mp.mpf(z))
        assert abs(c.deceleration(a) - c.deceleration_numeric(a)) < 1e-9


def test_density_parameters_sum_to_one():
    c = _busy_model()
    for z in ["0", "2", "1e3", "1e5"]:
        assert abs(mp.fsum(c.density_parameters(z).values()) - 1) < 1e-25


def test_comoving_volume_closed_forms_against_shell_integral():
    # V_C = 4 pi int_0^{D_C} D_M^2 dD_C (the definition behind Hogg 1999 eq. 29)
    for kw in (dict(omega_k=0.2), dict(omega_k=0.0), dict(omega_k=-0.3), dict(omega_k=1e-30),
               dict(omega_k=-0.01)):
        c = ref.RefCosmology(h0=70, omega_m=0.3, t_cmb=0, **kw)
        dh = c.hubble_distance
        for dc in (dh / 10, dh, 4 * dh):     # the last is past the equator for Omega_k = -0.3
            shell = 4 * mp.pi * mp.quad(lambda x: c.transverse_from_comoving(x) ** 2, [0, dc])
            assert rel(c.comoving_volume(dc), shell) < 1e-20


def test_massive_neutrinos_make_matter_today():
    # Omega_nu h^2 ~ sum m_nu / 93.14 eV (common practice, no source; here to 1 %)
    c = ref.RefCosmology(h0=67.36, omega_m=0.3153, n_eff=3.046, m_nu=(0.06,))
    assert abs(c.omega_nu * c.h**2 / (mp.mpf("0.06") / mp.mpf("93.14")) - 1) < 0.01
