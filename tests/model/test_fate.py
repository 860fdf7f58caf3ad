"""The far future: recollapse, big rip, event horizons and the scale factor against time.

Every expected value is a closed form from outside the project, its source beside it.
All models have T_CMB = 0 so that the closed forms (which have no radiation) are exact.
"""

import math

import mpmath as mp
import numpy as np
import pytest

from model import Cosmology, epochs, evaluate, scale_factor_history


@pytest.mark.parametrize("omega_m", [1.2, 2.0, 3.5])
def test_closed_matter_only_turnaround_and_crunch(omega_m):
    # Friedmann's closed dust solution (the cycloid; e.g. Peebles 1993, Principles of Physical
    # Cosmology, eq. 13.10; Weinberg 1972, Gravitation and Cosmology, §15.3):
    # a_max = Ω/(Ω−1), H0 t_max = (π/2) Ω/(Ω−1)^{3/2}, and the crunch at 2 t_max.
    c = Cosmology(h0=70.0, omega_m=omega_m, omega_k=1.0 - omega_m, t_cmb=0.0)
    e = epochs(c)
    assert e["fate"] == "recollapse"
    assert e["a_max"] == pytest.approx(omega_m / (omega_m - 1.0), rel=1e-10)
    t_max = 0.5 * math.pi * omega_m / (omega_m - 1.0) ** 1.5 * c.hubble_time
    assert e["t_max_expansion"] == pytest.approx(t_max, rel=1e-8)
    assert e["t_recollapse"] == pytest.approx(2.0 * t_max, rel=1e-8)
    assert e["t_big_rip"] is None


@pytest.mark.parametrize("omega_m", [1.5, 3.0])
def test_closed_matter_only_event_horizon_is_conformal_time_left(omega_m):
    # Cycloid in conformal time: the whole life lasts Δη = 2π R/c with R = D_H/√(Ω−1); the light
    # emitted at conformal time η can still travel 2πR − η (Weinberg 1972, §15.3, eq. 15.3.12).
    c = Cosmology(h0=70.0, omega_m=omega_m, omega_k=1.0 - omega_m, t_cmb=0.0)
    r = c.hubble_distance / math.sqrt(omega_m - 1.0)
    z = np.array([0.0, 0.5, 3.0])
    out = evaluate(c, z)
    expected = 2.0 * math.pi * r - out["particle_horizon"]
    np.testing.assert_allclose(out["event_horizon"], expected, rtol=1e-8)
    # and the particle horizon itself: η = R θ with cos θ = 1 − 2(Ω−1)/(Ω(1+z)) (cycloid).
    theta = np.arccos(1.0 - 2.0 * (omega_m - 1.0) / (omega_m * (1.0 + z)))
    np.testing.assert_allclose(out["particle_horizon"], r * theta, rtol=1e-8)


@pytest.mark.parametrize("w", [-1.5, -1.2, -1.05])
def test_big_rip_time_of_pure_phantom(w):
    # Flat, phantom dark energy alone: H = H0 a^{-3(1+w)/2}, so the rip comes
    # t_rip − t0 = 2 / (3 |1+w| H0) after today (Caldwell, Kamionkowski & Weinberg 2003,
    # PRL 91, 071301, eq. 2 with Ω_m = 0, where it is exact).
    c = Cosmology(h0=70.0, omega_m=0.0, omega_b=0.0, w0=w, t_cmb=0.0)
    e = epochs(c)
    assert e["fate"] == "big rip"
    # the age is infinite (H → 0 as a → 0), so compare the time left through cosmic_time:
    left = e["t_big_rip"] - e["age_today"] if math.isfinite(e["age_today"]) else None
    if left is None:
        from model._future import future

        left = future(c).dtau_to_end * c.hubble_time
    assert left == pytest.approx(2.0 / (3.0 * abs(1.0 + w)) * c.hubble_time, rel=1e-8)


def test_big_rip_time_with_matter_against_mpmath():
    # Flat w = −1.3 with matter: t_rip − t0 = ∫_1^∞ da / (a H) (definition; mpmath quadrature
    # at 30 digits, in ln a, as the reference).
    om, w = 0.3, -1.3
    c = Cosmology(h0=67.0, omega_m=om, omega_b=0.05, w0=w, t_cmb=0.0)
    mp.mp.dps = 30
    left = mp.quad(lambda v: 1 / mp.sqrt(om * mp.e ** (-3 * v) + (1 - om) * mp.e ** (-3 * (1 + w) * v)),
                   [0, 5, 20, 100, mp.inf])
    e = epochs(c)
    assert e["t_big_rip"] - e["age_today"] == pytest.approx(float(left) * c.hubble_time, rel=1e-8)


def test_de_sitter_event_horizon():
    # de Sitter, a = e^{H t}: the comoving event horizon is ∫_t^∞ c dt'/a = (c/H)(1+z)
    # (e.g. Rindler 1956, MNRAS 116, 662; closed form).
    c = Cosmology(h0=70.0, omega_m=0.0, omega_b=0.0, t_cmb=0.0)
    z = np.array([-0.5, 0.0, 0.3, 2.0, 10.0])
    out = evaluate(c, z)
    np.testing.assert_allclose(out["event_horizon"], c.hubble_distance * (1.0 + z), rtol=1e-9)
    assert np.all(np.isinf(out["age"]))  # no big bang in the past: a → 0 only as t → −∞
    assert epochs(c)["fate"] == "eternal expansion"


def test_flat_lambda_event_horizon_today_against_mpmath():
    # Definition: D_EH(t0) = c/H0 ∫_1^∞ da / (a² E(a)); mpmath at 30 digits as reference.
    om = 0.3
    c = Cosmology(h0=70.0, omega_m=om, omega_b=0.05, t_cmb=0.0)
    mp.mp.dps = 30
    ref = mp.quad(lambda a: 1 / (a * a * mp.sqrt(om / a**3 + 1 - om)), [1, 10, 100, mp.inf])
    assert float(evaluate(c, 0.0)["event_horizon"]) == pytest.approx(
        float(ref) * c.hubble_distance, rel=1e-9)


def test_decelerating_for_ever_has_no_event_horizon():
    # Einstein–de Sitter: ∫^∞ da/(a² E) = ∫ a^{-1/2} da diverges (closed form).
    c = Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0)
    assert np.all(np.isinf(evaluate(c, [0.0, 1.0])["event_horizon"]))


def test_future_onset_of_acceleration():
    # Open model whose Λ will dominate: q = Ω_m(z)/2 − Ω_Λ(z) turns negative when
    # Ω_m a^{-3} = 2 Ω_Λ, i.e. a = (Ω_m / 2Ω_Λ)^{1/3} (Friedmann acceleration equation).
    om, ol = 0.9, 0.3
    c = Cosmology.from_dark_energy(h0=70.0, omega_m=om, omega_de=ol, t_cmb=0.0)
    e = epochs(c)
    assert e["z_acceleration"] is None  # decelerating today
    assert e["a_future_acceleration"] == pytest.approx((om / (2.0 * ol)) ** (1.0 / 3.0), rel=1e-9)
    assert e["t_future_acceleration"] > e["age_today"]


def test_scale_factor_history_of_a_recollapse_is_symmetric():
    # Time symmetry of Friedmann's equation about the turnaround (it contains only ȧ²).
    c = Cosmology(h0=70.0, omega_m=2.0, omega_k=-1.0, t_cmb=0.0)
    h = scale_factor_history(c, a_end=10.0, n=400)
    e = epochs(c)
    assert np.all(np.diff(h["t"]) > 0)
    assert h["a"].max() == pytest.approx(e["a_max"], rel=1e-9)
    t_max = e["t_max_expansion"]
    # points at equal a on the two branches sit symmetrically around t_max
    k = len(h["a"]) // 2
    up_t, down_t = h["t"][:k], h["t"][k:][::-1]
    np.testing.assert_allclose(up_t[1:-1] + down_t[:k - 1][1:], 2.0 * t_max, rtol=1e-9)


def test_scale_factor_history_matches_einstein_de_sitter():
    # EdS: a = (3 H0 t / 2)^{2/3} (closed form).
    c = Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0)
    h = scale_factor_history(c, a_end=10.0, n=100)
    expected_t = 2.0 / 3.0 * h["a"] ** 1.5 * c.hubble_time
    np.testing.assert_allclose(h["t"], expected_t, rtol=1e-9)
