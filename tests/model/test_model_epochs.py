"""Epochs of the future (recollapse, big rip, onset of acceleration) and the expansion history.

Closed forms where they exist (closed_forms.py, sources there), else the 30-digit reference:
t(a) = t_H int_0^a da / (a E) (Hogg 1999 eq. 30 in terms of a), and the time symmetry of a
recollapse (E^2 depends on a only, so the contraction retraces the expansion).
"""

import mpmath as mp
import numpy as np
import pytest

import closed_forms as cf
import model
import reference as ref
from helpers import Mismatches

pytestmark = pytest.mark.slow  # backed by the 30-digit mpmath reference (tests/model/reference.py)

H0 = 70.0
T_H = float(ref.MPC_M / (H0 * 1000) / ref.GYR_S)
TIME_RTOL = 1e-6      # future times are integrals of the same kind as evaluate()'s ages
EPOCH_RTOL = 1e-5


def test_closed_matter_only_recollapse():
    om = 2.5
    c = model.Cosmology.from_dark_energy(omega_de=0.0, h0=H0, omega_m=om, t_cmb=0.0)
    ep = model.epochs(c)
    a_max, t_max, t_crunch = cf.closed_matter_only_turnaround(om)
    assert ep["fate"] == "recollapse"
    mm = Mismatches("closed matter only, Omega_m = 2.5")
    mm.check("a_max", "-", ep["a_max"], a_max, EPOCH_RTOL)
    mm.check("t_max_expansion", "-", ep["t_max_expansion"], T_H * t_max, TIME_RTOL)
    mm.check("t_recollapse", "-", ep["t_recollapse"], T_H * t_crunch, TIME_RTOL)
    mm.check("age_today", "-", ep["age_today"], T_H * cf.matter_only_age(om), TIME_RTOL)
    assert ep["t_big_rip"] is None
    assert not mm, mm.report()


def test_negative_dark_energy_recollapses_symmetrically():
    kw = dict(h0=H0, omega_m=1.2, omega_b=0.1, m_nu=())
    c, rc = model.Cosmology(**kw), ref.RefCosmology(**kw)
    ep = model.epochs(c)
    assert ep["fate"] == "recollapse"
    a_max = rc.a_turnaround_future()
    t_max = rc.time_at_scale_factor(a_max)
    mm = Mismatches("Omega_m = 1.2, Omega_de ~ -0.2")
    mm.check("a_max", "-", ep["a_max"], a_max, EPOCH_RTOL)
    mm.check("t_max_expansion", "-", ep["t_max_expansion"], t_max, TIME_RTOL)
    mm.check("t_recollapse", "-", ep["t_recollapse"], 2 * t_max, TIME_RTOL)
    assert not mm, mm.report()


def test_phantom_big_rip():
    # w = -1.5 flat with matter: t_rip = t_H int_0^inf da/(a E) (reference). Caldwell,
    # Kamionkowski & Weinberg 2003 (PRL 91, 071301, eq. 2) approximate the time left as
    # 2 / (3 |1 + w| H0 sqrt(1 - Omega_m)): a 5 % sanity check only.
    kw = dict(h0=H0, omega_m=0.3, omega_b=0.05, w0=-1.5, t_cmb=0.0)
    c, rc = model.Cosmology(**kw), ref.RefCosmology(**kw)
    ep = model.epochs(c)
    assert ep["fate"] == "big rip"
    want = rc.time_at_scale_factor(mp.inf)
    mm = Mismatches("phantom w0 = -1.5")
    mm.check("t_big_rip", "-", ep["t_big_rip"], want, TIME_RTOL)
    assert not mm, mm.report()
    approx = ep["age_today"] + T_H * 2 / (3 * 0.5 * np.sqrt(0.7))
    assert abs(ep["t_big_rip"] / approx - 1) < 0.05
    assert ep["a_max"] is None and ep["t_recollapse"] is None


def test_acceleration_that_starts_in_the_future():
    # flat Omega_m = 0.8: q0 = 0.4 - 0.2 > 0; q = 0 at a = (Om / (2 OL))^(1/3) = 2^(1/3)
    c = model.Cosmology(h0=H0, omega_m=0.8, t_cmb=0.0)
    ep = model.epochs(c)
    assert ep["z_acceleration"] is None and ep["age_acceleration"] is None
    a_acc, t_acc = cf.flat_lambda_future_acceleration(0.8)
    mm = Mismatches("flat Omega_m = 0.8")
    mm.check("a_future_acceleration", "-", ep["a_future_acceleration"], a_acc, EPOCH_RTOL)
    mm.check("t_future_acceleration", "-", ep["t_future_acceleration"], T_H * t_acc, 2 * EPOCH_RTOL)
    assert ep["fate"] == "eternal expansion"
    assert not mm, mm.report()


def test_lcdm_has_no_future_events():
    ep = model.epochs(model.Cosmology(h0=H0, omega_m=0.3))
    assert ep["fate"] == "eternal expansion"
    for key in ("a_max", "t_max_expansion", "t_recollapse", "t_big_rip", "a_future_acceleration",
                "t_future_acceleration"):
        assert ep[key] is None, key


HISTORY_MODELS = {
    "lcdm-radiation": dict(h0=H0, omega_m=0.3, omega_b=0.05, m_nu=()),
    "recollapse": dict(h0=H0, omega_m=1.2, omega_b=0.1, m_nu=()),
    "phantom": dict(h0=H0, omega_m=0.3, omega_b=0.05, w0=-1.5, t_cmb=0.0),
}


@pytest.mark.parametrize("name", list(HISTORY_MODELS))
def test_scale_factor_history_follows_the_friedmann_equation(name):
    kw = HISTORY_MODELS[name]
    c, rc = model.Cosmology(**kw), ref.RefCosmology(**kw)
    hist = model.scale_factor_history(c)
    t, a = np.asarray(hist["t"], float), np.asarray(hist["a"], float)
    assert t.shape == a.shape and t.size >= 50
    assert np.all(np.diff(t) >= 0)
    ep = model.epochs(c)
    t_max = ep["t_max_expansion"]
    a_max = ep["a_max"]
    mm = Mismatches(name)
    picks = np.linspace(0, t.size - 1, 15).astype(int)
    for i in picks:
        if a_max is not None and a[i] > 0.99 * a_max:
            continue          # t(a) is ill-conditioned at the turnaround
        t_exp = rc.time_at_scale_factor(a[i])
        if t_max is not None and t[i] > t_max:
            mm.check("t (contracting)", f"a={a[i]:.4g}", t[i], 2 * mp.mpf(t_max) - t_exp, TIME_RTOL)
        else:
            mm.check("t (expanding)", f"a={a[i]:.4g}", t[i], t_exp, TIME_RTOL)
    assert not mm, mm.report()
    # today is on the curve: a = 1 at t = age_today
    assert np.interp(ep["age_today"], t[: np.argmax(a) + 1], a[: np.argmax(a) + 1]) == pytest.approx(1, rel=1e-3)
