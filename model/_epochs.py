"""Milestones of an expansion history: equalities, the onset of acceleration, the fate."""

import math

import numpy as np
from scipy import optimize

from ._background import budget_total, components
from ._constants import NEUTRINO_PER_PHOTON
from ._distances import evaluate
from ._future import future, integral_da
from ._tables import U_MAX, U_MIN, tables

__all__ = ["epochs", "scale_factor_history", "cosmic_time"]


def _q_of_u(cosmo, u):
    c = components(cosmo, np.expm1(np.atleast_1d(u)))
    return c["pressure_weight"] / (2.0 * budget_total(c))


def _matter_minus_de(cosmo, u):
    c = components(cosmo, np.expm1(np.atleast_1d(u)))
    return c["baryons"] + c["cold_dark_matter"] + c["neutrinos_massive"] - c["dark_energy"]


def _first_sign_change(f, u):
    """Root of f between the first pair of nodes (in the order given) where its sign flips."""
    with np.errstate(all="ignore"):
        vals = f(u)
    sign = np.sign(vals)
    flips = np.flatnonzero((sign[1:] != sign[:-1]) & np.isfinite(vals[1:]) & np.isfinite(vals[:-1]))
    if flips.size == 0:
        return None
    k = flips[0]
    return optimize.brentq(lambda v: float(f(v)[0]), u[k], u[k + 1], xtol=1e-14, rtol=1e-15)


def cosmic_time(cosmo, a):
    """Cosmic time t at a scale factor, on the expanding branch.

    Parameters
    ----------
    cosmo : Cosmology
    a : float
        Scale factor a = 1/(1+z) > 0 (a > 1 is the future).

    Returns
    -------
    float
        t(a) = ∫₀^a da' / (a' H(a')) in Gyr (Hogg 1999, §10, eq. 30 with the limits of the
        age); inf for a model whose H vanishes as a → 0; NaN beyond the turnaround of a
        recollapsing model (a > a_max).

    Notes
    -----
    Up to a = 110 from the tables (and, between the last trusted node and a turnaround, the
    direct integral in s = √(a_max − a) of ``model._future``); beyond, the tables' edge
    value plus composite Gauss–Legendre in ln a (:func:`model._future.integral_da`).
    """
    u = -math.log(a)
    tab = tables(cosmo)
    fut = future(cosmo)
    th = cosmo.hubble_time
    if fut.a_max is not None and a > fut.a_max:
        return math.nan
    if u >= U_MIN:
        if fut.u_turn is not None and fut.a_max > 1.0 and fut.u_turn >= U_MIN \
                and u < tab.u[fut.k_good]:
            _, tau = fut.near_turnaround(np.array([u]))
            return float(th * (tab.tau_infinity - tau[0]))
        return float(th * tab.interpolate("age", tab.locate(np.array([u])))[0])
    # Beyond the grid: add ∫ da / (a E) from the grid edge.
    a_edge = math.exp(-U_MIN)
    extra = integral_da(cosmo, a_edge, a, 1, fut.a_max)
    return cosmic_time(cosmo, a_edge) + th * extra


def epochs(cosmo):
    """Milestones of a model's expansion history, past and future.

    Returns
    -------
    dict
        ``z_equality``: matter–radiation equality, 1 + z_eq = Ω_cb / Ω_r,all, with every
        neutrino counted as radiation (the definition of Planck 2018 VI, Table 2);
        ``z_dark_energy_equality``: where ρ_m (cold matter and massive neutrinos) equals
        ρ_de — the latest crossing in the past, else the first in the future (negative z);
        ``z_acceleration``: where q last turned from positive to negative before today
        (None if the expansion is not accelerating today, or has always accelerated);
        ``age_today`` and ``age_*`` at each of them (Gyr; None where the epoch is None);
        ``fate``: "eternal expansion", "recollapse" or "big rip"; ``a_max``,
        ``t_max_expansion`` and ``t_recollapse`` for a recollapse; ``t_big_rip`` for a big
        rip; ``a_future_acceleration`` and ``t_future_acceleration`` when a decelerating
        model will start to accelerate. Times are cosmic time t, Gyr.
        The fate is decided at any scale factor (``model._future``); a turnaround beyond
        a = 1e100 has infinite times, and ``a_max`` is inf beyond float range.

    Notes
    -----
    q = Σ_i (1 + 3 w_i) Ω_i(z) / 2 follows from Friedmann's acceleration equation
    ä/a = −(4πG/3) Σ (ρ_i + 3 p_i/c²). Roots are bracketed on the model's integration grid
    and refined with Brent's method to 1e-14 in ln(1+z). A recollapse is symmetric in time
    about its maximum expansion, so t_recollapse = 2 t_max_expansion.
    """
    d = cosmo._derived
    t0 = float(evaluate(cosmo, 0.0)["age"])
    out = {"age_today": t0}

    def age_at(z):
        if z is None:
            return None
        return cosmic_time(cosmo, 1.0 / (1.0 + z))

    # Matter–radiation equality (every neutrino relativistic, as Planck's tables define it).
    omega_r_all = d["omega_gamma"] * (1.0 + cosmo.n_eff * NEUTRINO_PER_PHOTON)
    z_eq = d["omega_cb"] / omega_r_all - 1.0 if omega_r_all > 0 and d["omega_cb"] > 0 else None
    if z_eq is not None and not (0.0 < z_eq <= math.expm1(U_MAX)):
        z_eq = None
    out["z_equality"] = z_eq
    out["age_equality"] = age_at(z_eq)

    past = np.arange(0.0, U_MAX, 1.0 / 64.0)
    coming = -np.arange(0.0, math.log(1e12), 1.0 / 64.0)  # a up to 1e12

    # Matter = dark energy: latest past crossing, else the first future one.
    u_de = _first_sign_change(lambda v: _matter_minus_de(cosmo, v), past)
    if u_de is None:
        u_de = _first_sign_change(lambda v: _matter_minus_de(cosmo, v), coming)
    z_de = None if u_de is None else math.expm1(u_de)
    out["z_dark_energy_equality"] = z_de
    out["age_dark_energy_equality"] = age_at(z_de) if z_de is None or z_de > -1 else None

    q_today = float(_q_of_u(cosmo, 0.0)[0])
    z_acc = None
    if q_today < 0.0:
        u_acc = _first_sign_change(lambda v: _q_of_u(cosmo, v), past)
        z_acc = None if u_acc is None else math.expm1(u_acc)
    out["z_acceleration"] = z_acc
    out["age_acceleration"] = age_at(z_acc)

    fut = future(cosmo)
    th = cosmo.hubble_time
    out["fate"] = fut.fate
    out["a_max"] = fut.a_max
    out["t_max_expansion"] = t0 + th * fut.dtau_to_end if fut.fate == "recollapse" else None
    out["t_recollapse"] = 2.0 * out["t_max_expansion"] if fut.fate == "recollapse" else None
    out["t_big_rip"] = t0 + th * fut.dtau_to_end if fut.fate == "big rip" else None

    a_fa = t_fa = None
    if q_today > 0.0:
        limit = coming if fut.a_max is None else coming[coming > -math.log(fut.a_max)]
        u_fa = _first_sign_change(lambda v: _q_of_u(cosmo, v), limit)
        if u_fa is not None:
            a_fa = math.exp(-u_fa)
            t_fa = cosmic_time(cosmo, a_fa)
    out["a_future_acceleration"] = a_fa
    out["t_future_acceleration"] = t_fa
    return out


def scale_factor_history(cosmo, a_end=10.0, n=400, a_start=1e-6):
    """Scale factor against cosmic time, from a_start into the future.

    Parameters
    ----------
    cosmo : Cosmology
    a_end : float
        Largest scale factor to reach on the expanding branch (default 10).
    n : int
        Number of points.
    a_start : float
        Smallest scale factor (default 1e-6).

    Returns
    -------
    dict
        ``t`` (cosmic time, Gyr) and ``a``, ordered in time. A recollapsing model
        whose turnaround comes before ``a_end`` continues on the contracting branch,
        t = 2 t_max − t(a), down to ``a_start``; a big rip stops at ``a_end``.
    """
    fut = future(cosmo)
    top = a_end if fut.a_max is None else min(a_end, fut.a_max)
    recollapses = fut.a_max is not None and fut.a_max <= a_end
    m = n // 2 if recollapses else n
    a_up = np.geomspace(a_start, top, m)
    tab = tables(cosmo)
    u = -np.log(a_up)
    on_grid = u >= U_MIN
    if fut.u_turn is not None and fut.a_max > 1.0 and fut.u_turn >= U_MIN:
        on_grid &= u >= tab.u[fut.k_good]  # nearer the turnaround: cosmic_time integrates in s
    t_up = np.empty(m)
    t_up[on_grid] = cosmo.hubble_time * tab.interpolate("age", tab.locate(u[on_grid]))
    t_up[~on_grid] = [cosmic_time(cosmo, a) for a in a_up[~on_grid]]
    if recollapses:
        t_max = float(evaluate(cosmo, 0.0)["age"]) + cosmo.hubble_time * fut.dtau_to_end
        t_up[-1] = t_max
        a_down = a_up[::-1][1:]
        t_down = 2.0 * t_max - t_up[::-1][1:]
        return {"t": np.concatenate([t_up, t_down]), "a": np.concatenate([a_up, a_down])}
    return {"t": t_up, "a": a_up}
