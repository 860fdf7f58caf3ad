"""Cubic Hermite interpolation on a uniform grid, with the slopes given.

On each interval [x_i, x_i + h] the interpolant is c0 + c1 t + c2 t² + c3 t³ with
t = (x − x_i)/h, matching values and slopes at both ends (e.g. Press et al. 2007, Numerical
Recipes, 3rd ed., §3.5); its error is h⁴ max|f''''| / 384.
"""

import numpy as np

__all__ = ["coefficients", "evaluate"]


def coefficients(values, slopes, step):
    """The four coefficient arrays (length n − 1) from values and slopes at n nodes.

    An interval whose two values are the same infinity stays that infinity (an age without a
    big bang), instead of the NaN of inf − inf.
    """
    f0, f1 = values[:-1], values[1:]
    d0, d1 = step * slopes[:-1], step * slopes[1:]
    with np.errstate(invalid="ignore"):
        c2 = 3.0 * (f1 - f0) - 2.0 * d0 - d1
        c3 = 2.0 * (f0 - f1) + d0 + d1
    endless = np.isinf(f0) & np.isinf(f1) & (np.sign(f0) == np.sign(f1))
    if endless.any():
        d0, c2, c3 = (np.where(endless, 0.0, c) for c in (d0, c2, c3))
    return tuple(np.ascontiguousarray(c) for c in (f0, d0, c2, c3))


def evaluate(coef, i, t):
    """The interpolant in interval ``i`` at position ``t`` ∈ [0, 1] (arrays), by Horner."""
    c0, c1, c2, c3 = coef
    out = np.take(c3, i)
    out *= t
    out += np.take(c2, i)
    out *= t
    out += np.take(c1, i)
    out *= t
    out += np.take(c0, i)
    return out
