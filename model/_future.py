"""The far future of a model: eternal expansion, recollapse or a big rip.

The fate is decided at any scale factor, not up to a fixed one. Past the integration grid
(a > 110) E² is followed in the log domain, ln ρ_i for each component, on a grid in
v = ln a that is uniform (1/16) up to v = 64 and then grows by 2 % per step, up to the
point where one component dominates for good: it outweighs the sum of all others ten
times over and its logarithmic slope d ln ρ/d ln a is at least theirs (radiation −4,
matter −3, massive neutrinos between, curvature −2, dark energy −3 (1 + w(a)) with
w = w₀ + w_a (1 − a); a dark energy with w_a < 0 never counts as dominant for good, since
its slope keeps falling). Beyond that point the sign of E² is that component's sign.
Before it, a turnaround is the first root of E², bracketed either by a sample with
E² ≤ 0 or by a minimum of E² found as a root of dE²/d ln a (which catches a dip far
narrower than the sampling), and refined with Brent's method.

Cosmic and conformal time from today to the end are composite Gauss–Legendre sums: the
tables up to the grid's edge, then 8-point panels of 1/32 in ln a (1/2 towards a = ∞,
followed by the power-law tail of the dominant term), and up to a turnaround
the substitution a = a_max − s² with panels in s that shrink geometrically towards s = 0,
where the integrand 2s/(a^p E) is regular. No QUADPACK call, so no library warning.

Bounds: the scan stops at ln a = 1e6; a model with no dominant term by then is classed by
the term largest there. A turnaround beyond a = 1e100 gets inf for the times to it (and
a_max = inf beyond float range).
"""

import math

import numpy as np
from scipy import optimize

from . import _hermite as hermite
from ._background import components_x, e2_and_slope, neutrino_terms
from ._neutrinos import fermi_dirac
from ._tables import STEP, U_MIN, _N_FUTURE, per_model, tables

__all__ = ["future", "scalar_e2", "integral_da"]

_V_UNIFORM = 64.0
_V_LIMIT = 1.0e6  # ln a beyond which no model is followed (a ≈ e^{1e6}); documented bound
_GL8_X, _GL8_W = np.polynomial.legendre.leggauss(8)
_GL16_X, _GL16_W = np.polynomial.legendre.leggauss(16)
_TURN_GAP = 0.25
_A_FAR_TURN = 1e100  # beyond this a_max the times to the turnaround are inf (documented)
_S_LINEAR = 1e-4  # s/√a_max below which E² is taken linear in a_max − a


def scalar_e2(cosmo):
    """E²(a) of one scale factor (same physics as :func:`model._background.hubble_squared_x`)."""

    def e2(a):
        with np.errstate(all="ignore"):
            return float(e2_and_slope(cosmo, np.array([-math.log(a)]))[0][0])

    return e2


def _log_terms(cosmo, v):
    """ln|ρ_i|, sign_i and d ln|ρ_i|/d ln a of each E² term at a = e^v (rows: components)."""
    d = cosmo._derived
    rows_l, rows_s, rows_k = [], [], []

    zero = np.zeros(v.shape)

    def add(log_mag, sign, slope):
        rows_l.append(zero + log_mag)
        rows_s.append(float(sign))
        rows_k.append(zero + slope)

    if d["omega_r"] > 0.0:
        add(math.log(d["omega_r"]) - 4.0 * v, 1.0, -4.0)
    if d["omega_cb"] > 0.0:
        add(math.log(d["omega_cb"]) - 3.0 * v, 1.0, -3.0)
    for y0 in d["y0"]:
        ln_y = math.log(y0) + v
        big = ln_y > 300.0
        f, g, _ = fermi_dirac(np.exp(np.where(big, 0.0, ln_y)))
        # F ≈ (120/7π⁴)(3ζ(3)/2) y for y ≫ 1 (the asymptotic series of model._neutrinos)
        ln_f = np.where(big, math.log(120.0 / (7.0 * math.pi**4) * 1.5 * 1.2020569031595942854)
                        + ln_y, np.log(f))
        g_over_f = np.where(big, 1.0, g / f)
        add(math.log(d["omega_nu1"]) + ln_f - 4.0 * v, 1.0, g_over_f - 4.0)
    if cosmo.omega_k != 0.0:
        add(math.log(abs(cosmo.omega_k)) - 2.0 * v, math.copysign(1.0, cosmo.omega_k), -2.0)
    if cosmo.omega_de != 0.0:
        # a capped at e^700: there e^{3 w_a a} has long decided everything for w_a ≠ 0
        grow = cosmo.wa * (1.0 - np.exp(np.minimum(v, 700.0))) if cosmo.wa != 0.0 else 0.0
        ln_de = math.log(abs(cosmo.omega_de)) - 3.0 * (1.0 + cosmo.w0 + cosmo.wa) * v - 3.0 * grow
        add(ln_de, math.copysign(1.0, cosmo.omega_de), -3.0 * (1.0 + cosmo.w0 + grow))
    return np.array(rows_l), np.array(rows_s)[:, None], np.array(rows_k)


def _scaled(cosmo, v):
    """E² and dE²/d ln a at a = e^v, both divided by the largest term (signs exact), and
    the log of that term."""
    logs, signs, slopes = _log_terms(cosmo, np.atleast_1d(np.asarray(v, dtype=float)))
    top = logs.max(axis=0)
    w = signs * np.exp(logs - top)
    return w.sum(axis=0), (w * slopes).sum(axis=0), top


def _dominance_index(cosmo, v, logs, slopes):
    """First index of ``v`` from which one term dominates E² for good (module docstring)."""
    if logs.shape[0] == 1:
        return 0, 0
    lead = np.argmax(logs, axis=0)
    cols = np.arange(v.size)
    top = logs[lead, cols]
    others = np.exp(logs - top).sum(axis=0) - 1.0
    lead_slope = slopes[lead, cols]
    keeps = np.all(slopes <= lead_slope + 1e-12, axis=0)
    de_row = logs.shape[0] - 1 if cosmo.omega_de != 0.0 else -1
    if cosmo.wa < 0.0 and de_row >= 0:
        keeps &= lead != de_row
    ok = (others < 0.1) & keeps
    if not ok.any():
        return None, int(lead[-1])
    k = int(np.argmax(ok))
    return k, int(lead[k])


def _scan_grid():
    v0 = -U_MIN
    n_geo = int(math.ceil(math.log(_V_LIMIT / _V_UNIFORM) / math.log(1.02)))
    # in pieces, so that a model dominated early is not followed further
    return (np.arange(v0, 8.0, 1.0 / 16.0), np.arange(8.0, _V_UNIFORM, 1.0 / 16.0),
            _V_UNIFORM * 1.02 ** np.arange(n_geo + 1))


_SCAN = _scan_grid()
_V_FAR = 50.0  # the far-future integrals run in ln a to at least here, then a power-law tail
_FAR_V, _FAR_W = None, None


def _first_root_beyond_grid(cosmo):
    """(v of the first root of E² past the grid or None, index of the dominant term at the
    end, ln a from which it dominates (inf if never within the limit))."""
    parts = []
    k_dom = None
    far_v, far_w = _far_nodes()
    far = None
    for j, piece in enumerate(_SCAN):
        if j == 0:  # one evaluation for the first piece and the far-future integrals
            logs, signs, slopes = _log_terms(cosmo, np.concatenate([piece, far_v, [_V_FAR]]))
            far = (far_v, far_w, logs[:, piece.size:], signs)
            logs, slopes = logs[:, :piece.size], slopes[:, :piece.size]
        else:
            logs, signs, slopes = _log_terms(cosmo, piece)
        k_dom, lead = _dominance_index(cosmo, piece, logs, slopes)
        if k_dom is not None:
            lead_slope = float(slopes[lead, k_dom])
        end = piece.size if k_dom is None else k_dom + 1
        parts.append((piece[:end], logs[:, :end], slopes[:, :end]))
        if k_dom is not None:
            break
    v = np.concatenate([p[0] for p in parts])
    logs = np.concatenate([p[1] for p in parts], axis=1)
    slopes = np.concatenate([p[2] for p in parts], axis=1)
    w = signs * np.exp(logs - logs.max(axis=0))
    e2s, de2s = w.sum(axis=0), (w * slopes).sum(axis=0)
    bad = ~(e2s > 0.0)
    candidates = []
    if bad.any():
        k = int(np.argmax(bad))
        lo = v[k - 1] if k else v[0]
        candidates.append((lo, v[k]))
    flips = np.flatnonzero((de2s[:-1] < 0.0) & (de2s[1:] >= 0.0))  # minima of E² in ln a
    for k in flips:
        f = lambda x: float(_scaled(cosmo, x)[1][0])
        vm = optimize.brentq(f, v[k], v[k + 1], xtol=1e-14, rtol=1e-15)
        if not float(_scaled(cosmo, vm)[0][0]) > 0.0:
            candidates.append((v[k], vm))
    v_dom = math.inf if k_dom is None else float(v[-1])
    if k_dom is None:
        lead_slope = float(slopes[lead, -1])
    if not candidates:
        return None, lead, v_dom, lead_slope, far
    lo, hi = min(candidates)
    f = lambda x: float(_scaled(cosmo, x)[0][0])
    try:
        root = optimize.brentq(f, lo, hi, xtol=1e-15 * max(1.0, hi), rtol=1e-15)
    except ValueError:
        root = hi
    return root, lead, v_dom, lead_slope, far


def _far_nodes():
    """8-point Gauss–Legendre nodes and weights on [ln 110, 50] in ln a, panels of 1/2."""
    global _FAR_V, _FAR_W
    if _FAR_V is None:
        v0 = -U_MIN
        _FAR_V, _FAR_W = _gl(v0, _V_FAR, int(math.ceil((_V_FAR - v0) * 2.0)))
    return _FAR_V, _FAR_W


def _gl(lo, hi, n_panels):
    """8-point Gauss–Legendre nodes and weights of ``n_panels`` equal panels on [lo, hi]."""
    edges = np.linspace(lo, hi, n_panels + 1)
    return _gl_on(edges)


def _gl_on(edges):
    mid = 0.5 * (edges[:-1] + edges[1:])
    half = 0.5 * np.diff(edges)
    x = (mid[:, None] + half[:, None] * _GL8_X[None, :]).ravel()
    w = (half[:, None] * _GL8_W[None, :]).ravel()
    return x, w


def _inv_e(cosmo, a):
    e2 = e2_and_slope(cosmo, -np.log(a))[0]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(e2 > 0.0, 1.0 / np.sqrt(np.where(e2 > 0.0, e2, 1.0)), 0.0)


def integral_da(cosmo, a0, a1, p, a_max=None):
    """∫_{a0}^{a1} da / (a^p E(a)) (p = 1: cosmic time, p = 2: conformal time; units 1/H₀),
    a0 < a1 ≤ a_max; with ``a_max`` (a turnaround, E(a_max) = 0) given and a1 = a_max,
    the end is done in s = √(a_max − a). Composite 8-point Gauss–Legendre (module docstring).
    """
    if not a1 > a0:
        return 0.0
    total = 0.0
    s_part = a_max is not None and a1 >= a_max
    a_split = max(a0, 0.5 * a1) if s_part else a1
    if a_split > a0:
        v0, v1 = math.log(a0), math.log(a_split)
        v, w = _gl(v0, v1, max(1, int(math.ceil((v1 - v0) * 32.0))))
        a = np.exp(v)
        total += float(np.sum(w * a ** (1.0 - p) * _inv_e(cosmo, a)))
    if s_part:
        s_top = math.sqrt(a_max - a_split)
        s_c = min(_S_LINEAR * math.sqrt(a_max), 0.5 * s_top)
        edges = np.geomspace(s_c, s_top, max(2, int(math.ceil(math.log2(s_top / s_c))) + 1))
        s, w = _gl_on(edges)
        a = a_max - s * s
        total += float(np.sum(w * 2.0 * s * a ** (-p) * _inv_e(cosmo, a)))
        # 0 ≤ s < s_c: E² = c₁ s² (1 + O(s²/a_max)) with c₁ = −dE²/da at a_max, where the
        # sum of terms would lose everything to cancellation
        total += 2.0 * s_c / (a_max**p * math.sqrt(_turn_slope(cosmo, a_max)))
    return total


def _turn_slope(cosmo, a_max):
    """−dE²/da at a turnaround, Σ(1 + 3w_i) ρ_i / a_max (dE²/d ln a = −(2E² + that))."""
    c = components_x(cosmo, np.array([1.0 / a_max]))
    return max(float(c["pressure_weight"][0]) / a_max, 1e-300)


class _Future:
    """Fate, turnaround and the integrals from today to the end of time (units 1/H₀, c/H₀).

    ``fate``, ``a_max`` (None unless recollapse), ``dtau_to_end`` (cosmic time from today
    to the turnaround or the rip; None for eternal expansion; inf for a turnaround beyond
    a = 1e100), ``deta_to_end`` (conformal
    time from today to the turnaround or to a = ∞, inf where it diverges), ``u_turn``
    (ln(1+z) of the turnaround), ``eh_coef`` (Hermite table of the comoving event horizon
    over the grid's future nodes, integrated from a = ∞ inwards, when it is finite).
    """

    def __init__(self, cosmo):
        self.fate = "eternal expansion"
        self.a_max = self.dtau_to_end = self.u_turn = self.eh_coef = None
        self.deta_to_end = math.inf
        self._cosmo = cosmo
        tab = tables(cosmo)
        u_turn = self._turnaround_on_grid(cosmo, tab)
        lead = None
        if u_turn is None:
            v_root, lead, v_dom, lead_slope, far = _first_root_beyond_grid(cosmo)
            if v_root is not None:
                u_turn = -v_root
        if u_turn is not None:
            self._set_recollapse(cosmo, tab, u_turn)
            return
        self._set_open_ended(cosmo, tab, lead, v_dom, lead_slope, far)

    # -- recollapse ----------------------------------------------------------------------
    @staticmethod
    def _turnaround_on_grid(cosmo, tab):
        """u of the first E² = 0 going from today into the future on the grid, or None."""
        future_u = tab.u[:_N_FUTURE + 1][::-1]  # 0 down to U_MIN
        e2 = tab.e2[:_N_FUTURE + 1][::-1]
        cands = []
        bad = ~(e2 > 0.0)
        if bad.any():
            k = int(np.argmax(bad))
            if k == 0:
                return 0.0
            cands.append((future_u[k], future_u[k - 1]))
        for um, e2m, _ in tab.minima:
            if U_MIN <= um < 0.0 and not e2m > 0.0:
                k = int(np.searchsorted(tab.u, um))  # first node above um
                cands.append((um, tab.u[min(k, _N_FUTURE)]))
        if not cands:
            return None
        lo, hi = max(cands, key=lambda c: c[1])
        f = lambda x: float(e2_and_slope(cosmo, np.array([x]))[0][0])
        try:
            return optimize.brentq(f, lo, hi, xtol=1e-15, rtol=1e-15)
        except ValueError:
            return lo

    def _set_recollapse(self, cosmo, tab, u_turn):
        self.fate = "recollapse"
        self.u_turn = u_turn
        self.a_max = am = math.exp(-u_turn) if -u_turn < 709.0 else math.inf
        if am <= 1.0:
            self.dtau_to_end = self.deta_to_end = 0.0
            return
        if am > _A_FAR_TURN:
            # a turnaround this far off (a nearly flat model with a tiny negative Ω_k) lies
            # beyond what floats can integrate to; the times to it are reported as inf
            self.k_good = 0
            self.dtau_to_end = self.deta_to_end = math.inf
            return
        if u_turn >= U_MIN:
            # The grid's panels near the turnaround cannot follow 1/E ∝ (a_max − a)^{-1/2}:
            # take the tables only up to a node _TURN_GAP in ln a before it (Gauss–Legendre
            # error there ~ (STEP/_TURN_GAP)⁶), and integrate the rest in s.
            k = int(math.ceil((u_turn + _TURN_GAP - U_MIN) / STEP))
            k = min(k, _N_FUTURE)
            self.k_good = k
            a_k = math.exp(-tab.u[k])
            tau_k, chi_k = -tab.values["tau"][k], -tab.values["chi"][k]
        else:
            self.k_good = 0
            a_k = math.exp(-U_MIN)
            tau_k, chi_k = -tab.values["tau"][0], -tab.values["chi"][0]
        self.dtau_to_end = tau_k + integral_da(cosmo, a_k, am, 1, am)
        self.deta_to_end = chi_k + integral_da(cosmo, a_k, am, 2, am)

    def near_turnaround(self, u):
        """χ and τ (units of the tables) at points u between the node ``k_good`` (about
        0.25 in ln a before the turnaround) and the turnaround itself, where the tables
        cannot follow the integrands: 16-point Gauss–Legendre in s = √(a_max − a).
        """
        cosmo, tab = self._cosmo, tables(self._cosmo)
        k = self.k_good
        am = self.a_max
        s_k = math.sqrt(am - math.exp(-tab.u[k]))
        s_u = np.sqrt(np.maximum(am - np.exp(-u), 0.0))
        # ∫ from a_k to a of da/(a^p E) = ∫_{s(a)}^{s_k} 2s ds/(a^p E), a = a_max − s²
        x = 0.5 * (s_k + s_u)[:, None] + 0.5 * (s_k - s_u)[:, None] * _GL16_X[None, :]
        w = 0.5 * (s_k - s_u)[:, None] * _GL16_W[None, :]
        a = am - x * x
        inv_e = _inv_e(cosmo, a.ravel()).reshape(a.shape)
        lin = x < _S_LINEAR * math.sqrt(am)
        if lin.any():
            inv_e[lin] = 1.0 / (x[lin] * math.sqrt(_turn_slope(cosmo, am)))
        chi = tab.values["chi"][k] - np.sum(w * 2.0 * x * inv_e / (a * a), axis=1)
        tau = tab.values["tau"][k] - np.sum(w * 2.0 * x * inv_e / a, axis=1)
        return chi, tau

    # -- eternal expansion or a big rip ---------------------------------------------------
    def _set_open_ended(self, cosmo, tab, lead, v_dom, lead_slope, far):
        # lead_slope: d ln E²/d ln a of the dominant term where it starts to dominate
        n_rows = far[2].shape[0]
        de_row = n_rows - 1 if cosmo.omega_de != 0.0 else -1
        phantom = lead == de_row and cosmo.omega_de > 0.0 and (
            cosmo.wa > 0.0 or (cosmo.wa == 0.0 and cosmo.w0 < -1.0))
        # ∫ da/(a² E) converges iff E² falls slower than a⁻² (acceleration for ever).
        accelerating = lead_slope > -2.0 + 1e-12
        if not (accelerating or phantom):
            return
        v0 = -U_MIN
        v_end = max(_V_FAR, (v_dom if math.isfinite(v_dom) else _V_LIMIT) + 10.0)
        if v_end > 5000.0:
            v_end = 5000.0
        dtau, deta = self._to_far(cosmo, v0, v_end, lead_slope, far if v_end == _V_FAR else None)
        if accelerating:
            self.deta_to_end = -tab.values["chi"][0] + deta
            inc = tab.increments["chi"][:_N_FUTURE]
            eh = np.empty(_N_FUTURE + 1)
            eh[0] = deta
            eh[1:] = deta + np.cumsum(inc)
            self.eh_coef = hermite.coefficients(eh, tab.slopes["chi"][:_N_FUTURE + 1], STEP)
        if phantom:
            self.fate = "big rip"
            self.dtau_to_end = -tab.values["tau"][0] + dtau

    @staticmethod
    def _to_far(cosmo, v0, v_end, lead_slope, far=None):
        """∫ da/(a E) and ∫ da/(a² E) from a = e^{v0} to ∞: composite Gauss–Legendre in ln a
        to ``v_end``, then the power-law tail of the dominant term, E ∝ a^{slope/2}.
        ``far``: the log terms at the nodes of [v0, 50] and at 50, already computed."""
        if far is not None:
            v, w, logs, signs = far
            top_all = logs.max(axis=0)
            e2_all = (signs * np.exp(logs - top_all)).sum(axis=0)
            e2s, top = e2_all[:-1], top_all[:-1]
            e2e, tope = e2_all[-1:], top_all[-1:]
        else:
            n = max(1, int(math.ceil((v_end - v0) * 2.0)))
            v, w = _gl(v0, v_end, n)
            e2s, _, top = _scaled(cosmo, v)
            e2e, _, tope = _scaled(cosmo, np.array([v_end]))
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            log_inv_e = np.where(e2s > 0.0, -0.5 * (top + np.log(np.where(e2s > 0, e2s, 1.0))),
                                 -np.inf)
            dtau = float(np.sum(w * np.exp(log_inv_e)))
            deta = float(np.sum(w * np.exp(log_inv_e - v)))
        log_inv_e_end = -0.5 * (float(tope[0]) + math.log(float(e2e[0])))
        half = 0.5 * lead_slope
        # beyond v_end: ∫ e^{-k v}/E dv with 1/E = e^{log_inv_e_end − half (v − v_end)}
        if half > 0.0:
            dtau += math.exp(log_inv_e_end) / half
        else:
            dtau = math.inf
        if half + 1.0 > 0.0:
            deta += math.exp(log_inv_e_end - v_end) / (half + 1.0)
        else:
            deta = math.inf
        return dtau, deta


future = per_model(_Future)
future.__doc__ = "The far-future summary of a cosmology, cached by its physics."
