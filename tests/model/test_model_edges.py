"""The model at the edges of its parameter space: loitering, fast low-z change, bounces,
far futures, turnarounds, closed-model look-ups, scalar inputs, warnings, r_drag and N_eff.

Every expected value is independent of the project: 30-digit mpmath quadrature and root
finding on the physics (``reference.py`` and the helpers below, which import nothing from
``model``), or a closed form named beside the check.
"""

from __future__ import annotations

import math
import warnings

import mpmath as mp
import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

import model
import reference as ref
from helpers import REFERENCE_SETTINGS
from test_model_planck2018 import _aubourg_r_drag, _eisenstein_hu_z_drag
from model import (Cosmology, NoBigBangError, ParameterError, acoustic_scales, cosmic_time,
                   epochs, evaluate, redshift_at)

LOITER_DE = 1.7134604028734555  # Ω_de at which Ω_m = 0.3, Ω_k = 1 − Ω_m − Ω_de loiters (E²_min = 0)
RTOL = 1e-7                     # the README's accuracy promise


def _loiter_pair(eps):
    kw = dict(h0=70.0, omega_m=0.3, t_cmb=0.0, m_nu=())
    return (Cosmology.from_dark_energy(omega_de=LOITER_DE - eps, **kw),
            ref.RefCosmology.from_dark_energy(LOITER_DE - eps, **kw))


def _split_integral(r, g, a_lo, a_hi, a_peak):
    """∫ g da on [a_lo, a_hi] (mpmath), cut at a_peak e^{±δ 2^k}, so tanh-sinh sees smooth
    pieces however narrow the peak of 1/E at the loitering scale factor a_peak."""
    cuts = {mp.mpf(a_lo), mp.mpf(a_hi)}
    for k in range(-16, 6):
        for sgn in (-1, 1):
            a = a_peak * mp.exp(sgn * mp.mpf(2) ** k * mp.mpf("1e-3"))
            if a_lo < a < a_hi:
                cuts.add(a)
    if a_lo < a_peak < a_hi:
        cuts.add(mp.mpf(a_peak))
    cuts = sorted(cuts)
    return mp.fsum(r._integral(g, lo, hi) for lo, hi in zip(cuts[:-1], cuts[1:]))


def _loiter_reference(r, z):
    """D_C, lookback time and age at z for E² = Ω_m a⁻³ + Ω_k a⁻² + Ω_de (no radiation).

    dE²/da = 0 at a = 3 Ω_m / (2 |Ω_k|) (closed form), where 1/E peaks."""
    a_peak = 3 * mp.mpf(r.omega_m) / (2 * abs(r.omega_curv))
    a = 1 / (1 + mp.mpf(z))
    dc = r.hubble_distance * _split_integral(r, r._comoving_integrand, a, 1, a_peak)
    lb = r.hubble_time * _split_integral(r, r._time_integrand, a, 1, a_peak)
    age = r.hubble_time * (r._integral(r._time_integrand, 0, mp.mpf("1e-3"))
                           + _split_integral(r, r._time_integrand, mp.mpf("1e-3"), a, a_peak))
    return dc, lb, age


def _rel(got, want):
    return float(abs(mp.mpf(float(got)) - want) / abs(want))


# ------------------------------------------------------------------------------ 1. loitering
LOITER_Z = [0.3, 1.0, 1.2, 1.24, 1.2497, 1.25, 1.2525, 1.26, 1.3, 1.6, 3.0, 10.0]


@pytest.mark.slow
@pytest.mark.parametrize("eps, rtol", [(1e-3, RTOL), (1e-4, RTOL), (1e-7, RTOL), (1e-10, RTOL),
                                       (1e-12, 1e-6)])
def test_loitering_distances_and_times_against_split_mpmath_quadrature(eps, rtol):
    # 1e-7 down to eps = 1e-10 (README); below, E² at its minimum (~4 eps) nears the rounding
    # of its O(1) terms, and the documented bound is 1e-6 at eps = 1e-12.
    c, r = _loiter_pair(eps)
    out = evaluate(c, np.array(LOITER_Z))
    worst = []
    for i, z in enumerate(LOITER_Z):
        dc, lb, age = _loiter_reference(r, z)
        for key, want in (("comoving_distance", dc), ("lookback_time", lb), ("age", age)):
            err = _rel(out[key][i], want)
            if err > rtol:
                worst.append((key, z, float(out[key][i]), float(want), err))
    assert not worst, worst


# --------------------------------------------------------------------- 2. fast change at low z
LOW_Z = [1e-4, 3e-4, 1e-3, 3e-3, 0.01, 0.02, 0.05, 0.1]
FAST_MODELS = {
    "omega_m=5": dict(h0=70.0, omega_m=5.0, t_cmb=0.0, m_nu=()),
    "omega_k=5": dict(h0=70.0, omega_m=0.3, omega_k=5.0, t_cmb=0.0, m_nu=()),
    "w0=-5, wa=5": dict(h0=70.0, omega_m=0.3, w0=-5.0, wa=5.0, t_cmb=0.0, m_nu=()),
    "omega_m=0.01, w0=-5": dict(h0=70.0, omega_m=0.01, w0=-5.0, t_cmb=0.0, m_nu=()),
    "closed, radiation": dict(h0=50.0, omega_m=4.0, omega_k=-3.0),
}


@pytest.mark.slow
@pytest.mark.parametrize("name", list(FAST_MODELS))
def test_fast_low_z_models_hold_1e7_from_z_1e4(name):
    # Reference: Hogg 1999 integrals by 30-digit tanh-sinh quadrature (reference.py).
    kw = FAST_MODELS[name]
    c, r = Cosmology(**kw), ref.RefCosmology(**kw)
    out = evaluate(c, np.array(LOW_Z))
    want = r.evaluate_many(LOW_Z)
    bad = []
    for i, z in enumerate(LOW_Z):
        for key in ("comoving_distance", "lookback_time", "luminosity_distance",
                    "comoving_volume", "age", "particle_horizon"):
            err = _rel(out[key][i], want[mp.mpf(z)][key])
            tol = RTOL if "neutrino" not in name else 2e-6
            if err > tol:
                bad.append((key, z, err))
    assert not bad, bad


@st.composite
def _corner_models(draw):
    """Anywhere in the accepted box, radiation off (so reference and model share E²)."""
    return dict(h0=70.0, omega_m=draw(st.floats(0.0, 5.0)), omega_k=draw(st.floats(-5.0, 5.0)),
                w0=draw(st.floats(-5.0, 1.0)), wa=draw(st.floats(-5.0, 5.0)), t_cmb=0.0,
                m_nu=())


@pytest.mark.slow
@REFERENCE_SETTINGS
@given(_corner_models())
def test_any_accepted_model_holds_1e7_near_today(kw):
    try:
        c = Cosmology(**kw)
    except NoBigBangError:
        assume(False)
    r = ref.RefCosmology(**kw)
    out = evaluate(c, np.array(LOW_Z))
    want = r.evaluate_many(LOW_Z)
    for i, z in enumerate(LOW_Z):
        for key in ("comoving_distance", "lookback_time"):
            assert _rel(out[key][i], want[mp.mpf(z)][key]) < RTOL, (key, z)


@pytest.mark.slow
@pytest.mark.parametrize("name", list(FAST_MODELS))
def test_below_z_1e4_the_absolute_error_is_below_1e11_hubble_distances(name):
    kw = FAST_MODELS[name]
    c, r = Cosmology(**kw), ref.RefCosmology(**kw)
    zs = [1e-7, 1e-6, 1e-5, -1e-5]
    out = evaluate(c, np.array(zs))["comoving_distance"]
    for i, z in enumerate(zs):
        err = abs(mp.mpf(float(out[i])) - r.comoving_distance(z)) / r.hubble_distance
        assert err < 1e-11, (z, float(err))


# ------------------------------------------------------------------------ 3. no big bang
def test_a_dip_below_zero_narrower_than_the_grid_is_a_bounce_at_the_right_redshift():
    kw = dict(h0=70.0, omega_m=0.3, t_cmb=0.0, m_nu=())
    with pytest.raises(NoBigBangError) as info:
        Cosmology.from_dark_energy(omega_de=LOITER_DE + 1e-8, **kw)
    # Reference: the lowest-z root of E² = Ω_m x³ + Ω_k x² + Ω_de (mpmath, 30 digits), which
    # lies between today and the minimum of E² at x = 2|Ω_k|/(3 Ω_m) (closed form).
    r = ref.RefCosmology.from_dark_energy(LOITER_DE + 1e-8, **kw)
    x_min = 2 * abs(r.omega_curv) / (3 * mp.mpf(r.omega_m))
    e2 = lambda x: mp.mpf(r.omega_m) * x**3 + r.omega_curv * x**2 + r.omega_de
    assert e2(x_min) < 0
    root = mp.findroot(e2, (mp.mpf(1), x_min), solver="anderson")
    assert info.value.redshift == pytest.approx(float(root - 1), rel=1e-9)
    assert "z = 1.25" in str(info.value)


def test_a_bounce_above_the_grid_top_is_found_at_one_plus_z_two_to_the_fifty():
    # Ω_de = −Ω_r/2 with w₀ = 0.34 scales as x^{4.02}: it beats radiation (x⁴) where
    # Ω_r x⁴ = (Ω_r/2) x^{4.02}, i.e. x = 2^{50} ≈ 1.13e15 (closed form; matter shifts it by
    # ~1e-10). Refined with mpmath on the reference E².
    omega_r = Cosmology(h0=70.0, omega_m=0.3, m_nu=()).omega_r
    kw = dict(h0=70.0, omega_m=0.3, w0=0.34, m_nu=())
    with pytest.raises(NoBigBangError) as info:
        Cosmology.from_dark_energy(omega_de=-omega_r / 2, **kw)
    r = ref.RefCosmology.from_dark_energy(-omega_r / 2, **kw)
    root = mp.findroot(lambda x: r.a4e2(mp.exp(-x)), mp.mpf(50) * mp.log(2))
    assert info.value.redshift == pytest.approx(float(mp.expm1(root)), rel=1e-9)
    assert info.value.redshift == pytest.approx(2.0**50, rel=1e-6)


def test_a_loitering_model_just_short_of_the_bounce_is_accepted():
    c = Cosmology.from_dark_energy(h0=70.0, omega_m=0.3, omega_de=LOITER_DE - 1e-9, t_cmb=0.0,
                                   m_nu=())
    assert np.isfinite(evaluate(c, 1.2521)["comoving_distance"])


# ------------------------------------------------------------------------------- 4. the fate
def _first_future_root(r, v_hi, n=4000):
    """Smallest a > 1 with E²(a) = 0 (mpmath): scan a²E² in ln a, refine the sign change."""
    f = lambda x: r.a4e2(mp.exp(x)) / mp.exp(2 * x)
    prev = f(0)
    for k in range(1, n + 1):
        v = v_hi * mp.mpf(k) / n
        cur = f(v)
        if cur <= 0 < prev:
            lo = v_hi * mp.mpf(k - 1) / n
            return mp.exp(mp.findroot(f, (lo, v), solver="anderson"))
        prev = cur
    return None


def test_curvature_beats_slowly_falling_dark_energy_at_a_about_4e22():
    # a⁻² (curvature, Ω_k < 0) falls slower than a^{−2.04} (w₀ = −0.32): recollapse far out.
    kw = dict(h0=70.0, omega_m=0.3, omega_k=-0.1, w0=-0.32, t_cmb=0.0, m_nu=())
    c, r = Cosmology(**kw), ref.RefCosmology(**kw)
    e = epochs(c)
    a_max = _first_future_root(r, mp.mpf(60))
    assert e["fate"] == "recollapse"
    assert e["a_max"] == pytest.approx(float(a_max), rel=1e-9)
    # time to the turnaround: ∫₀^{a_max} da/(a E), mpmath (tanh-sinh copes with the
    # inverse-square-root end point)
    def dt_dv(v):  # a dt/da = a / (a E) · a, with a⁴E² kept real at the end point
        a = mp.exp(v)
        q = r.a4e2(a)
        return a * a / mp.sqrt(q) if q > 0 else mp.mpf(0)

    t_max = r.hubble_time * (r._integral(r._time_integrand, 0, 1)
                             + mp.quad(dt_dv, mp.linspace(0, mp.log(a_max), 40)))
    assert e["t_max_expansion"] == pytest.approx(float(t_max), rel=1e-7)


def test_nearly_flat_closed_matter_turns_around_at_1e13():
    # Closed dust (cycloid; e.g. Peebles 1993, eq. 13.10): a_max = Ω_m/|Ω_k|,
    # H₀ t_max = (π/2) Ω_m / |Ω_k|^{3/2}.
    c = Cosmology.from_dark_energy(h0=70.0, omega_m=1 + 1e-13, omega_de=0.0, t_cmb=0.0)
    e = epochs(c)
    ok = abs(c.omega_k)
    assert e["fate"] == "recollapse"
    assert e["a_max"] == pytest.approx(c.omega_m / ok, rel=1e-9)
    assert e["t_max_expansion"] == pytest.approx(
        0.5 * math.pi * c.omega_m / ok**1.5 * c.hubble_time, rel=1e-7)


def test_a_shallow_dip_below_zero_in_the_near_future_is_a_recollapse_without_warnings():
    kw = dict(h0=70.0, omega_m=3.0, omega_k=-(2.1676588673011676 - 1e-7), t_cmb=0.0, m_nu=())
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        e = epochs(Cosmology(**kw))
    r = ref.RefCosmology(**kw)
    a_min = 9 / (2 * abs(r.omega_curv))  # dE²/da = 0 for 3a⁻³ + Ω_k a⁻² + Ω_de (closed form)
    assert r.e2(a_min) < 0
    root = mp.findroot(lambda a: r.a4e2(a), (mp.mpf("1.5"), a_min), solver="anderson")
    assert e["fate"] == "recollapse"
    assert e["a_max"] == pytest.approx(float(root), rel=1e-9)
    assert e["t_max_expansion"] == pytest.approx(float(_time_to_turnaround(r, root)), rel=1e-7)


def _time_to_turnaround(r, a_max):
    """t(a_max) = ∫₀^{a_max} da/(aE) by mpmath, the last stretch in s = √(a_max − a), where
    the integrand 2s a/√(a⁴E²) is regular, cut at s_1 2^{-k} for tanh-sinh."""
    def g(s):
        a = a_max - s * s
        q = r.a4e2(a)
        return 2 * s * a / mp.sqrt(q) if q > 0 else mp.mpf(0)

    s1 = mp.sqrt(a_max - 1)
    pts = sorted([s1 * mp.mpf(2) ** (-k) for k in range(40)] + [mp.mpf(0)])
    return r.hubble_time * (r._integral(r._time_integrand, 0, 1) + mp.quad(g, pts))


@pytest.mark.parametrize("kw, fate", [
    (dict(omega_m=0.3), "eternal expansion"),
    (dict(omega_m=0.3, w0=-1.2), "big rip"),
    (dict(omega_m=0.3, w0=-0.9, wa=0.3), "big rip"),             # w → −∞ as a → ∞
    (dict(omega_m=0.3, omega_k=-0.1, w0=-0.5, wa=-0.3), "recollapse"),  # w → +∞: DE dies
    (dict(omega_m=0.3, omega_k=0.1, w0=-0.5, wa=-0.3), "eternal expansion"),
])
def test_fate_from_the_dominant_term_as_a_goes_to_infinity(kw, fate):
    # Which term of E² wins as a → ∞ (its a-power, or e^{3 w_a a} for w_a ≠ 0: Linder 2003,
    # eq. 5) decides between the three fates; a recollapse is checked against the mpmath root.
    full = dict(h0=70.0, t_cmb=0.0, m_nu=(), **kw)
    e = epochs(Cosmology(**full))
    assert e["fate"] == fate
    if fate == "recollapse":
        r = ref.RefCosmology(**full)
        a_max = _first_future_root(r, mp.mpf(10))
        assert e["a_max"] == pytest.approx(float(a_max), rel=1e-9)
        assert e["t_max_expansion"] == pytest.approx(float(_time_to_turnaround(r, a_max)),
                                                     rel=1e-7)


# ---------------------------------------------------------------- 5. just before a turnaround
@pytest.mark.parametrize("a", [1.9, 1.99, 1.999999])
def test_every_quantity_is_finite_just_before_the_turnaround(a):
    # Ω_m = 2, Ω_k = −1: a = 1 − cos θ, conformal time η = θ (units D_H/√|Ω_k| = D_H),
    # H₀ t = θ − sin θ (cycloid; Peebles 1993, eq. 13.10), a_max = 2.
    c = Cosmology(h0=70.0, omega_m=2.0, omega_k=-1.0, t_cmb=0.0)
    theta, theta0 = math.acos(1.0 - a), math.pi / 2
    z = 1.0 / a - 1.0
    out = evaluate(c, z)
    assert float(out["comoving_distance"]) == pytest.approx(
        -(theta - theta0) * c.hubble_distance, rel=1e-8)
    assert float(out["age"]) == pytest.approx((theta - math.sin(theta)) * c.hubble_time, rel=1e-8)
    assert cosmic_time(c, a) == pytest.approx((theta - math.sin(theta)) * c.hubble_time, rel=1e-8)
    assert math.isnan(float(evaluate(c, 1.0 / 2.01 - 1.0)["comoving_distance"]))
    assert math.isnan(cosmic_time(c, 2.01))


def test_scale_factor_history_through_the_turnaround():
    # the same cycloid, expanding branch and its mirror t = 2 t_max − t(a)
    c = Cosmology(h0=70.0, omega_m=2.0, omega_k=-1.0, t_cmb=0.0)
    h = model.scale_factor_history(c, a_end=10.0, n=400)
    rising = np.arange(h["a"].size) < int(np.argmax(h["a"])) + 1
    theta = np.arccos(1.0 - h["a"][rising])
    np.testing.assert_allclose(h["t"][rising], (theta - np.sin(theta)) * c.hubble_time,
                               rtol=1e-8)


# ------------------------------------------------------------ 6. inverse look-ups, closed models
def _ref_z_at(r, f, value, z_lo, z_hi):
    return mp.findroot(lambda z: f(z) - value, (mp.mpf(z_lo), mp.mpf(z_hi)), solver="anderson")


@pytest.mark.slow
def test_transverse_distance_past_the_equator_of_a_closed_model():
    kw = dict(h0=70.0, omega_m=0.3, t_cmb=0.0, m_nu=())
    c = Cosmology.from_dark_energy(omega_de=1.3, **kw)
    r = ref.RefCosmology.from_dark_energy(1.3, **kw)
    z = float(redshift_at(c, "transverse_comoving_distance", 1295.21))
    dm = r.transverse_from_comoving(r.comoving_distance(z))
    assert float(dm) == pytest.approx(1295.21, rel=1e-9)
    # The maximum of D_M sits at the equator, √|Ω_k| D_C/D_H = π/2 (Hogg 1999, eq. 16).
    equator = mp.pi / 2 * r.hubble_distance / mp.sqrt(-r.omega_curv)
    z_eq = _ref_z_at(r, r.comoving_distance, equator, 2.5, 3.5)
    with pytest.raises(ParameterError) as info:
        redshift_at(c, "transverse_comoving_distance", 6000.0)
    msg = str(info.value)
    assert info.value.field == "values" and "maximum" in msg
    assert f"{float(r.hubble_distance / mp.sqrt(-r.omega_curv)):.6g} Mpc" in msg
    assert f"z = {float(z_eq):.6g}" in msg


@pytest.mark.slow
def test_luminosity_distance_on_its_rising_branch_past_the_equator():
    # D_L keeps rising past the equator until D_M + dD_M/d ln(1+z) = 0; at z = 1000 the slope
    # needs cos(√|Ω_k| D_C/D_H) < 0. Value from the reference, inverted by the model.
    kw = dict(h0=70.0, omega_m=0.3, t_cmb=0.0, m_nu=())
    c = Cosmology.from_dark_energy(omega_de=1.3, **kw)
    r = ref.RefCosmology.from_dark_energy(1.3, **kw)
    for z in (10.0, 1000.0):
        dl = r.evaluate(z)["luminosity_distance"]
        assert float(redshift_at(c, "luminosity_distance", float(dl))) == pytest.approx(z, rel=1e-8)


@pytest.mark.slow
@pytest.mark.parametrize("quantity", ["transverse_comoving_distance", "luminosity_distance",
                                      "distance_modulus", "comoving_volume"])
def test_inverse_with_the_antipode_below_z_1e5(quantity):
    kw = dict(h0=70.0, omega_m=0.3, t_cmb=0.0, m_nu=())
    c = Cosmology.from_dark_energy(omega_de=1.7, **kw)
    r = ref.RefCosmology.from_dark_energy(1.7, **kw)
    for z in (0.05, 0.4, 0.9):
        want = r.evaluate(z)[quantity]
        got = float(redshift_at(c, quantity, float(want)))
        assert got == pytest.approx(z, rel=1e-8), (quantity, z)
    if quantity == "comoving_volume":
        # up to the antipode the ball fills the whole 3-sphere, 2π² R³, R = D_H/√|Ω_k|
        # (volume of the 3-sphere, e.g. Peebles 1993, eq. 5.9 integrated)
        total = 2 * mp.pi**2 * (r.hubble_distance / mp.sqrt(-r.omega_curv)) ** 3 / 10**9
        with pytest.raises(ParameterError) as info:
            redshift_at(c, quantity, 2000.0)
        assert f"{float(total):.6g}" in str(info.value)


# ------------------------------------------------------------------------------ 7. scalars
@pytest.mark.parametrize("z", [1.0, np.float64(0.5), np.array(2.0)])
def test_every_public_function_keeps_the_shape_of_a_scalar_z(z):
    c = Cosmology(h0=67.36, omega_m=0.3153)  # default: one 0.06 eV neutrino
    r = ref.RefCosmology(h0=67.36, omega_m=0.3153)
    for func in (model.density_parameters, model.densities):
        for key, v in func(c, z).items():
            assert np.shape(v) == (), (func.__name__, key)
    for func in (model.w_effective, model.w_dark_energy, model.sound_horizon):
        assert np.shape(func(c, z)) == ()
    for key, v in evaluate(c, z).items():
        assert np.shape(v) == (), key
    assert np.shape(redshift_at(c, "age", 5.0)) == ()
    # and the values are right (Friedmann's equation over H²(z); reference.py)
    want = r.density_parameters(float(z))
    got = model.density_parameters(c, z)
    assert float(got["neutrinos"]) == pytest.approx(float(want["neutrinos"]), rel=2e-6)
    assert float(model.w_effective(c, z)) == pytest.approx(
        float(r.w_effective(1 / (1 + mp.mpf(float(z))))), rel=2e-6)


def test_array_shapes_are_kept():
    c = Cosmology(h0=67.36, omega_m=0.3153)
    z = np.linspace(0.0, 3.0, 6).reshape(2, 3)
    assert model.density_parameters(c, z)["neutrinos"].shape == (2, 3)
    assert model.w_effective(c, z).shape == (2, 3)
    assert evaluate(c, z)["age"].shape == (2, 3)


# ------------------------------------------------------------------------- 8. no warnings
EDGE_MODELS = [
    ("from_dark_energy", dict(h0=70.0, omega_m=1 + 1e-8, omega_de=0.0, t_cmb=0.0)),
    ("from_dark_energy", dict(h0=70.0, omega_m=1 + 1e-13, omega_de=0.0, t_cmb=0.0)),
    ("plain", dict(h0=70.0, omega_m=2.0, omega_k=-1.0, t_cmb=0.0)),
    ("plain", dict(h0=70.0, omega_m=0.3, w0=-3.0, t_cmb=0.0)),
    ("plain", dict(h0=70.0, omega_m=0.3, omega_k=-0.1, w0=-0.32, t_cmb=0.0)),
    ("plain", dict(h0=70.0, omega_m=0.0, omega_b=0.0, t_cmb=0.0)),
    ("plain", dict(h0=70.0, omega_m=0.3, w0=-5.0, wa=5.0)),
    ("from_dark_energy", dict(h0=70.0, omega_m=0.3, omega_de=LOITER_DE - 1e-6, t_cmb=0.0)),
]


@pytest.mark.parametrize("how, kw", EDGE_MODELS)
def test_no_library_warning_reaches_the_user(how, kw):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        c = Cosmology.from_dark_energy(**kw) if how == "from_dark_energy" else Cosmology(**kw)
        evaluate(c, np.array([-0.99, -0.5, 0.0, 1e-4, 1.0, 1100.0, 1e5]))
        epochs(c)
        model.scale_factor_history(c, a_end=1e3)
        cosmic_time(c, 0.5)
        cosmic_time(c, 500.0)
        acoustic_scales(c)


def test_event_horizon_of_a_nearly_flat_closed_model():
    # Cycloid in conformal time (Weinberg 1972, §15.3): the light emitted today still travels
    # 2πR − Rθ₀, R = D_H/√|Ω_k|, cos θ₀ = 1 − 2|Ω_k|/Ω_m.
    c = Cosmology.from_dark_energy(h0=70.0, omega_m=1 + 1e-8, omega_de=0.0, t_cmb=0.0)
    ok = abs(c.omega_k)
    big_r = c.hubble_distance / math.sqrt(ok)
    theta0 = math.acos(1.0 - 2.0 * ok / c.omega_m)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        eh = float(evaluate(c, 0.0)["event_horizon"])
    assert eh == pytest.approx(big_r * (2.0 * math.pi - theta0), rel=1e-7)


@pytest.mark.slow
@pytest.mark.parametrize("w0", [-1.5, -3.0])
def test_event_horizon_near_a_big_rip(w0):
    # ∫_a^∞ da/(a² E) by mpmath (reference.py) close to the rip, where the comoving
    # distance travelled already is many times the horizon left.
    kw = dict(h0=70.0, omega_m=0.3, w0=w0, t_cmb=0.0, m_nu=())
    c, r = Cosmology(**kw), ref.RefCosmology(**kw)
    zs = [-0.99, -0.9, -0.5, 0.0, 2.0]
    out = evaluate(c, np.array(zs))["event_horizon"]
    for i, z in enumerate(zs):
        want = r.event_horizon(z)
        assert _rel(out[i], want) < RTOL, (z, float(out[i]), float(want))


# ------------------------------------------------------------------------------ 9. r_drag
# the published fit formulas, written from the papers in the Planck test module
_z_drag_eh98, _r_drag_aubourg = _eisenstein_hu_z_drag, _aubourg_r_drag


@pytest.mark.slow
@pytest.mark.parametrize("kw, reason", [
    (dict(n_eff=10.0), "N_eff"),
    (dict(n_eff=2.0), "N_eff"),
    (dict(t_cmb=2.0), "T_CMB"),
    (dict(m_nu=(1.0, 1.0, 1.0), omega_m=0.5), "Σm_ν"),
])
def test_r_drag_outside_the_calibration_is_the_integrated_sound_horizon(kw, reason):
    base = dict(h0=67.36, omega_m=0.3153, omega_b=0.0493)
    base.update(kw)
    c, r = Cosmology(**base), ref.RefCosmology(**base)
    a = acoustic_scales(c)
    assert a["r_drag_method"] == "integrated"
    assert reason in a["r_drag_caution"]
    h2 = (base["h0"] / 100) ** 2
    z_d = _z_drag_eh98(base["omega_b"] * h2, base["omega_m"] * h2)
    assert a["z_drag"] == pytest.approx(z_d, rel=1e-12)
    # r_s(z_drag) = ∫ c_s dz/H by mpmath (reference.py; sound speed of CONVENTIONS.md)
    assert a["r_drag"] == pytest.approx(float(r.sound_horizon(z_d)), rel=2e-6)
    assert a["r_drag_fit"] == pytest.approx(_r_drag_aubourg(
        float(r.omega_cb) * h2, base["omega_b"] * h2, float(r.omega_nu) * h2), rel=1e-9)


def test_r_drag_with_densities_outside_the_calibration_keeps_the_fit_with_a_caution():
    c = Cosmology(h0=55.0, omega_m=0.2, omega_b=0.0493)
    a = acoustic_scales(c)
    assert a["r_drag_method"] == "fit" and "Ω_cb h²" in a["r_drag_caution"]
    h2 = 0.55**2
    assert a["r_drag"] == pytest.approx(_r_drag_aubourg(
        c.omega_cb * h2, 0.0493 * h2, c.omega_nu * h2), rel=1e-12)


def test_r_drag_inside_the_calibration_is_the_fit():
    # Planck 2018 VI base model (Table 2): r_drag = 147.09 Mpc, reproduced by eq. 16.
    c = Cosmology(h0=67.36, omega_m=0.3153, omega_b=0.0493, n_eff=3.046)
    a = acoustic_scales(c)
    assert a["r_drag_method"] == "fit" and a["r_drag_caution"] is None
    assert a["r_drag"] == a["r_drag_fit"]
    assert a["r_drag"] == pytest.approx(147.09, rel=5e-4)


# ------------------------------------------------------------------------------ 10. N_eff
def test_n_eff_zero_with_masses_is_refused_naming_the_field():
    with pytest.raises(ParameterError) as info:
        Cosmology(h0=70.0, omega_m=0.3, n_eff=0.0, m_nu=(0.06,))
    assert info.value.field == "n_eff"
    assert str(info.value).startswith("n_eff:") and "m_nu=()" in str(info.value)
    # without masses (or without radiation) N_eff = 0 is a legitimate model
    assert Cosmology(h0=70.0, omega_m=0.3, n_eff=0.0, m_nu=()).omega_nu_massless == 0.0
    Cosmology(h0=70.0, omega_m=0.3, n_eff=0.0, t_cmb=0.0)


def test_neutrino_density_convention_of_the_readme():
    # Non-relativistic limit of the N_eff/3-per-species rule (CONVENTIONS.md): each species
    # has (N_eff/3) (7/8)(4/11)^{4/3} ρ_γ F(y), F → (180 ζ(3)/7π⁴) y for y = m/(k_B T_ν0) ≫ 1
    # (the Fermi–Dirac moments), so Ω_ν h² = Σm / D with D in eV computed here in mpmath.
    t, n_eff = mp.mpf("2.7255"), mp.mpf("3.044")
    t_nu = mp.cbrt(mp.mpf(4) / 11) * t
    per_ev = (n_eff / 3 * ref.NU_PER_SPECIES * ref.photon_mass_density(t)
              / ref.critical_density(100) * 180 * mp.zeta(3) / (7 * mp.pi**4) / (ref.KB_EV * t_nu))
    divisor = 1 / per_ev
    assert float(divisor) == pytest.approx(92.70, abs=0.01)  # the value the README states
    c = Cosmology(h0=70.0, omega_m=0.4, m_nu=(1.0, 1.0, 1.0), n_eff=3.044)
    assert c.omega_nu * c.h**2 == pytest.approx(3.0 / float(divisor), rel=1e-6)
    assert float(divisor) / 93.14 == pytest.approx(1 - 0.0047, abs=5e-4)
    # N_eff = 3: the purely thermal value, 3/3.044 times the divisor above
    c3 = Cosmology(h0=70.0, omega_m=0.4, m_nu=(1.0, 1.0, 1.0), n_eff=3.0)
    assert 3.0 / (c3.omega_nu * c3.h**2) == pytest.approx(float(divisor * 3.044 / 3), rel=1e-6)
    assert float(divisor * 3.044 / 3) == pytest.approx(94.06, abs=0.01)
