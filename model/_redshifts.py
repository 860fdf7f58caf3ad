"""The redshifts every function of the model accepts, checked once."""

import math

import numpy as np

from ._errors import ParameterError

__all__ = ["Z_MIN", "Z_MAX", "as_redshifts"]

Z_MIN = -0.99
Z_MAX = 1.0e5


def as_redshifts(z, name="z", lo=Z_MIN, hi=Z_MAX, above=False):
    """Validate redshifts: a float array, finite, lo ≤ z ≤ hi (lo < z with ``above``),
    else ParameterError naming ``name`` and the accepted range."""
    low = "<" if above else "≤"
    expected = f"{lo:g} {low} z ≤ {hi:g}" if math.isfinite(hi) else f"z {'>' if above else '≥'} {lo:g}"
    try:
        arr = np.asarray(z, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError(name, z, f"numbers {expected}", "not numbers") from None
    ok = np.isfinite(arr) & ((arr > lo) if above else (arr >= lo)) & (arr <= hi)
    if not ok.all():
        bad = arr[~ok].ravel()[0]
        raise ParameterError(name, float(bad), expected, f"{float(bad)!r} is out of range")
    return arr
