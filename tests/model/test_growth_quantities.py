"""The growth quantities of `evaluate` (growth_factor, growth_rate, f_sigma8, sigma8_at_z) and σ₈.

Check values (each beside its test):
* Einstein–de Sitter: D = a and f = 1 at every a, past and future (Peebles 1980, §11).
* Λ with curvature, radiation off: Heath (1977, MNRAS 179, 351) D ∝ E(a) ∫₀^a da′/(a′E)³ by
  scipy's adaptive quadrature, f by differentiating it; for z < 0 as well.
* With radiation (our convention): the Mészáros (1974, A&A 37, 225) growing mode
  D ∝ 1 + 3y/2 of flat matter + radiation, y = a/a_eq.
* σ₈ default: Planck 2018 VI (A&A 641, A6), Table 2, TT,TE,EE+lowE+lensing, 0.8111.
* fσ₈ = f σ₈ D/D(0) and σ₈(z) = σ₈ D/D(0) by definition.
"""

from __future__ import annotations

import numpy as np
import pytest

import model
from test_model_growth import _heath  # Heath (1977): D ∝ E ∫ da/(aE)³ and its f

GROWTH_KEYS = ("growth_factor", "growth_rate", "f_sigma8", "sigma8_at_z")
RTOL = 1e-7


def test_growth_quantities_are_registered_dimensionless_under_their_theme():
    assert model.THEMES["growth"]
    for key in GROWTH_KEYS:
        q = model.QUANTITIES[key]
        assert q.theme == "growth" and q.unit == ""


def test_sigma8_default_is_the_planck_2018_lensing_value_and_is_validated():
    assert model.Cosmology(h0=70.0, omega_m=0.3).sigma8 == 0.8111  # Planck 2018 VI, Table 2
    for bad in (0.0, -0.1, 3.5, float("nan"), "0.8"):
        with pytest.raises(model.ParameterError, match="σ₈") as err:
            model.Cosmology(h0=70.0, omega_m=0.3, sigma8=bad)
        assert err.value.field == "sigma8" and "0 < σ₈ ≤ 3" in err.value.expected
    assert model.Cosmology(h0=70.0, omega_m=0.3, sigma8=3.0).sigma8 == 3.0


def test_sigma8_is_physics_of_the_key_but_not_of_the_expansion_tables():
    a = model.Cosmology(h0=70.0, omega_m=0.3, sigma8=0.8)
    b = model.Cosmology(h0=70.0, omega_m=0.3, sigma8=0.7)
    assert a.key != b.key and a.background_key == b.background_key
    va, vb = model.evaluate(a, [0.5, 1.0]), model.evaluate(b, [0.5, 1.0])
    np.testing.assert_array_equal(va["growth_factor"], vb["growth_factor"])
    np.testing.assert_allclose(va["f_sigma8"] / vb["f_sigma8"], 0.8 / 0.7, rtol=1e-15)


def test_einstein_de_sitter_past_and_future():
    c = model.Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0, sigma8=0.9)
    z = np.array([-0.99, -0.8, -0.3, 0.0, 0.5, 2.0, 30.0, 1e4])
    v = model.evaluate(c, z)
    np.testing.assert_allclose(v["growth_factor"], 1.0 / (1.0 + z), rtol=1e-9)  # D = a
    np.testing.assert_allclose(v["growth_rate"], 1.0, rtol=1e-9)  # f = 1
    np.testing.assert_allclose(v["sigma8_at_z"], 0.9 / (1.0 + z), rtol=1e-9)
    np.testing.assert_allclose(v["f_sigma8"], 0.9 / (1.0 + z), rtol=1e-9)


@pytest.mark.slow
@pytest.mark.parametrize("omega_m, omega_k", [(0.3, 0.0), (0.3, 0.1), (0.3, -0.1)])
def test_evaluate_follows_heath_in_the_past_and_the_future(omega_m, omega_k):
    c = model.Cosmology(h0=70.0, omega_m=omega_m, omega_k=omega_k, t_cmb=0.0)
    z = np.array([-0.9, -0.6, -0.2, 0.0, 0.4, 1.0, 3.0, 50.0])
    d, f = _heath(omega_m, omega_k)
    v = model.evaluate(c, z)
    np.testing.assert_allclose(v["growth_factor"], [d(1 / (1 + x)) / d(1.0) for x in z], rtol=RTOL)
    np.testing.assert_allclose(v["growth_rate"], [f(1 / (1 + x)) for x in z], rtol=RTOL)


def test_growth_today_is_one_and_matches_linear_growth_everywhere():
    c = model.Cosmology(h0=67.36, omega_m=0.3153, omega_b=0.0493, n_eff=3.046, w0=-0.9, wa=-0.2)
    z = np.random.default_rng(3).uniform(-0.9, 1e3, 500)
    v = model.evaluate(c, z)
    d, f = model.linear_growth(c, z)
    np.testing.assert_allclose(v["growth_factor"], d, rtol=1e-13)
    np.testing.assert_allclose(v["growth_rate"], f, rtol=1e-14)
    assert float(model.evaluate(c, 0.0)["growth_factor"]) == 1.0


def test_with_radiation_the_convention_is_the_meszaros_growing_mode():
    probe = model.Cosmology(h0=70.0, omega_m=0.3, m_nu=())
    omega_r = 1.0 - 0.3 - probe.omega_de
    c = model.Cosmology.from_dark_energy(h0=70.0, omega_m=1.0 - omega_r, omega_de=0.0, m_nu=())
    a_eq = omega_r / c.omega_m
    z = np.array([0.0, 10.0, 3000.0, 1e5])
    v = model.evaluate(c, z)
    y = 1.0 / (1.0 + z) / a_eq
    np.testing.assert_allclose(v["growth_factor"], (1 + 1.5 * y) / (1 + 1.5 / a_eq), rtol=RTOL)
    np.testing.assert_allclose(v["growth_rate"], 1.5 * y / (1 + 1.5 * y), rtol=RTOL)


def test_f_sigma8_and_sigma8_at_z_are_their_definitions():
    c = model.Cosmology(h0=70.0, omega_m=0.28, omega_k=0.02, sigma8=0.77)
    z = np.linspace(-0.5, 3.0, 37)
    v = model.evaluate(c, z)
    np.testing.assert_allclose(v["f_sigma8"], v["growth_rate"] * 0.77 * v["growth_factor"], rtol=1e-15)
    np.testing.assert_allclose(v["sigma8_at_z"], 0.77 * v["growth_factor"], rtol=1e-15)
    assert np.all(np.diff(v["growth_factor"]) < 0)  # D grows with time: falls with z


def test_growth_is_nan_beyond_a_turnaround_and_finite_before_it():
    # closed matter-only Ω_m = 2 recollapses at a_max = Ω_m/(Ω_m − 1) = 2 (textbook closed form)
    c = model.Cosmology.from_dark_energy(h0=70.0, omega_m=2.0, omega_de=0.0, t_cmb=0.0)
    v = model.evaluate(c, np.array([-0.6, -0.4, 0.0]))
    for key in GROWTH_KEYS:
        assert np.isnan(v[key][0]) and np.all(np.isfinite(v[key][1:]))


def test_without_cold_matter_growth_is_undefined_not_an_error():
    # pure phantom dark energy (Ω_m = 0): nothing clusters, so there is no growing mode
    c = model.Cosmology(h0=70.0, omega_m=0.0, omega_b=0.0, w0=-1.5, t_cmb=0.0)
    v = model.evaluate(c, [0.0, 1.0])
    assert np.all(np.isfinite(v["hubble_parameter"]))
    for key in GROWTH_KEYS:
        assert np.all(np.isnan(v[key]))
