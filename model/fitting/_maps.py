"""Delta-chi^2 maps of two parameters and the confidence levels their contours mark."""

import dataclasses
import math
import time

import numpy as np
from scipy import special, stats

from ._fit import FIT_PARAMETERS, FitError, _Problem
from ._likelihood import Nuisances
from ._measurements import _frozen

__all__ = ["CONFIDENCE_LEVELS_2D", "Chi2Map", "chi2_map"]

#: (probability, delta chi^2) of the joint confidence regions of two parameters for a
#: Gaussian likelihood, 68.3 % and 95.4 %: the probabilities of the Gaussian 1 and 2 sigma,
#: erf(1/sqrt 2) and erf(2/sqrt 2), and the chi^2 quantiles of two degrees of freedom at
#: them, 2.30 and 6.18 (Press et al., Numerical Recipes, 3rd ed. 2007, section 15.6).
CONFIDENCE_LEVELS_2D = tuple(
    (float(p), float(stats.chi2.ppf(p, 2))) for p in special.erf(np.array([1.0, 2.0]) / math.sqrt(2.0)))

# Grid nodes scored in one vectorised pass: large enough to amortise the set-up, small enough
# to check a deadline often (judgement, no source).
_BLOCK = 1200


@dataclasses.dataclass(frozen=True, eq=False)
class Chi2Map:
    """chi^2 on a grid of two parameters, the others held at the base model's values.

    Attributes
    ----------
    x_name, y_name : str
        The two parameters (keys of :data:`FIT_PARAMETERS`).
    x, y : ndarray
        Grid values along each axis (units of FIT_PARAMETERS).
    chi2 : ndarray, shape (len(y), len(x))
        chi^2 at each node, ``chi2[j, i]`` at ``(x[i], y[j])``, free nuisances
        minimised; NaN where the parameters give no valid model (no big bang,
        beyond a closed antipode).
    delta_chi2 : ndarray, shape (len(y), len(x))
        chi2 minus its smallest value on the grid.
    chi2_min : float
    best : dict
        ``{x_name: value, y_name: value}`` of the grid node with the smallest chi^2.
    levels : tuple of (probability, delta chi^2)
        :data:`CONFIDENCE_LEVELS_2D`, the contours to draw.
    """

    x_name: str
    y_name: str
    x: np.ndarray
    y: np.ndarray
    chi2: np.ndarray
    delta_chi2: np.ndarray
    chi2_min: float
    best: dict
    levels: tuple = CONFIDENCE_LEVELS_2D

    def __repr__(self):
        return (f"Chi2Map({self.y_name} x {self.x_name}: {self.y.size} x {self.x.size}, "
                f"chi2_min={self.chi2_min:.4g} at {self.best})")


def _axis(name, values):
    if name not in FIT_PARAMETERS:
        raise FitError(f"unknown map parameter {name!r}; expected one of {', '.join(FIT_PARAMETERS)}")
    values = np.asarray(values, dtype=float)
    if values.ndim != 1 or values.size < 2 or not np.all(np.isfinite(values)):
        raise FitError(f"{name}: expected at least two finite grid values in a 1-D array")
    _, low, high = FIT_PARAMETERS[name]
    if values.min() < low or values.max() > high:
        raise FitError(f"{name}: grid values must lie within [{low:g}, {high:g}]")
    return values


def chi2_map(cosmo, data, x_name, x_values, y_name, y_values, nuisances=Nuisances(), *, deadline=None):
    """chi^2 and delta chi^2 of a measurement set on a grid of two parameters.

    Parameters
    ----------
    cosmo : Cosmology
        Supplies every parameter not on the grid.
    data : MeasurementSet
    x_name, y_name : str
        Two different keys of :data:`FIT_PARAMETERS` (a nuisance on an axis is
        fixed to each grid value).
    x_values, y_values : array_like, 1-D
        Grid values (units of FIT_PARAMETERS).
    nuisances : Nuisances, optional
        Treatment of the nuisances not on an axis (free ones are minimised at
        every node in closed form).
    deadline : float, optional
        A ``time.monotonic()`` instant: the nodes are computed in blocks, and the map
        stops with :class:`FitError` when a block would start after it.

    Returns
    -------
    Chi2Map

    Notes
    -----
    All nodes are computed in one vectorised pass of :class:`DistanceBatch`;
    the other cosmological parameters are held fixed, not minimised over. The
    68.3 % and 95.4 % joint regions of two parameters are delta chi^2 < 2.30 and
    6.18 (:data:`CONFIDENCE_LEVELS_2D`).
    """
    if x_name == y_name:
        raise FitError(f"the two map parameters must differ, both are {x_name!r}")
    x = _axis(x_name, x_values)
    y = _axis(y_name, y_values)
    problem = _Problem(cosmo, data, nuisances)
    for name in (x_name, y_name):
        if (name == "r_d" and not problem.needs_r_d or name == "offset" and not problem.needs_offset
                or name == "sigma8" and not problem.needs_sigma8):
            raise FitError(f"no measurement depends on {name}; choose another map parameter")
    grid_x, grid_y = np.meshgrid(x, y)
    xs, ys = grid_x.ravel(), grid_y.ravel()
    chi2 = np.empty(xs.size)
    for start in range(0, xs.size, _BLOCK):
        if deadline is not None and time.monotonic() > deadline:
            raise FitError(f"stopped after {start} of {xs.size} grid nodes: the time budget ran out; "
                           "use a smaller grid or a smaller table")
        part = slice(start, start + _BLOCK)
        chi2[part] = problem.score({x_name: xs[part], y_name: ys[part]})["chi2"]
    chi2 = chi2.reshape(grid_x.shape)
    if not np.isfinite(chi2).any():
        raise FitError("no node of the grid gives a valid model for these data")
    j, i = np.unravel_index(np.nanargmin(chi2), chi2.shape)
    chi2_min = float(chi2[j, i])
    return Chi2Map(x_name=x_name, y_name=y_name, x=_frozen(x), y=_frozen(y),
                   chi2=_frozen(chi2), delta_chi2=_frozen(chi2 - chi2_min), chi2_min=chi2_min,
                   best={x_name: float(x[i]), y_name: float(y[j])})
