"""The energy budget through cosmic time: densities, E(z), q(z) and the big-bang check.

All densities here are in units of the critical density today, ρ_i(z) / ρ_crit,0, as
functions of x = 1 + z = 1/a. Every component obeys d ln ρ / d ln a = −3 (1 + w): radiation
(w = 1/3) falls as a⁻⁴, matter (w = 0) as a⁻³, curvature behaves as w = −1/3 (a⁻²), and
dark energy with w(a) = w₀ + w_a (1 − a) as a^{−3(1+w₀+w_a)} exp[−3 w_a (1 − a)]
(Linder 2003, PRL 90, 091301, eq. 5).
"""

import functools
import math

import numpy as np
from scipy import optimize

from ._errors import NoBigBangError
from ._neutrinos import fermi_dirac

__all__ = ["components", "components_x", "hubble_squared", "hubble_squared_x", "budget_total",
           "neutrino_terms", "check_big_bang", "dark_energy_factor", "e2_and_slope",
           "minima_of_e2", "power_law_terms", "exp_sum_roots"]


def dark_energy_factor(cosmo, x, u=None):
    """ρ_de(z)/ρ_de,0 for w(a) = w₀ + w_a (1 − a) (Chevallier & Polarski 2001; Linder 2003)."""
    if cosmo.wa == 0.0 and cosmo.w0 == -1.0:
        return np.ones_like(x)
    if u is None:
        u = np.log(x)
    with np.errstate(over="ignore"):
        return np.exp(3.0 * (1.0 + cosmo.w0 + cosmo.wa) * u - 3.0 * cosmo.wa * (1.0 - 1.0 / x))


def neutrino_terms(cosmo, x):
    """Massive neutrinos, summed over species, per massless-equivalent species.

    Returns Σ F_i, Σ (2F_i − g_i), Σ g_i and Σ dg_i/d ln y (see ``fermi_dirac``): multiplied
    by Ω_ν1 x⁴ the first two give ρ_ν and (1 + 3w_ν) ρ_ν of the massive species.
    """
    x = np.asarray(x, dtype=float)
    sums = [np.zeros_like(x) for _ in range(4)]
    for y0 in cosmo._derived["y0"]:
        f, g, dg = fermi_dirac(y0 / x)
        sums[0] += f
        sums[1] += 2.0 * f - g
        sums[2] += g
        sums[3] += dg
    return tuple(sums)


def components(cosmo, z):
    """Each component's density over the critical density today, ρ_i(z)/ρ_crit,0.

    See :func:`components_x`, which takes x = 1 + z = 1/a directly (precise for a ≫ 1).
    """
    return components_x(cosmo, 1.0 + np.asarray(z, dtype=float))


def components_x(cosmo, x, nu=None):
    """Each component's density over the critical density today, at x = 1 + z = 1/a.

    Returns a dict with photons, neutrinos_massless, neutrinos_massive, baryons,
    cold_dark_matter, dark_energy and curvature (the last is Ω_k (1+z)², not a density),
    and ``pressure_weight``: Σ (1 + 3 w_i) ρ_i / ρ_crit,0 over the real components, so that
    q = pressure_weight / (2 E²) (Friedmann's acceleration equation). ``nu``: the
    :func:`neutrino_terms` at ``x`` when the caller has them already.
    """
    d = cosmo._derived
    x = np.asarray(x, dtype=float)
    x2 = x * x
    x3 = x2 * x
    x4 = x2 * x2
    nu_total, nu_weighted, _, _ = neutrino_terms(cosmo, x) if nu is None else nu
    de = cosmo.omega_de * dark_energy_factor(cosmo, x)
    w_de = cosmo.w0 + cosmo.wa * (1.0 - 1.0 / x)
    out = {
        "photons": d["omega_gamma"] * x4,
        "neutrinos_massless": d["omega_nu_massless"] * x4,
        "neutrinos_massive": d["omega_nu1"] * x4 * nu_total,
        "baryons": cosmo.omega_b * x3,
        "cold_dark_matter": cosmo.omega_cold_dark_matter * x3,
        "dark_energy": de,
        "curvature": cosmo.omega_k * x2,
    }
    with np.errstate(invalid="ignore"):
        out["pressure_weight"] = (
            2.0 * d["omega_r"] * x4 + d["omega_nu1"] * x4 * nu_weighted
            + d["omega_cb"] * x3 + (1.0 + 3.0 * w_de) * de
        )
    return out


def hubble_squared(cosmo, z):
    """E²(z) = H²(z)/H₀² = Σ_i ρ_i(z)/ρ_crit,0 + Ω_k (1 + z)² (Friedmann's equation)."""
    return hubble_squared_x(cosmo, 1.0 + np.asarray(z, dtype=float))


def hubble_squared_x(cosmo, x):
    """E² at x = 1 + z = 1/a."""
    return budget_total(components_x(cosmo, x))


_BUDGET = ("photons", "neutrinos_massless", "neutrinos_massive", "baryons", "cold_dark_matter",
           "dark_energy", "curvature")


def budget_total(c):
    """E² = Σ of the densities and the curvature term of a :func:`components_x` dict."""
    with np.errstate(invalid="ignore"):
        return sum(c[k] for k in _BUDGET)


def _e2_of_u(cosmo, u):
    return hubble_squared_x(cosmo, np.exp(u))


def e2_and_slope(cosmo, u):
    """E² and dE²/du at u = ln(1 + z) (arrays).

    Every component obeys dρ_i/du = 3 (1 + w_i) ρ_i and the curvature term 2 Ω_k x², so
    dE²/du = 2 E² + Σ (1 + 3 w_i) ρ_i: twice E² plus the ``pressure_weight`` of
    :func:`components_x` (Friedmann's acceleration equation, q = pressure_weight / 2E²).
    """
    with np.errstate(all="ignore"):
        c = components_x(cosmo, np.exp(np.asarray(u, dtype=float)))
        e2 = budget_total(c)
        return e2, 2.0 * e2 + c["pressure_weight"]


def _slope_scalar(cosmo):
    def f(v):
        return float(e2_and_slope(cosmo, np.array([v]))[1][0])
    return f


def minima_of_e2(cosmo, u, slope):
    """Local minima of E² between sorted sample points ``u`` (ln(1+z)), as (u_min, E²_min, κ).

    A minimum lies where dE²/du changes sign from − to + (``slope`` holds dE²/du at ``u``);
    each is refined with Brent's method on the derivative itself, not on samples of E²,
    so a dip of E² far narrower than the sampling is still found as long as its two sides
    (where the derivative has opposite signs) are sampled. κ = d²E²/du² at the minimum, by
    a central difference of the derivative.
    """
    flips = np.flatnonzero((slope[:-1] < 0.0) & (slope[1:] >= 0.0))
    if not flips.size:
        return []
    d = _slope_scalar(cosmo)
    out = []
    for k in flips:
        try:
            um = optimize.brentq(d, u[k], u[k + 1], xtol=1e-15, rtol=1e-15)
        except ValueError:
            um = 0.5 * (u[k] + u[k + 1])
        e2m = float(_e2_of_u(cosmo, np.array([um]))[0])
        hd = 1e-5 * max(1.0, abs(um))
        kappa = (d(um + hd) - d(um - hd)) / (2.0 * hd)
        out.append((float(um), e2m, float(kappa)))
    return out


def power_law_terms(cosmo):
    """E² for a → 0 as Σ c_i x^{n_i} (x = 1 + z), merged by exponent, largest n first.

    Past the grid (z > 7e10) every massive neutrino is relativistic (F = 1 to 1e-13) and
    the dark-energy factor is x^{3(1+w₀+w_a)} e^{−3 w_a} (its e^{3 w_a/x} is 1 to 1e-10).
    """
    d = cosmo._derived
    raw = [(4.0, d["omega_r"] + d["omega_nu1"] * d["y0"].size), (3.0, d["omega_cb"]),
           (2.0, cosmo.omega_k)]
    if cosmo.omega_de != 0.0:
        raw.append((3.0 * (1.0 + cosmo.w0 + cosmo.wa), cosmo.omega_de * math.exp(-3.0 * cosmo.wa)))
    merged = {}
    for n, c in raw:
        if c != 0.0:
            merged[n] = merged.get(n, 0.0) + c
    return sorted(((n, c) for n, c in merged.items() if c != 0.0), reverse=True)


def _scaled_sum(logs, signs, expo, t):
    """Σ sign_i e^{log_i + n_i t}, divided by its largest term (same sign and zeros)."""
    v = logs + expo * t
    return float(np.sum(signs * np.exp(v - v.max())))


def exp_sum_roots(logs, signs, expo, t_max=math.inf):
    """Every root t in (0, t_max) of h(t) = Σ sign_i e^{log_i + n_i t}, the n_i distinct.

    Exact, not sampled: e^{−n₀ t} h has the derivative Σ_{i≥1} (n_i − n₀) sign_i
    e^{log_i + (n_i − n₀) t}, a sum with one term fewer; its roots (found the same way,
    recursively) split (0, t_max) into stretches where h e^{−n₀ t} is monotonic, and each
    stretch holds at most one root, found by Brent's method (the generalised rule of signs
    for exponential sums bounds the count by the sign changes of the coefficients).
    """
    logs, signs, expo = (np.asarray(v, dtype=float) for v in (logs, signs, expo))
    if logs.size < 2 or np.all(signs > 0) or np.all(signs < 0):
        return []
    n0 = expo[0]
    rest = slice(1, None)
    crit = exp_sum_roots(logs[rest] + np.log(np.abs(expo[rest] - n0)),
                         signs[rest] * np.sign(expo[rest] - n0), expo[rest] - n0, t_max)
    h = functools.partial(_scaled_sum, logs, signs, expo)
    edges = [0.0] + crit
    if math.isinf(t_max):
        # beyond the last stationary point h keeps one sign from some t on: that of the term
        # with the largest exponent; walk out until h has it.
        lead = signs[int(np.argmax(expo))]
        far = max(1.0, 2.0 * edges[-1])
        while np.sign(h(far)) != lead and far < 1e300:
            far *= 2.0
        edges.append(far)
    else:
        edges.append(t_max)
    roots = []
    for lo, hi in zip(edges[:-1], edges[1:]):
        f_lo, f_hi = h(lo), h(hi)
        if f_lo == 0.0 and lo > 0.0:
            roots.append(lo)
        elif f_lo * f_hi < 0.0:
            roots.append(optimize.brentq(h, lo, hi, xtol=1e-13 * max(1.0, hi), rtol=1e-15))
    return sorted(set(roots))


def _raise_no_big_bang(u_turn):
    """NoBigBangError for the bounce at u = ln(1+z); z = inf beyond float range (the message
    then gives 1+z as a power of e)."""
    z_turn = math.expm1(u_turn) if u_turn < 709.0 else math.inf
    where = f"z = {z_turn:.6g}" if math.isfinite(z_turn) else f"1 + z = e^{u_turn:.6g}"
    raise NoBigBangError(
        z_turn,
        f"no big bang: going back in time, H² would fall to zero at {where}, where "
        "the expansion turns around instead of starting hot (dark energy or a closed "
        "geometry outweighs matter and radiation there); lower Ω_de or raise Ω_m")


def check_big_bang(cosmo, u, e2, slope=None, u_top=None):
    """Raise :class:`NoBigBangError` if E² ≤ 0 anywhere in the past, 0 < z < ∞.

    A model whose H² vanishes in the past would have turned around (bounced) at that
    redshift instead of starting from a big bang; the distance integrals do not exist for
    it. ``u`` (ln(1+z), ascending), ``e2`` and ``slope`` (dE²/du) are the samples of the
    model's integration grid, which ends at ``u_top``. Three checks, each exact rather than a
    matter of sampling density:

    1. E² ≤ 0 at a sample;
    2. a local minimum of E² between samples (root of dE²/du, :func:`minima_of_e2`) with
       E² ≤ 0 there;
    3. beyond the grid's top, a root of the power-law sum E² = Σ c_i x^{n_i}
       (:func:`power_law_terms`, :func:`exp_sum_roots`): which power wins as a → 0 and
       whether the sum changes sign before it does.

    The error carries the lowest such redshift (inf if beyond float range, 1 + z > e^709,
    as when two nearly equal powers of x compete).
    """
    past = u >= 0.0
    u, e2 = u[past], e2[past]
    candidates = []
    bad = ~(e2 > 0.0)
    bad[0] = bad[0] and u[0] > 0.0
    if bad.any():
        k = int(np.argmax(bad))
        lo = u[k - 1] if k > 0 else 0.0
        try:
            candidates.append(optimize.brentq(lambda v: float(_e2_of_u(cosmo, np.array([v]))[0]),
                                              lo, u[k], xtol=1e-14))
        except ValueError:
            candidates.append(float(u[k]))
    if slope is not None:
        sl = slope[past]
        for um, e2m, _ in minima_of_e2(cosmo, u, sl):
            if not e2m > 0.0:
                k = max(int(np.searchsorted(u, um)) - 1, 0)
                f = lambda v: float(_e2_of_u(cosmo, np.array([v]))[0])
                try:
                    candidates.append(optimize.brentq(f, u[k], um, xtol=1e-14))
                except ValueError:
                    candidates.append(um)
    if u_top is not None and not candidates:
        terms = power_law_terms(cosmo)
        if terms:
            expo = np.array([n for n, _ in terms])
            coef = np.array([c for _, c in terms])
            logs = np.log(np.abs(coef)) + expo * u_top
            roots = exp_sum_roots(logs, np.sign(coef), expo)
            if roots:
                candidates.append(u_top + roots[0])
    if candidates:
        _raise_no_big_bang(min(candidates))
