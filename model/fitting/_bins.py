"""Residuals averaged in redshift bins: the inverse-variance weighted mean per bin."""

import numpy as np

__all__ = ["BinnedResiduals", "binned_residuals"]


class BinnedResiduals:
    """Weighted mean residual per redshift bin (the result of :func:`binned_residuals`).

    Attributes (arrays of shape (B,), B = number of bins that hold at least one point, in
    increasing z): ``low``, ``high`` (the bin's edges), ``mean`` (weighted mean residual, the
    residuals' unit), ``error`` (its 1-sigma error, same unit), ``count`` (points in the bin);
    ``empty``: tuple of ``(low, high)`` edges of the bins that held no point (skipped).
    """

    __slots__ = ("low", "high", "mean", "error", "count", "empty")

    def __init__(self, low, high, mean, error, count, empty):
        self.low, self.high, self.mean, self.error, self.count = low, high, mean, error, count
        self.empty = empty

    def __len__(self):
        return len(self.mean)

    def __repr__(self):
        return f"BinnedResiduals({len(self)} bins, {len(self.empty)} empty)"


def binned_residuals(z, residual, error, edges):
    """Inverse-variance weighted mean of the residuals in each redshift bin.

    Parameters
    ----------
    z : array_like, shape (N,)
        Redshift of each point (dimensionless).
    residual : array_like, shape (N,)
        Data minus model at each point, in the measurement's unit.
    error : array_like, shape (N,)
        1-sigma error of each point, same unit, > 0. Only the diagonal errors are used:
        correlations between points (a covariance file, correlated pairs) are ignored here.
    edges : array_like, shape (B + 1,)
        Increasing bin edges in z. A point belongs to bin i when ``edges[i] <= z < edges[i+1]``;
        the last bin also holds ``z == edges[-1]``. Points outside all bins are not counted.

    Returns
    -------
    BinnedResiduals
        Per non-empty bin: edges, weighted mean, its error and the number of points (same unit
        as `residual`); the edges of empty bins in ``empty``.

    Notes
    -----
    With weights w_j = 1 / sigma_j^2 the weighted mean and its error are

        mean = sum_j w_j r_j / sum_j w_j,    sigma_mean = 1 / sqrt(sum_j w_j)

    (Bevington & Robinson 2003, eqs. 4.17 and 4.19; Taylor 1997, eqs. 7.10 and 7.12; the
    equation numbers are quoted from memory, the formulas are the standard ones).

    References
    ----------
    P. R. Bevington and D. K. Robinson, "Data Reduction and Error Analysis for the Physical
    Sciences", 3rd ed., McGraw-Hill (2003), section 4.1.
    J. R. Taylor, "An Introduction to Error Analysis", 2nd ed., University Science Books
    (1997), chapter 7.

    Examples
    --------
    Two points of equal error average to their mean, with the error shrunk by sqrt(2):

    >>> b = binned_residuals([0.1, 0.2], [1.0, 3.0], [2.0, 2.0], [0.0, 1.0])
    >>> float(b.mean[0]), round(float(b.error[0]), 6), round(2.0 / 2 ** 0.5, 6)
    (2.0, 1.414214, 1.414214)
    """
    z = np.asarray(z, dtype=float)
    residual = np.asarray(residual, dtype=float)
    error = np.asarray(error, dtype=float)
    edges = np.asarray(edges, dtype=float)
    if z.shape != residual.shape or z.shape != error.shape or z.ndim != 1:
        raise ValueError("z, residual, error: expected three one-dimensional arrays of the same length")
    if edges.ndim != 1 or edges.size < 2 or not np.all(np.diff(edges) > 0):
        raise ValueError("edges: expected at least two strictly increasing redshifts")
    if np.any(~(error > 0)):
        raise ValueError("error: every error must be a positive number")
    n_bins = edges.size - 1
    index = np.searchsorted(edges, z, side="right") - 1
    index[z == edges[-1]] = n_bins - 1  # the last bin is closed on the right
    inside = (index >= 0) & (index < n_bins) & np.isfinite(residual)
    weight = 1.0 / error[inside] ** 2
    sum_w = np.bincount(index[inside], weights=weight, minlength=n_bins)
    sum_wr = np.bincount(index[inside], weights=weight * residual[inside], minlength=n_bins)
    count = np.bincount(index[inside], minlength=n_bins)
    full = count > 0
    with np.errstate(divide="ignore", invalid="ignore"):
        mean, sigma = sum_wr / sum_w, 1.0 / np.sqrt(sum_w)
    empty = tuple((float(lo), float(hi)) for lo, hi, c in zip(edges[:-1], edges[1:], count) if c == 0)
    return BinnedResiduals(edges[:-1][full], edges[1:][full], mean[full], sigma[full], count[full], empty)
