"""The energy budget through cosmic time: densities, E(z), q(z) and the big-bang check.

All densities here are in units of the critical density today, ρ_i(z) / ρ_crit,0, as
functions of x = 1 + z = 1/a. Every component obeys d ln ρ / d ln a = −3 (1 + w): radiation
(w = 1/3) falls as a⁻⁴, matter (w = 0) as a⁻³, curvature behaves as w = −1/3 (a⁻²), and
dark energy with w(a) = w₀ + w_a (1 − a) as a^{−3(1+w₀+w_a)} exp[−3 w_a (1 − a)]
(Linder 2003, PRL 90, 091301, eq. 5).
"""

import math

import numpy as np
from scipy import optimize

from ._errors import NoBigBangError
from ._neutrinos import fermi_dirac

__all__ = ["components", "components_x", "hubble_squared", "hubble_squared_x", "budget_total",
           "neutrino_terms", "check_big_bang", "dark_energy_factor"]


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


def components_x(cosmo, x):
    """Each component's density over the critical density today, at x = 1 + z = 1/a.

    Returns a dict with photons, neutrinos_massless, neutrinos_massive, baryons,
    cold_dark_matter, dark_energy and curvature (the last is Ω_k (1+z)², not a density),
    and ``pressure_weight``: Σ (1 + 3 w_i) ρ_i / ρ_crit,0 over the real components, so that
    q = pressure_weight / (2 E²) (Friedmann's acceleration equation).
    """
    d = cosmo._derived
    x = np.asarray(x, dtype=float)
    x2 = x * x
    x3 = x2 * x
    x4 = x2 * x2
    nu_total, nu_weighted, _, _ = neutrino_terms(cosmo, x)
    de = cosmo.omega_de * dark_energy_factor(cosmo, x)
    w_de = cosmo.w0 + cosmo.wa * (1.0 - 1.0 / x)
    out = {
        "photons": d["omega_gamma"] * x4,
        "neutrinos_massless": d["omega_nu_massless"] * x4,
        "neutrinos_massive": d["omega_nu1"] * x4 * nu_total,
        "baryons": cosmo.omega_b * x3,
        "cold_dark_matter": cosmo.omega_cdm * x3,
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


def check_big_bang(cosmo, u, e2):
    """Raise :class:`NoBigBangError` if E² ≤ 0 at any of the past points ``u = ln(1+z) ≥ 0``.

    A model whose H² vanishes in the past would have turned around (bounced) at that
    redshift instead of starting from a big bang; the distance integrals do not exist for
    it. ``u`` and ``e2`` are the sample points and values of the model's integration grid.
    """
    bad = (u > 0.0) & ~(e2 > 0.0)
    if not bad.any():
        return
    u_bad = float(u[bad].min())
    earlier = u[(u >= 0.0) & (u < u_bad)]
    lo = float(earlier.max()) if earlier.size else 0.0
    try:
        root = optimize.brentq(lambda v: float(_e2_of_u(cosmo, np.array([v]))[0]), lo, u_bad,
                               xtol=1e-14)
    except ValueError:
        root = u_bad
    z_turn = math.expm1(root)
    raise NoBigBangError(
        z_turn,
        f"no big bang: going back in time, H² would fall to zero at z = {z_turn:.6g}, where "
        "the expansion turns around instead of starting hot (dark energy or a closed "
        "geometry outweighs matter and radiation there); lower Ω_de or raise Ω_m")
