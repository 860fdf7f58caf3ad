"""Redshift from a measured distance, time or volume."""

import math

import numpy as np

from ._distances import Z_MAX, evaluate
from ._errors import ParameterError

__all__ = ["redshift_at", "INVERTIBLE"]

INVERTIBLE = (
    "age",
    "lookback_time",
    "comoving_distance",
    "transverse_comoving_distance",
    "luminosity_distance",
    "distance_modulus",
    "comoving_volume",
    "particle_horizon",
)
_UNITS = {"age": "Gyr", "lookback_time": "Gyr", "distance_modulus": "mag",
          "comoving_volume": "Gpc³"}


def _nodes():
    return np.minimum(np.expm1(np.linspace(0.0, math.log1p(Z_MAX), 4097)), Z_MAX)


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
    The quantity is tabulated on 4097 nodes uniform in ln(1+z), the bracketing node pair is
    found by binary search, and 60 vectorised bisection steps in ln(1+z) refine each root to
    the precision of :func:`model.evaluate`.
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
    unit = _UNITS.get(quantity, "Mpc")
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
    u_lo = np.log1p(z_nodes[k - 1])
    u_hi = np.log1p(z_nodes[k])
    for _ in range(60):
        mid = 0.5 * (u_lo + u_hi)
        above = sign * evaluate(cosmo, np.minimum(np.expm1(mid), Z_MAX))[quantity] >= target
        u_hi = np.where(above, mid, u_hi)
        u_lo = np.where(above, u_lo, mid)
    return np.expm1(0.5 * (u_lo + u_hi)).reshape(vals.shape)
