"""Helpers shared by the model tests: build matching (model, reference) pairs and compare them.

Comparisons collect every mismatch (quantity, z, model value, reference value, relative error)
and report them all at once, so one failing run shows the whole picture.
"""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
from hypothesis import HealthCheck, Phase, settings
from hypothesis import strategies as st

import model
import reference as ref

# Accuracy targets of the model issue ("Accuracy"): against arbitrary-precision quadrature.
RTOL = 1e-7            # every evaluate() quantity, no massive neutrinos
RTOL_NU = 2e-6         # with massive neutrinos
EPOCH_RTOL = 1e-5      # epoch redshifts

# Redshifts spanning the required range 1e-3 .. 1100, given unsorted on purpose.
Z_GRID = [2.0, 1e-3, 1100.0, 0.01, 0.5, 10.0, 0.1, 1.0, 100.0, 5.0, 30.0, 0.25]

# Hypothesis: the reference is slow (30 digits), so few examples, no deadline, and no shrinking
# (shrinking a failure re-runs the reference hundreds of times; the failing model is printed
# as drawn, with every mismatch).
REFERENCE_SETTINGS = settings(
    max_examples=5,
    deadline=None,
    phases=[Phase.explicit, Phase.reuse, Phase.generate],
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
    print_blob=True,
)


def make_pair(omega_de=None, **kw):
    """The same inputs as a model.Cosmology and a reference.RefCosmology."""
    if omega_de is None:
        return model.Cosmology(**kw), ref.RefCosmology(**kw)
    return (model.Cosmology.from_dark_energy(omega_de=omega_de, **kw),
            ref.RefCosmology.from_dark_energy(omega_de, **kw))


def relerr(got, want, floor=0.0):
    """|got - want| / max(|want|, floor); NaN/inf must agree exactly."""
    got = float(got)
    want_f = float(want)
    if math.isnan(want_f) or math.isinf(want_f):
        return 0.0 if (math.isnan(got) and math.isnan(want_f)) or got == want_f else math.inf
    if math.isnan(got) or math.isinf(got):
        return math.inf
    den = max(abs(mp.mpf(want)), mp.mpf(floor))
    if den == 0:
        return abs(got)
    return float(abs(mp.mpf(got) - mp.mpf(want)) / den)


# deceleration parameter crosses zero: relative error with a floor of 1e-3 in the denominator
_FLOORS = {"deceleration_parameter": 1e-3}


class Mismatches:
    """Collects (what, z, got, want, err) rows and renders them for an assertion message."""

    def __init__(self, label):
        self.label = label
        self.rows = []
        self.worst = {}

    def check(self, what, z, got, want, rtol, floor=0.0):
        err = relerr(got, want, floor)
        self.worst[what] = max(self.worst.get(what, 0.0), err)
        if not err <= rtol:
            self.rows.append((what, z, float(got), float(want), err, rtol))

    def __bool__(self):
        return bool(self.rows)

    def report(self):
        lines = [f"{self.label}: {len(self.rows)} mismatches"]
        for what, z, got, want, err, rtol in self.rows[:60]:
            lines.append(f"  {what:30s} z={z!s:>9}  model={got!r:<24} reference={want!r:<24} "
                         f"rel.err={err:.3e} (tol {rtol:.0e})")
        return "\n".join(lines)


def compare_evaluate(cosmo, refc, zs=Z_GRID, rtol=RTOL, event_horizon=False, label=""):
    """Compare every quantity of model.evaluate with the reference at redshifts zs."""
    out = model.evaluate(cosmo, np.asarray(zs, dtype=float))
    want = refc.evaluate_many(zs, event_horizon=event_horizon)
    mm = Mismatches(label or repr(cosmo))
    missing = set(model.QUANTITIES) - set(out)
    assert not missing, f"evaluate() lacks {missing}"
    for i, z in enumerate(zs):
        w = want[mp.mpf(z)]
        for key, wv in w.items():
            got = np.asarray(out[key]).reshape(-1)[i]
            mm.check(key, z, got, wv, rtol, _FLOORS.get(key, 0.0))
    return mm


# ------------------------------------------------------------------ hypothesis strategies
def _draw_common(draw, massive):
    h0 = draw(st.floats(50.0, 90.0))
    omega_m = draw(st.floats(0.08, 1.0))
    omega_k = draw(st.one_of(st.just(0.0), st.floats(-0.3, 0.3)))
    w0 = draw(st.floats(-1.4, -0.6))
    wa = draw(st.one_of(st.just(0.0), st.floats(-1.0, 1.0)))
    if w0 + wa > -0.2:       # keep dark energy subdominant at early times
        wa = -0.2 - w0
    if massive:
        t_cmb = draw(st.floats(2.5, 3.0))
        n_masses = draw(st.integers(1, 3))
        masses = tuple(draw(st.floats(0.005, 0.6)) for _ in range(n_masses))
        if n_masses < 3 and draw(st.booleans()):
            masses = masses + (0.0,)            # an explicit zero means massless
    else:
        t_cmb = draw(st.sampled_from([0.0, 2.7255, 2.0, 3.3]))
        masses = ()
    n_eff = draw(st.floats(2.5, 4.0))
    kw = dict(h0=h0, omega_m=omega_m, omega_k=omega_k, w0=w0, wa=wa, t_cmb=t_cmb, n_eff=n_eff,
              m_nu=masses)
    probe = ref.RefCosmology(**kw)
    if probe.omega_cb <= 0:
        return None
    f_b = draw(st.floats(0.05, 0.3))
    kw["omega_b"] = float(f_b * probe.omega_cb)
    return kw


def usable(kw, z_max=1100.0):
    """Reference-side filter: a big bang, and no antipode inside z_max for closed models."""
    if kw is None:
        return False
    c = ref.RefCosmology(**kw)
    if c.a_bounce_past() is not None:
        return False
    if c.omega_curv < 0:
        chi = mp.sqrt(-c.omega_curv) * c.comoving_distance(z_max) / c.hubble_distance
        if chi > 0.95 * mp.pi:
            return False
    return True


@st.composite
def massless_models(draw):
    return _draw_common(draw, massive=False)


@st.composite
def massive_models(draw):
    return _draw_common(draw, massive=True)


def event_horizon_is_finite(refc):
    """True where the reference can integrate the event horizon to a = inf.

    Dark energy must dominate for ever (Omega_de > 0, and w < -1/3 at late times: wa > 0, or
    wa = 0 with w0 <= -0.6) and the expansion must not turn around before a = 1e4.
    """
    if refc.omega_de <= 0:
        return False
    if refc.wa < 0 or (refc.wa == 0 and refc.w0 > -0.6):
        return False
    return refc.a_turnaround_future() is None
