"""Redshift from a measured distance, time or volume."""

import math

import numpy as np

from ._distances import Z_MAX, evaluate
from ._quantities import QUANTITIES, invertible_quantities
from ._errors import ParameterError

__all__ = ["redshift_at", "INVERTIBLE"]

# The registry marks what can be inverted; each needs its slope in _value_and_slope.
INVERTIBLE = invertible_quantities()


_MAX_STEPS = 60


def _nodes():
    return np.minimum(np.expm1(np.linspace(0.0, math.log1p(Z_MAX), 1025)), Z_MAX)


def _value_and_slope(cosmo, quantity, z):
    """The quantity at z and its derivative with respect to u = ln(1+z)."""
    r = evaluate(cosmo, z)
    x = 1.0 + z
    d_chi = x * r["hubble_distance_at_z"]  # dD_C/du = (1+z) c/H(z)
    if quantity in ("age", "lookback_time"):
        slope = cosmo.hubble_time * cosmo.h0 / r["hubble_parameter"]
        return r[quantity], (-slope if quantity == "age" else slope)
    if quantity == "comoving_distance":
        return r[quantity], d_chi
    if quantity == "particle_horizon":
        return r[quantity], -d_chi
    dm = r["transverse_comoving_distance"]
    with np.errstate(invalid="ignore"):
        # dD_M/dD_C = cos or cosh of √|Ω_k| D_C/D_H = √(1 + Ω_k D_M²/D_H²) on the rising branch
        d_dm = d_chi * np.sqrt(np.maximum(1.0 + cosmo.omega_k * (dm / cosmo.hubble_distance) ** 2,
                                          0.0))
    if quantity == "transverse_comoving_distance":
        return dm, d_dm
    if quantity == "comoving_volume":
        return r[quantity], 4.0e-9 * math.pi * dm * dm * d_chi
    d_dl = x * (dm + d_dm)
    if quantity == "luminosity_distance":
        return r[quantity], d_dl
    return r[quantity], 5.0 / math.log(10.0) * d_dl / r["luminosity_distance"]


def redshift_at(cosmo, quantity, values):
    """The redshift at which a monotonic quantity takes the given values.

    Parameters
    ----------
    cosmo : Cosmology
    quantity : str
        One of :data:`INVERTIBLE` (keys of :func:`model.evaluate`).
    values : array_like
        Values in the quantity's unit (see :data:`model.QUANTITIES`), any shape.

    Returns
    -------
    ndarray
        Redshifts 0 ≤ z ≤ 1e5, the shape of ``values``.

    Raises
    ------
    ParameterError
        ``quantity`` if it is not invertible; ``values`` if a value is not reached between
        z = 0 and z = 1e5 (the message gives the range that is), or is not finite. In a
        closed universe D_M only increases up to z at √|Ω_k| D_C/D_H = π/2; only that
        branch is inverted.

    Notes
    -----
    The quantity is tabulated on 1025 nodes uniform in ln(1+z); linear interpolation between
    the bracketing nodes starts Newton's method in ln(1+z), with the exact derivatives
    (e.g. dD_C/d ln(1+z) = (1+z) c/H), safeguarded by bisection of a shrinking bracket;
    it stops when every step is below 1e-12 of ln(1+z) (or of 1e-3 near z = 0).
    """
    if quantity not in INVERTIBLE:
        raise ParameterError("quantity", quantity, "one of " + ", ".join(INVERTIBLE),
                             f"{quantity!r} is not an invertible quantity")
    try:
        vals = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError("values", values, "numbers", "not numbers") from None
    z_nodes = _nodes()
    f = evaluate(cosmo, z_nodes)[quantity]
    f[0] = {"distance_modulus": -np.inf}.get(quantity, f[0])
    good = np.isfinite(f) | (np.arange(f.size) == 0)
    sign = 1.0 if f[-1] > f[1] else -1.0
    g = sign * f
    # Longest monotone stretch from z = 0.
    rising = np.concatenate([[True], np.diff(g) > 0]) & good
    end = int(np.argmin(rising)) if not rising.all() else f.size
    g, z_nodes, f = g[:end], z_nodes[:end], f[:end]
    unit = QUANTITIES[quantity].unit
    lo, hi = (f[0], f[-1]) if sign > 0 else (f[-1], f[0])
    flat = vals.ravel()
    target = sign * flat
    bad = ~np.isfinite(flat) | (target < g[0]) | (target > g[-1])
    if bad.any():
        v = float(flat[bad][0])
        raise ParameterError(
            "values", v, f"{lo:.6g} ≤ {quantity} ≤ {hi:.6g} {unit} (z from 0 to {z_nodes[-1]:.6g})",
            f"{v!r} {unit} is not reached")
    k = np.clip(np.searchsorted(g, target), 1, g.size - 1)
    u_nodes = np.log1p(z_nodes)
    u_lo, u_hi = u_nodes[k - 1], u_nodes[k]
    g_lo, g_hi = g[k - 1], g[k]
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.where(np.isfinite(g_lo), (target - g_lo) / (g_hi - g_lo), 1.0)
    u = u_lo + np.clip(np.nan_to_num(frac, nan=0.5), 0.0, 1.0) * (u_hi - u_lo)
    for _ in range(_MAX_STEPS):
        val, slope = _value_and_slope(cosmo, quantity, np.minimum(np.expm1(u), Z_MAX))
        above = sign * val >= target
        u_hi = np.where(above, u, u_hi)
        u_lo = np.where(above, u_lo, u)
        with np.errstate(invalid="ignore", divide="ignore"):
            u_new = u - (sign * val - target) / (sign * slope)
        inside = np.isfinite(u_new) & (u_new > u_lo) & (u_new < u_hi)
        u_new = np.where(inside, u_new, 0.5 * (u_lo + u_hi))  # bisect where Newton leaves
        done = np.all(np.abs(u_new - u) <= 1e-12 * np.maximum(1e-3, np.abs(u)))
        u = u_new
        if done:
            break
    z = np.minimum(np.expm1(u), Z_MAX)
    z[target == g[0]] = 0.0
    return z.reshape(vals.shape)
