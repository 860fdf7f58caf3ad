"""Integrate each cosmology once on a fixed grid, then interpolate anything anywhere.

The grid is uniform in u = ln(1 + z) = −ln a with step 1/128, from u = −4.703 (a ≈ 110, the
future) to u = 25 (z ≈ 7e10), with a node exactly at today. Between nodes each integral
is advanced by 3-point Gauss–Legendre quadrature (error O(h⁷)); values and their exact
derivatives (the integrands) at the nodes define cubic Hermite interpolants whose error
is below 1e-9 relative (1e-8 within the first step of today, where values are tiny).
Beyond the top node the integrands are power laws in a to high
precision, and the tails are added in closed form. Where that grid cannot follow the
integrands (a loitering minimum of E², or E(z) varying fast near today) nested refinement
levels are added (see :class:`Tables`), which keeps 1e-7 for every accepted model at
z ≥ 1e-4; ordinary models need none.

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
import threading

import numpy as np
from . import _hermite as hermite
from ._background import (budget_total, check_big_bang, components_x, minima_of_e2,
                          neutrino_terms)

__all__ = ["tables", "per_model", "STEP", "U_MIN", "U_MAX", "Tables"]

STEP = 1.0 / 128.0
_N_FUTURE = 602
U_MIN = -_N_FUTURE * STEP
U_MAX = 25.0
_N = _N_FUTURE + int(round(U_MAX / STEP)) + 1
_GL_X, _GL_W = np.polynomial.legendre.leggauss(3)

# Refinement levels (see Tables): each halves the parent's step over ±_HALF parent steps.
_HALF = 32
_MAX_LEVELS = 30
# Relative error allowed in the first panel from today before refining there; 5× under the
# 1e-7 target (common practice, no source).
_FIRST_PANEL_TOL = 2e-8
# A minimum of E² narrower than this many coarse steps (in ln(1+z)) gets refinement levels.
_NARROW = 32.0
_PROBE_DELTA = 2e-3  # spacing in u of the finite difference for f‴ near today
_FROM_TOP = ("age", "eta", "rs")  # columns integrated from z = ∞ down (they fall with u)
# Order of [nodes, Gauss–Legendre points] along u: node k, its panel's three points, node k + 1…
_ORDER = np.empty(_N + 3 * (_N - 1), dtype=np.intp)
_ORDER[0::4] = np.arange(_N)
for _j in range(3):
    _ORDER[1 + _j::4] = _N + 3 * np.arange(_N - 1) + _j


def _gl_points(lo, step, n):
    """3-point Gauss–Legendre abscissae of n panels of ``step`` from ``lo``, panel-major."""
    mid = lo + step * (np.arange(n) + 0.5)
    return (mid[:, None] + 0.5 * step * _GL_X[None, :]).ravel()


class Tables:
    """Hermite coefficient tables of one cosmology (see module docstring).

    Where the integrands change faster than the uniform grid follows (a narrow minimum of
    E², a loitering phase; or a model whose E(z) varies fast near today), nested refinement
    levels are added around that point u_c: level j halves the step of level j − 1 over
    ±32 of its parent's steps around the parent node nearest u_c, down to a step of 1/32
    of the width of the minimum (√(2 E²_min/κ), κ = d²E²/du²), or until the first-panel
    error estimate s³ |f‴(0)| / 192 of the integrands near today is below 2e-8. The
    increments of each refined panel replace its parent's, so every node value, not only
    those inside the level, carries the refined integral; a point is interpolated on the
    finest level that holds it. Ordinary models need none (no cost).
    """

    def __init__(self, cosmo):
        self.cosmo = cosmo
        u = U_MIN + STEP * np.arange(_N)
        u[_N_FUTURE] = 0.0
        self.u = u
        gl_u = _gl_points(U_MIN, STEP, _N - 1)
        # the grid's nodes, its Gauss–Legendre points, and four probes of the integrands
        # near today (see _refinement_targets), all in one evaluation of the budget
        all_u = np.concatenate([u, gl_u, _PROBE_DELTA * np.array([-2.0, -1.0, 1.0, 2.0])])
        d = cosmo._derived
        self._omega_b, self._omega_gamma = cosmo.omega_b, d["omega_gamma"]
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            nu = neutrino_terms(cosmo, np.exp(all_u)) if d["y0"].size else None
            comp = components_x(cosmo, np.exp(all_u), nu)
            e2 = budget_total(comp)
            slope_e2 = 2.0 * e2 + comp["pressure_weight"]
            e = np.where(e2 > 0.0, np.sqrt(np.where(e2 > 0, e2, 1.0)), np.nan)
        order = _ORDER
        u_sorted, slope_sorted = all_u[order], slope_e2[order]
        check_big_bang(cosmo, u_sorted, e2[order], slope_sorted, U_MAX)
        n = _N
        ex = np.exp(all_u)
        integrands = self._integrands(ex, e)
        probe = {key: v[-4:] for key, v in integrands.items()}

        def steps(f):
            return 0.5 * STEP * (f[n:n + 3 * (n - 1)].reshape(n - 1, 3) @ _GL_W)

        # Power-law tails beyond U_MAX: E ∝ e^{s u} with s = 1 + q at the top.
        q_top = float(comp["pressure_weight"][n - 1] / (2.0 * e2[n - 1]))
        s_top = 1.0 + q_top
        e_top = e[n - 1]
        ex_top = ex[n - 1]
        age_tail = 1.0 / (s_top * e_top) if s_top > 1e-9 else math.inf
        eta_tail = ex_top / ((s_top - 1.0) * e_top) if s_top > 1.0 + 1e-9 else math.inf
        tails = {"age": age_tail, "eta": eta_tail, "rs": eta_tail * integrands["cs"][n - 1]}

        self.e = e[:n]
        self.e2 = e2[:n]
        sources = {"chi": "d_chi", "tau": "d_tau", "age": "d_tau", "eta": "d_chi", "rs": "d_rs"}
        inc = {name: steps(integrands[src]) for name, src in sources.items()}
        self.minima = minima_of_e2(cosmo, u_sorted, slope_sorted)
        self.levels = self._build_levels(cosmo, inc, sources, probe)

        def from_today(steps_):
            out = np.empty(n)
            k = _N_FUTURE
            out[k] = 0.0
            out[k + 1:] = np.cumsum(steps_[k:])
            out[:k] = -np.cumsum(steps_[:k][::-1])[::-1]
            return out

        def from_top(steps_, tail):
            out = np.empty(n)
            out[-1] = tail
            out[:-1] = tail + np.cumsum(steps_[::-1])[::-1]
            return out

        self.increments = inc  # ∫ over each coarse panel (refined where levels exist)
        self.values = {name: (from_top(inc[name], tails[name]) if name in _FROM_TOP
                              else from_today(inc[name])) for name in sources}
        self.chi_infinity = self.values["eta"][_N_FUTURE]
        self.tau_infinity = self.values["age"][_N_FUTURE]
        self.slopes = {name: (-1.0 if name in _FROM_TOP else 1.0) * integrands[src][:n]
                       for name, src in sources.items()}
        if d["y0"].size:
            f, f_p, g, dg = (v[:n] for v in nu)
            # y ∝ e^{-u}: d/du = −d/d ln y
            self.values["nu"], self.slopes["nu"] = f, -g
            self.values["nu_p"], self.slopes["nu_p"] = f_p, -(2.0 * g - dg)
        self._fill_levels(cosmo)
        self._coefficients = {}

    def _integrands(self, ex, e):
        """dτ/du, dχ/du, d r_s/du (units 1/H₀, c/H₀) and c_s/c at x = e^u = ``ex``."""
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            inv_e = 1.0 / e
            d_chi = ex * inv_e
            if self._omega_gamma > 0.0:
                # Sound speed over c, 1/sqrt(3 (1 + R)), R = 3 ρ_b / (4 ρ_γ) ∝ a.
                r0 = 0.75 * self._omega_b / self._omega_gamma
                cs = 1.0 / np.sqrt(3.0 * (1.0 + r0 / ex))
            else:
                cs = np.full_like(ex, np.nan)
        return {"d_tau": inv_e, "d_chi": d_chi, "d_rs": d_chi * cs, "cs": cs}

    def _sample(self, cosmo, u):
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            e2 = budget_total(components_x(cosmo, np.exp(u)))
            e = np.where(e2 > 0.0, np.sqrt(np.where(e2 > 0, e2, 1.0)), np.nan)
        return self._integrands(np.exp(u), e)

    def _refinement_targets(self, cosmo, probe):
        """(centre u_c, finest step wanted) for each place the uniform grid cannot follow."""
        targets = []
        for um, e2m, kappa in self.minima:
            if U_MIN < um < U_MAX and e2m > 0.0 and kappa > 0.0:
                width = math.sqrt(2.0 * e2m / kappa)
                if width < _NARROW * STEP:
                    targets.append((um, width / 32.0))
        # Near today: Hermite error s³ |f‴(0)| / 192 relative (f(0) = 1 for dχ/du, dτ/du).
        delta = _PROBE_DELTA
        worst = 0.0
        for key in ("d_chi", "d_tau"):
            f = probe[key]
            if not np.all(np.isfinite(f)):
                worst = math.inf
                break
            worst = max(worst, abs(f[3] - 2.0 * f[2] + 2.0 * f[1] - f[0]) / (2.0 * delta**3))
        if worst * STEP**3 / 192.0 > _FIRST_PANEL_TOL:
            s_want = ((192.0 * _FIRST_PANEL_TOL / worst) ** (1.0 / 3.0) if math.isfinite(worst)
                      else STEP / 2.0**10)
            targets.append((0.0, s_want))
        return targets

    def _build_levels(self, cosmo, inc, sources, probe):
        """The refinement levels (dicts), with the coarse increments ``inc`` corrected."""
        levels = []
        for centre, s_want in self._refinement_targets(cosmo, probe):
            n_lev = min(_MAX_LEVELS, max(0, math.ceil(math.log2(STEP / s_want))))
            chain = []
            lo_parent, step_parent, n_parent = U_MIN, STEP, _N - 1
            for _ in range(n_lev):
                k_c = round((centre - lo_parent) / step_parent)
                k_lo = max(0, k_c - _HALF)
                k_hi = min(n_parent, k_c + _HALF)
                if k_hi <= k_lo:
                    break
                step = 0.5 * step_parent
                lo = lo_parent + k_lo * step_parent
                n_pan = 2 * (k_hi - k_lo)
                nodes = lo + step * np.arange(n_pan + 1)
                f_gl = self._sample(cosmo, _gl_points(lo, step, n_pan))
                f_nodes = self._sample(cosmo, nodes)
                chain.append({
                    "lo": lo, "step": step, "n": n_pan, "nodes": nodes, "parent_offset": k_lo,
                    "inc": {name: 0.5 * step * (f_gl[src].reshape(n_pan, 3) @ _GL_W)
                            for name, src in sources.items()},
                    "slopes": {name: (-1.0 if name in _FROM_TOP else 1.0) * f_nodes[src]
                               for name, src in sources.items()}})
                lo_parent, step_parent, n_parent = lo, step, n_pan
            # The finest increments replace their parents', level by level up to the grid.
            for j in range(len(chain) - 1, -1, -1):
                parent_inc = inc if j == 0 else chain[j - 1]["inc"]
                k0 = chain[j]["parent_offset"]
                for name in sources:
                    pairs = chain[j]["inc"][name].reshape(-1, 2).sum(axis=1)
                    parent_inc[name][k0:k0 + pairs.size] = pairs
            for j, lev in enumerate(chain):
                lev["parent"] = -1 if j == 0 else len(levels) + j - 1
            levels.extend(chain)
        return levels

    def _fill_levels(self, cosmo):
        """Node values of every level from its parent's node at the level's left edge."""
        for lev in self.levels:
            parent = self.values if lev["parent"] < 0 else self.levels[lev["parent"]]["values"]
            vals = {}
            n_pan = lev["n"]
            # Anchor at the parent node on the side the column is integrated from (today, or
            # the top), so that NaN beyond a turnaround only reaches the nodes past it.
            k_today = int(np.clip(2 * round(-lev["nodes"][0] / (2 * lev["step"])), 0, n_pan))
            for name, steps_ in lev["inc"].items():
                k_a = n_pan if name in _FROM_TOP else k_today
                sign = -1.0 if name in _FROM_TOP else 1.0
                out = np.empty(n_pan + 1)
                out[k_a] = parent[name][lev["parent_offset"] + k_a // 2]
                out[k_a + 1:] = out[k_a] + sign * np.cumsum(steps_[k_a:])
                out[:k_a] = out[k_a] - sign * np.cumsum(steps_[:k_a][::-1])[::-1]
                vals[name] = out
            slopes = dict(lev["slopes"])
            if "nu" in self.values:
                f, f_p, g, dg = neutrino_terms(cosmo, np.exp(lev["nodes"]))
                vals["nu"], slopes["nu"] = f, -g
                vals["nu_p"], slopes["nu_p"] = f_p, -(2.0 * g - dg)
            lev["values"], lev["slopes"] = vals, slopes
            lev["coef"] = {}

    def coefficients(self, name):
        """Cubic Hermite coefficients per interval of one column (see ``model._hermite``)."""
        found = self._coefficients.get(name)
        if found is None:
            found = hermite.coefficients(self.values[name], self.slopes[name], STEP)
            self._coefficients[name] = found
        return found

    def locate(self, u):
        """Where each u lies: interval index and position t in [0, 1) on the uniform grid,
        plus, for a model with refinement levels, the same on each level holding it."""
        s = (u - U_MIN) * (1.0 / STEP)
        i = s.astype(np.intp)
        np.clip(i, 0, _N - 2, out=i)
        if not self.levels:
            return i, s - i
        fine = []
        for k, lev in enumerate(self.levels):
            idx = np.flatnonzero((u >= lev["lo"]) & (u <= lev["lo"] + lev["n"] * lev["step"]))
            if idx.size:
                sf = (u[idx] - lev["lo"]) / lev["step"]
                i_f = np.clip(sf.astype(np.intp), 0, lev["n"] - 1)
                fine.append((k, idx, i_f, sf - i_f))
        return i, s - i, fine

    def interpolate(self, name, where):
        """Hermite-interpolate one column at the positions ``where = locate(u)``."""
        out = hermite.evaluate(self.coefficients(name), where[0], where[1])
        if len(where) > 2:
            for k, idx, i_f, t_f in where[2]:  # coarse to fine: the finest level wins
                lev = self.levels[k]
                coef = lev["coef"].get(name)
                if coef is None:
                    coef = hermite.coefficients(lev["values"][name], lev["slopes"][name],
                                                lev["step"])
                    lev["coef"][name] = coef
                out[idx] = hermite.evaluate(coef, i_f, t_f)
        return out


def per_model(build, size=64):
    """Cache ``build(cosmo)`` by the model's expansion history (``cosmo.background_key``: the
    label and σ₈, which only scales the growth amplitude, do not count).

    Safe under threads (a threaded web server calls it from several at once): the look-ups and
    updates of the order hold a lock; two threads that miss together both build, and one result
    is kept.
    """
    cache = collections.OrderedDict()
    lock = threading.Lock()

    @functools.wraps(build)
    def cached(cosmo):
        key = cosmo.background_key
        with lock:
            found = cache.get(key)
            if found is not None:
                cache.move_to_end(key)
                return found
        found = build(cosmo)
        with lock:
            found = cache.setdefault(key, found)
            while len(cache) > size:
                cache.popitem(last=False)
        return found

    return cached


tables = per_model(Tables)
tables.__doc__ = "The integration tables of a cosmology, cached by its physics."
