"""Linear growth against published closed forms and an independent integration.

Check values (each beside its test):
* Einstein–de Sitter: D = a, f = 1 (e.g. Peebles 1980, §11).
* Λ with curvature, radiation off: Heath (1977, MNRAS 179, 351) D ∝ E(a) ∫₀^a da′/(a′E(a′))³,
  evaluated here by scipy's adaptive quadrature; f from differentiating it in closed form.
* Flat matter + radiation: the Mészáros (1974, A&A 37, 225) growing mode D ∝ 1 + 3y/2,
  y = a/a_eq, exact for that model (our convention with radiation on).
* The growth index: f ≈ Ω_m(z)^0.55 within 0.5 % for flat ΛCDM at z ≤ 2 (Linder 2005, PRD 72,
  043529).
* w₀/w_a dark energy, radiation off: scipy's DOP853 at rtol 1e-12 on the same equation written
  here from the Friedmann equation (not the model's code), started deep in matter domination.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate

import model

Z = np.array([-0.9, -0.5, 0.0, 0.3, 1.0, 2.5, 10.0, 100.0, 1000.0])
RTOL = 1e-7  # the growth issue's target for radiation-free models

pytestmark = pytest.mark.slow  # adaptive quadrature and DOP853 references


def test_einstein_de_sitter_grows_as_the_scale_factor():
    d, f = model.linear_growth(model.Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0), Z)
    np.testing.assert_allclose(d, 1.0 / (1.0 + Z), rtol=1e-9)  # cubic interpolation between nodes
    np.testing.assert_allclose(f, 1.0, rtol=1e-9)


def _heath(omega_m, omega_k):
    omega_l = 1.0 - omega_m - omega_k

    def e(a):
        return math.sqrt(omega_m / a**3 + omega_k / a**2 + omega_l)

    def integral(a):
        return integrate.quad(lambda x: 1.0 / (x * e(x)) ** 3, 0.0, a, epsabs=0.0, epsrel=1e-13, limit=200)[0]

    def growth(a):
        return e(a) * integral(a)

    def rate(a):
        dln_e = -(1.5 * omega_m / a**3 + omega_k / a**2) / e(a) ** 2
        return dln_e + 1.0 / (a * a * e(a) ** 3 * integral(a))

    return growth, rate


@pytest.mark.parametrize("omega_m, omega_k", [(0.3, 0.0), (0.3153, 0.0), (0.3, 0.2), (0.3, -0.2), (0.05, 0.0),
                                              (0.9, -0.5)])
def test_lambda_with_curvature_equals_heaths_integral(omega_m, omega_k):
    c = model.Cosmology(h0=70.0, omega_m=omega_m, omega_k=omega_k, t_cmb=0.0)
    growth, rate = _heath(omega_m, omega_k)
    a = 1.0 / (1.0 + Z)
    d, f = model.linear_growth(c, Z)
    np.testing.assert_allclose(d, [growth(x) / growth(1.0) for x in a], rtol=RTOL)
    np.testing.assert_allclose(f, [rate(x) for x in a], rtol=RTOL)


def test_growth_rate_today_for_flat_lcdm_omega_m_03():
    # f(z=0) from Heath's integral for Ω_m = 0.3 flat ΛCDM (≈ 0.513 is the familiar value)
    _, rate = _heath(0.3, 0.0)
    _, f = model.linear_growth(model.Cosmology(h0=70.0, omega_m=0.3, t_cmb=0.0), 0.0)
    assert math.isclose(float(f), rate(1.0), rel_tol=RTOL) and 0.51 < float(f) < 0.52


def test_growth_index_055_holds_to_half_a_percent_for_flat_lcdm():
    c = model.Cosmology(h0=67.36, omega_m=0.3153, t_cmb=0.0)
    z = np.linspace(0.0, 2.0, 41)
    _, f = model.linear_growth(c, z)
    e2 = 0.3153 * (1 + z) ** 3 + (1 - 0.3153)
    omega_m_z = 0.3153 * (1 + z) ** 3 / e2
    np.testing.assert_allclose(f, omega_m_z ** 0.55, rtol=5e-3)


def test_matter_plus_radiation_follows_the_meszaros_growing_mode():
    # Flat, Ω_de = 0, radiation from T_CMB = 2.7255 K with massless neutrinos: Ω_m = 1 − Ω_r
    probe = model.Cosmology(h0=70.0, omega_m=0.3, m_nu=())
    omega_r = 1.0 - 0.3 - probe.omega_de  # photons plus massless neutrinos
    c = model.Cosmology.from_dark_energy(h0=70.0, omega_m=1.0 - omega_r, omega_de=0.0, m_nu=())
    a_eq = omega_r / c.omega_m
    z = np.array([0.0, 1.0, 100.0, 3000.0, 1e4, 1e5])
    d, f = model.linear_growth(c, z)
    y = 1.0 / (1.0 + z) / a_eq
    np.testing.assert_allclose(d, (1 + 1.5 * y) / (1 + 1.5 / a_eq), rtol=RTOL)
    np.testing.assert_allclose(f, 1.5 * y / (1 + 1.5 * y), rtol=RTOL)


@pytest.mark.parametrize("w0, wa, omega_m, omega_k", [(-0.9, -0.3, 0.3, 0.0), (-1.2, 0.5, 0.28, 0.05),
                                                      (-0.7, -1.0, 0.35, -0.05)])
def test_dynamical_dark_energy_matches_an_independent_dop853_integration(w0, wa, omega_m, omega_k):
    omega_de = 1.0 - omega_m - omega_k

    def e2(a):  # Friedmann with CPL dark energy (Chevallier & Polarski 2001; Linder 2003)
        de = omega_de * a ** (-3 * (1 + w0 + wa)) * math.exp(-3 * wa * (1 - a))
        return omega_m / a**3 + omega_k / a**2 + de

    def dln_h(a):  # d ln H / d ln a = (1/2) d ln E² / d ln a
        w = w0 + wa * (1 - a)
        de = omega_de * a ** (-3 * (1 + w0 + wa)) * math.exp(-3 * wa * (1 - a))
        return 0.5 * (-3 * omega_m / a**3 - 2 * omega_k / a**2 - 3 * (1 + w) * de) / e2(a)

    def rhs(s, y):
        a = math.exp(s)
        return [y[1], -(2 + dln_h(a)) * y[1] + 1.5 * omega_m / a**3 / e2(a) * y[0]]

    a0 = 1e-5  # deep in matter domination: D = a, dD/d ln a = a
    s_end = math.log(10.0)
    sol = integrate.solve_ivp(rhs, (math.log(a0), s_end), [a0, a0], method="DOP853", rtol=1e-12,
                              atol=1e-20, dense_output=True)
    today = sol.sol(0.0)[0]
    z = np.array([-0.5, -0.2, 0.0, 0.5, 1.0, 3.0, 20.0])
    want = np.array([sol.sol(-math.log1p(v)) for v in z])
    c = model.Cosmology(h0=70.0, omega_m=omega_m, omega_k=omega_k, w0=w0, wa=wa, t_cmb=0.0)
    d, f = model.linear_growth(c, z)
    np.testing.assert_allclose(d, want[:, 0] / today, rtol=RTOL)
    np.testing.assert_allclose(f, want[:, 1] / want[:, 0], rtol=RTOL)


def test_scalars_arrays_and_beyond_the_turnaround():
    # Ω_m = 2, Ω_Λ = 0 (radiation off) recollapses at a_max = Ω_m/(Ω_m − 1) = 2 (textbook closed
    # matter-only model): growth is undefined past it
    c = model.Cosmology.from_dark_energy(h0=70.0, omega_m=2.0, omega_de=0.0, t_cmb=0.0)
    d, f = model.linear_growth(c, np.array([[0.0, -0.6]]))
    assert d.shape == (1, 2) and d[0, 0] == 1.0 and np.isnan(d[0, 1]) and np.isnan(f[0, 1])
    d0, f0 = model.linear_growth(c, 0.0)
    assert d0.shape == () and float(d0) == 1.0
    with pytest.raises(model.ParameterError, match="z"):
        model.linear_growth(c, -1.5)
