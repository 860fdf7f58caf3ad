"""Redshift from a measured distance, time or volume."""

import math

import numpy as np
from scipy import optimize

from ._distances import Z_MAX, evaluate
from ._quantities import QUANTITIES, invertible_quantities
from ._errors import ParameterError

__all__ = ["redshift_at", "INVERTIBLE"]

# What can be inverted: the registered quantities with a slope (model._quantities).
INVERTIBLE = invertible_quantities()


_MAX_STEPS = 60


def _nodes():
    return np.minimum(np.expm1(np.linspace(0.0, math.log1p(Z_MAX), 1025)), Z_MAX)


def _value_and_slope(cosmo, quantity, z):
    """The quantity at z and its derivative with respect to u = ln(1+z) (the registry's slope)."""
    r = evaluate(cosmo, z)
    return r[quantity], QUANTITIES[quantity].slope(cosmo, r, 1.0 + z)


def _at(cosmo, quantity, u):
    val, slope = _value_and_slope(cosmo, quantity, np.array([min(math.expm1(u), Z_MAX)]))
    return float(val[0]), float(slope[0])


def _first_branch(cosmo, quantity, sign, u_nodes, g):
    """The monotonic stretch of g = sign × quantity from z = 0 (nodes, values), ended at the
    exact turning point (root of the slope, Brent) or at the exact edge of where the
    quantity is defined (bisection), and why it ends: "top", "turn" or "edge"."""
    good = np.isfinite(g[1:]) & (np.diff(g) > 0.0)
    if good.all():
        return u_nodes, g, "top"
    end = int(np.argmin(good)) + 1  # first node off the branch
    u_b, g_b = u_nodes[:end], g[:end]
    if np.isfinite(g[end]):
        # a turning point between nodes end − 2 and end
        lo, hi = u_nodes[end - 2] if end >= 2 else u_nodes[0], u_nodes[end]
        mid = u_nodes[end - 1]
        if sign * _at(cosmo, quantity, mid)[1] > 0.0:
            lo = mid
        slope = lambda v: sign * _at(cosmo, quantity, v)[1]
        try:
            u_x = optimize.brentq(slope, lo, hi, xtol=1e-14, rtol=1e-15)
        except ValueError:
            u_x = mid
        g_x = sign * _at(cosmo, quantity, u_x)[0]
        keep = u_b < u_x
        return np.append(u_b[keep], u_x), np.append(g_b[keep], g_x), "turn"
    # undefined beyond (a closed universe's antipode): bisect to the edge
    lo, hi = u_nodes[end - 1], u_nodes[end]
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if np.isfinite(_at(cosmo, quantity, mid)[0]):
            lo = mid
        else:
            hi = mid
    g_e = sign * _at(cosmo, quantity, lo)[0]
    if lo > u_b[-1] and g_e > g_b[-1]:
        return np.append(u_b, lo), np.append(g_b, g_e), "edge"
    return u_b, g_b, "edge"


def redshift_at(cosmo, quantity, values):
    """The redshift at which a quantity takes the given values.

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
        Redshifts 0 ≤ z ≤ 1e5, the shape of ``values``: on the branch that starts at z = 0,
        i.e. the lowest z at which the quantity takes the value.

    Raises
    ------
    ParameterError
        ``quantity`` if it is not invertible; ``values`` if a value is not finite or not
        reached on that branch: the message gives the range that is, with the redshift
        where it ends. A quantity that turns over (in a closed universe D_M peaks at the
        equator, √|Ω_k| D_C/D_H = π/2, and D_L, μ peak later, where D_M + dD_M/d ln(1+z)
        = 0) is inverted up to its maximum, and the message names that maximum and its z;
        one that stops being defined (D_M, V_C at a closed universe's antipode) up to
        there.

    Notes
    -----
    The quantity is tabulated on 1025 nodes uniform in ln(1+z); the branch from z = 0 is
    its monotonic stretch, in the direction of its first step, ended at the exact turning
    point (Brent's method on the exact slope) or edge (bisection). Linear interpolation
    between the bracketing nodes starts Newton's method in ln(1+z), with the exact
    derivatives (e.g. dD_C/d ln(1+z) = (1+z) c/H, dD_M/dD_C = cos(√|Ω_k| D_C/D_H) when
    closed, negative past the equator), safeguarded by bisection of a shrinking bracket;
    it stops when every step is below 1e-12 of ln(1+z) (or of 1e-3 near z = 0).
    """
    if quantity not in INVERTIBLE:
        raise ParameterError("quantity", quantity, "one of " + ", ".join(INVERTIBLE),
                             f"{quantity!r} is not an invertible quantity")
    try:
        vals = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError("values", values, "numbers", "not numbers") from None
    z_all = _nodes()
    f = evaluate(cosmo, z_all)[quantity]
    f[0] = {"distance_modulus": -np.inf}.get(quantity, f[0])
    sign = 1.0 if f[1] > f[0] else -1.0
    u_all = np.log1p(z_all)
    u_nodes, g, why = _first_branch(cosmo, quantity, sign, u_all, sign * f)
    z_nodes = np.minimum(np.expm1(u_nodes), Z_MAX)
    unit = QUANTITIES[quantity].unit
    lo, hi = (g[0], g[-1]) if sign > 0 else (-g[-1], -g[0])
    flat = vals.ravel()
    target = sign * flat
    bad = ~np.isfinite(flat) | (target < g[0]) | (target > g[-1])
    if bad.any():
        v = float(flat[bad][0])
        ends = {"top": f"z from 0 to {z_nodes[-1]:.6g}",
                "turn": f"its {'maximum' if sign > 0 else 'minimum'} {sign * g[-1]:.6g} {unit} "
                        f"is at z = {z_nodes[-1]:.6g}; the branch from z = 0 is inverted",
                "edge": f"defined from z = 0 to z = {z_nodes[-1]:.6g}"}[why]
        raise ParameterError(
            "values", v, f"{lo:.6g} ≤ {quantity} ≤ {hi:.6g} {unit} ({ends})",
            f"{v!r} {unit} is not reached")
    k = np.clip(np.searchsorted(g, target), 1, g.size - 1)
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
