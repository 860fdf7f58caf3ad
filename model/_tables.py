"""Integrate each cosmology once on a fixed grid, then interpolate anything anywhere.

The grid is uniform in u = ln(1 + z) = −ln a with step 1/128, from u = −4.703 (a ≈ 110, the
future) to u = 25 (z ≈ 7e10), with a node exactly at today. Between nodes each integral
is advanced by 3-point Gauss–Legendre quadrature (error O(h⁷)); values and their exact
derivatives (the integrands) at the nodes define cubic Hermite interpolants whose error
is below 1e-9 relative (1e-8 within the first step of today, where values are tiny).
Beyond the top node the integrands are power laws in a to high
precision, and the tails are added in closed form.

Columns (integrals in units of the Hubble distance c/H₀ or the Hubble time 1/H₀):

- ``chi``   comoving distance ∫₀^z dz/E (Hogg 1999, eq. 15)
- ``tau``   lookback time ∫₀^z dz/[(1+z)E] (Hogg 1999, eq. 30)
- ``age``   age ∫_z^∞ dz/[(1+z)E], integrated from the top so it keeps full relative
  precision at high z
- ``eta``   particle horizon (conformal time) ∫_z^∞ dz/E, likewise
- ``nu``    Σ F_i over massive neutrino species, ``nu_p`` Σ (2F_i − g_i) (see _background)
"""

import collections
import functools
import math

import numpy as np
from . import _hermite as hermite
from ._background import budget_total, check_big_bang, components_x, neutrino_terms

__all__ = ["tables", "per_model", "STEP", "U_MIN", "U_MAX", "Tables"]

STEP = 1.0 / 128.0
_N_FUTURE = 602
U_MIN = -_N_FUTURE * STEP
U_MAX = 25.0
_N = _N_FUTURE + int(round(U_MAX / STEP)) + 1
_GL_X, _GL_W = np.polynomial.legendre.leggauss(3)


class Tables:
    """Hermite coefficient tables of one cosmology (see module docstring)."""

    def __init__(self, cosmo):
        self.cosmo = cosmo
        u = U_MIN + STEP * np.arange(_N)
        u[_N_FUTURE] = 0.0
        self.u = u
        mid = 0.5 * (u[:-1] + u[1:])
        gl_u = (mid[:, None] + 0.5 * STEP * _GL_X[None, :]).ravel()
        all_u = np.concatenate([u, gl_u])
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            comp = components_x(cosmo, np.exp(all_u))
            e2 = budget_total(comp)
            e = np.where(e2 > 0.0, np.sqrt(np.where(e2 > 0, e2, 1.0)), np.nan)
            inv_e = 1.0 / e
        check_big_bang(cosmo, all_u, e2)
        n = _N
        ex = np.exp(all_u)
        d_tau = inv_e  # d tau / du
        d_chi = ex * inv_e  # d chi / du
        # Sound speed over c, 1/sqrt(3 (1 + R)), R = 3 ρ_b / (4 ρ_γ) ∝ a.
        d = cosmo._derived
        if d["omega_gamma"] > 0.0:
            r0 = 0.75 * cosmo.omega_b / d["omega_gamma"]
            cs = 1.0 / np.sqrt(3.0 * (1.0 + r0 / ex))
        else:
            cs = np.full_like(ex, np.nan)
        d_rs = d_chi * cs

        def steps(f):
            return 0.5 * STEP * (f[n:].reshape(n - 1, 3) @ _GL_W)

        # Power-law tails beyond U_MAX: E ∝ e^{s u} with s = 1 + q at the top.
        q_top = float(comp["pressure_weight"][n - 1] / (2.0 * e2[n - 1]))
        s_top = 1.0 + q_top
        e_top = e[n - 1]
        ex_top = ex[n - 1]
        age_tail = 1.0 / (s_top * e_top) if s_top > 1e-9 else math.inf
        eta_tail = ex_top / ((s_top - 1.0) * e_top) if s_top > 1.0 + 1e-9 else math.inf
        rs_tail = eta_tail * cs[n - 1]

        def from_today(f):
            inc = steps(f)
            out = np.empty(n)
            k = _N_FUTURE
            out[k] = 0.0
            out[k + 1:] = np.cumsum(inc[k:])
            out[:k] = -np.cumsum(inc[:k][::-1])[::-1]
            return out

        def from_top(f, tail):
            inc = steps(f)
            out = np.empty(n)
            out[-1] = tail
            out[:-1] = tail + np.cumsum(inc[::-1])[::-1]
            return out

        self.e = e[:n]
        self.e2 = e2[:n]
        chi = from_today(d_chi)
        tau = from_today(d_tau)
        age = from_top(d_tau, age_tail)
        eta = from_top(d_chi, eta_tail)
        rs = from_top(d_rs, rs_tail)
        self.chi_infinity = eta[_N_FUTURE]
        self.tau_infinity = age[_N_FUTURE]
        self.values = {"chi": chi, "tau": tau, "age": age, "eta": eta, "rs": rs}
        self.slopes = {"chi": d_chi[:n], "tau": d_tau[:n], "age": -d_tau[:n],
                       "eta": -d_chi[:n], "rs": -d_rs[:n]}
        if d["y0"].size:
            f, f_p, g, dg = neutrino_terms(cosmo, np.exp(u))
            # y ∝ e^{-u}: d/du = −d/d ln y
            self.values["nu"], self.slopes["nu"] = f, -g
            self.values["nu_p"], self.slopes["nu_p"] = f_p, -(2.0 * g - dg)
        self._coefficients = {}

    def coefficients(self, name):
        """Cubic Hermite coefficients per interval of one column (see ``model._hermite``)."""
        found = self._coefficients.get(name)
        if found is None:
            found = hermite.coefficients(self.values[name], self.slopes[name], STEP)
            self._coefficients[name] = found
        return found

    @staticmethod
    def locate(u):
        """Interval index and position t in [0, 1) of each u on the uniform grid."""
        s = (u - U_MIN) * (1.0 / STEP)
        i = s.astype(np.intp)
        np.clip(i, 0, _N - 2, out=i)
        return i, s - i

    def interpolate(self, name, where):
        """Hermite-interpolate one column at the positions ``where = locate(u)``."""
        i, t = where
        return hermite.evaluate(self.coefficients(name), i, t)


def per_model(build, size=64):
    """Cache ``build(cosmo)`` by the model's physics (``cosmo.key``; the label does not count)."""
    cache = collections.OrderedDict()

    @functools.wraps(build)
    def cached(cosmo):
        key = cosmo.key
        found = cache.get(key)
        if found is None:
            found = build(cosmo)
            cache[key] = found
            while len(cache) > size:
                cache.popitem(last=False)
        else:
            cache.move_to_end(key)
        return found

    return cached


tables = per_model(Tables)
tables.__doc__ = "The integration tables of a cosmology, cached by its physics."
