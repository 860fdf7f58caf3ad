"""Every distance and time measure at once, for arrays of redshifts.

Conventions follow Hogg (1999), "Distance measures in cosmology", arXiv:astro-ph/9905116,
cited by section below.
"""

import math

import numpy as np

from . import _constants as const
from . import _hermite as hermite
from ._future import future
from ._growth import growth
from ._quantities import QUANTITIES
from ._redshifts import Z_MAX, Z_MIN, as_redshifts
from ._tables import U_MIN, tables

__all__ = ["evaluate", "QUANTITIES", "Z_MIN", "Z_MAX", "as_redshifts", "transverse"]

_CHUNK = 16384


def transverse(cosmo, chi):
    """D_M / D_H from D_C / D_H (Hogg 1999, §5, eq. 16); NaN beyond a closed antipode."""
    ok = cosmo.omega_k
    if ok == 0.0:
        return chi
    k = math.sqrt(abs(ok))
    x = k * chi
    if ok > 0.0:
        return np.sinh(x) / k
    with np.errstate(invalid="ignore"):
        return np.where(x <= math.pi, np.sin(x) / k, np.nan)


def _volume_shape(ok, chi):
    """∫₀^χ S_k(χ')² dχ' in units of D_H³ (Hogg 1999, §9, eq. 29 written in χ).

    Equal to χ³/3 when flat; R³ (x/2 − sin 2x / 4) closed and R³ (sinh 2x / 4 − x/2) open,
    with R = 1/√|Ω_k| and x = χ/R. For |x| < 0.1 the series χ³ (1/3 ± x²/15 + 2x⁴/315 ±
    x⁶/2835) avoids both the cancellation of the closed form and the underflow of R³ when
    |Ω_k| is tiny.
    """
    if ok == 0.0:
        return chi * chi * chi * (1.0 / 3.0)
    k = math.sqrt(abs(ok))
    x = k * chi
    sign = 1.0 if ok > 0.0 else -1.0
    x2 = x * x
    series = chi**3 * (1.0 / 3.0 + sign * x2 * (1.0 / 15.0 + sign * x2 * (2.0 / 315.0
                                                                          + sign * x2 / 2835.0)))
    small = np.abs(x) < 0.1
    if small.all():
        return series
    with np.errstate(over="ignore", invalid="ignore"):
        if ok > 0.0:
            exact = (np.sinh(2.0 * x) / 4.0 - x / 2.0) / k**3
        else:
            exact = np.where(x <= math.pi, x / 2.0 - np.sin(2.0 * x) / 4.0, np.nan) / k**3
    return np.where(small, series, exact)


def evaluate(cosmo, z):
    """Every distance, time and volume measure of a model at the given redshifts.

    Parameters
    ----------
    cosmo : Cosmology
        The model.
    z : array_like
        Redshifts, any shape, unsorted, ``-0.99 <= z <= 1e5``; negative values are the
        future (a = 1/(1+z) up to 100).

    Returns
    -------
    dict of str to ndarray
        Arrays of the shape of ``z``, keyed as in :data:`QUANTITIES` (units there):
        ``scale_factor``; ``hubble_parameter`` H(z) [km/s/Mpc]; ``hubble_distance_at_z``
        c/H(z) [Mpc]; ``comoving_distance`` D_C, ``transverse_comoving_distance`` D_M,
        ``angular_diameter_distance`` D_A, ``luminosity_distance`` D_L [Mpc];
        ``distance_modulus`` μ [mag]; ``lookback_time``, ``age`` [Gyr];
        ``comoving_volume`` [Gpc³, all sky]; ``comoving_volume_element`` [Mpc³ sr⁻¹ per
        unit z]; ``angular_scale`` [proper kpc per arcsec]; ``volume_averaged_distance``
        D_V [Mpc]; ``particle_horizon``, ``event_horizon`` [comoving Mpc, inf where there
        is none]; ``deceleration_parameter`` q; the linear growth of cold dark matter plus
        baryons, all dimensionless: ``growth_factor`` D(z)/D(0), ``growth_rate``
        f = d ln D/d ln a, ``f_sigma8`` = f σ₈ D(z)/D(0) and ``sigma8_at_z`` = σ₈ D(z)/D(0).

    Raises
    ------
    ParameterError
        If any redshift is not finite or outside [-0.99, 1e5] (field ``z``).

    Notes
    -----
    Hogg (1999): D_C = D_H ∫₀^z dz'/E(z') (§5, eq. 15); D_M from D_C (eq. 16);
    D_A = D_M/(1+z) (§6, eq. 18); D_L = (1+z) D_M (§7, eq. 21); μ = 5 log₁₀(D_L/10 pc)
    (§8, eq. 25); dV_C/dz dΩ = D_H (1+z)² D_A² / E (§9, eq. 28) and its integral V_C
    (eq. 29); t_L = t_H ∫₀^z dz'/[(1+z')E] (§10, eq. 30). D_V = [z D_M² c/H(z)]^{1/3}
    (Eisenstein et al. 2005, ApJ 633, 560, eq. 2). q = Σ_i (1 + 3w_i) Ω_i(z) / 2.

    For z < 0 the comoving and transverse distances are signed (negative: light we will
    send); the quantities that need a source in our past (D_A, D_L, μ, volumes, angular
    scale, D_V) are NaN there. In a closed universe, everything built on D_M is NaN beyond
    the antipode (√|Ω_k| D_C/D_H > π). Redshifts beyond a future turnaround of a
    recollapsing model (a > a_max) give NaN throughout.

    Growth solves D'' + (2 + d ln H/d ln a) D' − (3/2) Ω_cb(a) D = 0 in ln a (Linder 2005,
    PRD 72, 043529, eq. 1) from the growing mode of matter and radiation, D ∝ 1 + 3y/2 with
    y = ρ_cb/ρ_rest (Mészáros 1974, A&A 37, 225; D ∝ a without radiation), once per model on
    the first call (``model._growth``); massive neutrinos enter H but do not cluster. It is
    defined in the future too, NaN beyond a turnaround.

    The integrals are computed once per model on a grid in ln(1+z), refined where the
    integrands change fast, and interpolated (see ``model._tables``); relative accuracy is
    better than 1e-7 for every accepted model at z ≥ 1e-4 (about 1e-9 for ordinary
    models; loitering models down to 1e-10 below the bounce); below z = 1e-4 the absolute
    error of D_C is under 1e-11 D_H. Between the grid's last trusted node and a
    turnaround, χ and τ are integrated directly in s = √(a_max − a) (``model._future``);
    for z < 0 the event horizon comes from its own table integrated inwards from a = ∞,
    which avoids the cancellation of D_C + (conformal time left) near a big rip.

    Examples
    --------
    Einstein–de Sitter, D_C = 2 D_H (1 − 1/√(1+z)):

    >>> from model import Cosmology
    >>> c = Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0)
    >>> d = evaluate(c, 3.0)["comoving_distance"]
    >>> bool(abs(d / (2 * c.hubble_distance * (1 - 0.5)) - 1) < 1e-9)
    True
    """
    z = as_redshifts(z)
    shape = z.shape
    flat = z.ravel()
    tab = tables(cosmo)
    fut = future(cosmo)
    grow = growth(cosmo)  # solved on the first call for this model, then cached
    future_points = bool(flat.size) and bool(flat.min() < 0.0)
    # NaN until computed: a registered quantity that nothing fills can never return
    # uninitialised memory (tests/model check that every registered key is computed).
    out = {key: np.full(flat.size, np.nan) for key, q in QUANTITIES.items() if q.derive is None}
    for start in range(0, flat.size, _CHUNK):
        sl = slice(start, start + _CHUNK)
        _evaluate_chunk(cosmo, tab, fut, grow, flat[sl], {k: v[sl] for k, v in out.items()},
                        future_points)
    for key, q in QUANTITIES.items():
        if q.derive is not None:
            with np.errstate(all="ignore"):
                out[key] = np.broadcast_to(np.asarray(q.derive(cosmo, flat, out), dtype=float),
                                           flat.shape).copy()
    return {k: out[k].reshape(shape) for k in QUANTITIES}


# Below this redshift age and particle horizon are taken as differences from their values
# at z = ∞ (losing at most a factor 30 of relative precision); above, from the tables
# integrated downward from the top, which keep full relative precision.
_Z_FROM_TOP = 10.0


def _evaluate_chunk(cosmo, tab, fut, grow, z, out, future_points):
    d = cosmo._derived
    dh = cosmo.hubble_distance
    th = cosmo.hubble_time
    x = 1.0 + z
    u = np.log(x)
    where = tab.locate(u)
    chi = tab.interpolate("chi", where)
    tau = tab.interpolate("tau", where)
    if future_points and fut.u_turn is not None and fut.a_max > 1.0 and fut.u_turn >= U_MIN:
        # between the last trusted node and the turnaround the tables cannot follow
        # 1/E ∝ (a_max − a)^{-1/2}: integrate there directly (model._future)
        near = np.flatnonzero((u > fut.u_turn) & (u < tab.u[fut.k_good]))
        if near.size:
            chi[near], tau[near] = fut.near_turnaround(u[near])
    high = np.flatnonzero(z >= _Z_FROM_TOP)
    x2 = x * x
    x3 = x2 * x
    x4 = x2 * x2
    rad = d["omega_r"] * x4
    e2 = d["omega_cb"] * x3
    press = e2 + 2.0 * rad
    e2 += rad
    if cosmo.omega_k != 0.0:
        e2 += cosmo.omega_k * x2
    if "nu" in tab.values:
        nu_scale = d["omega_nu1"] * x4
        e2 += nu_scale * tab.interpolate("nu", where)
        press += nu_scale * tab.interpolate("nu_p", where)
    if cosmo.omega_de != 0.0:
        if cosmo.w0 == -1.0 and cosmo.wa == 0.0:
            e2 += cosmo.omega_de
            press -= 2.0 * cosmo.omega_de
        else:
            with np.errstate(over="ignore"):
                de = cosmo.omega_de * np.exp(3.0 * (1.0 + cosmo.w0 + cosmo.wa) * u
                                             - 3.0 * cosmo.wa * z / x)
            e2 += de
            press += (1.0 + 3.0 * (cosmo.w0 + cosmo.wa * z / x)) * de
    with np.errstate(invalid="ignore", divide="ignore"):
        e = np.sqrt(e2)
        inv_e = 1.0 / e
        dm = transverse(cosmo, chi)
        np.divide(1.0, x, out=out["scale_factor"])
        np.multiply(cosmo.h0, e, out=out["hubble_parameter"])
        np.multiply(dh, inv_e, out=out["hubble_distance_at_z"])
        np.multiply(dh, chi, out=out["comoving_distance"])
        dm_mpc = out["transverse_comoving_distance"]
        np.multiply(dh, dm, out=dm_mpc)
        da = out["angular_diameter_distance"]
        np.multiply(dm_mpc, out["scale_factor"], out=da)
        dl = out["luminosity_distance"]
        np.multiply(dm_mpc, x, out=dl)
        mu = out["distance_modulus"]
        np.log10(dl, out=mu)
        mu *= 5.0
        mu += 25.0
        np.multiply(th, tau, out=out["lookback_time"])
        np.subtract(th * tab.tau_infinity, out["lookback_time"], out=out["age"])
        vol = out["comoving_volume"]
        if cosmo.omega_k == 0.0:
            np.multiply(dm_mpc, dm_mpc, out=vol)
            vol *= dm_mpc
            vol *= 4.0e-9 * math.pi / 3.0
        else:
            np.multiply(4.0e-9 * math.pi * dh**3, _volume_shape(cosmo.omega_k, chi), out=vol)
        dv = out["comoving_volume_element"]
        np.multiply(dm_mpc, dm_mpc, out=dv)
        dv *= out["hubble_distance_at_z"]
        np.multiply(da, 1.0e3 * const.ARCSEC_RAD, out=out["angular_scale"])
        dvol = out["volume_averaged_distance"]
        np.multiply(dv, z, out=dvol)
        np.cbrt(dvol, out=dvol)
        ph = out["particle_horizon"]
        np.subtract(dh * tab.chi_infinity, out["comoving_distance"], out=ph)
        if high.size:
            # At high z, take age and horizon from the tables integrated from the top, which
            # keep full relative precision where the differences above would not.
            sub = tab.locate(u[high])
            out["age"][high] = th * tab.interpolate("age", sub)
            ph[high] = dh * tab.interpolate("eta", sub)
        if fut.fate == "recollapse":
            # Light sent at z travels until the crunch; the contraction mirrors the
            # expansion, so the conformal time left is 2 η_max − η(z).
            eta_max = tab.chi_infinity + fut.deta_to_end
            np.subtract(2.0 * dh * eta_max, ph, out=out["event_horizon"])
        else:
            np.add(out["comoving_distance"], dh * fut.deta_to_end, out=out["event_horizon"])
            if future_points and fut.eh_coef is not None:
                # for z < 0 the sum above cancels (D_C < 0); take the event horizon from its
                # own table, integrated inwards from a = ∞ (model._future)
                ahead = np.flatnonzero(z < 0.0)
                out["event_horizon"][ahead] = dh * hermite.evaluate(
                    fut.eh_coef, where[0][ahead], where[1][ahead])
        q = out["deceleration_parameter"]
        np.divide(press, e2, out=q)
        q *= 0.5
        d_growth, d_slope = grow.at_log(-u)  # ln a = −ln(1+z); D/D(0) and (dD/d ln a)/D(0)
        out["growth_factor"][:] = d_growth
        np.divide(d_slope, d_growth, out=out["growth_rate"])
        np.multiply(cosmo.sigma8, d_growth, out=out["sigma8_at_z"])
        np.multiply(cosmo.sigma8, d_slope, out=out["f_sigma8"])  # f σ₈ D/D(0)
        if future_points:
            past_only = ("angular_diameter_distance", "luminosity_distance", "distance_modulus",
                         "comoving_volume", "comoving_volume_element", "angular_scale",
                         "volume_averaged_distance")
            before = z < 0.0
            for key in past_only:
                out[key][before] = np.nan
        invalid = ~(e2 > 0.0) | ~np.isfinite(chi)
        if invalid.any():
            for v in out.values():
                v[invalid] = np.nan
