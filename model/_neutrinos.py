"""The Fermi–Dirac energy integral of a massive neutrino species, tabulated once.

A species of mass m whose phase-space distribution froze out while relativistic keeps a
Fermi–Dirac shape in comoving momentum. Its energy density, relative to the same species
if massless, is

    F(y) = (120 / 7 pi^4) ∫_0^∞ x^2 sqrt(x^2 + y^2) / (e^x + 1) dx,   y = m a / (k_B T_nu0),

with F(0) = 1 (e.g. Lesgourgues & Pastor 2006, Phys. Rep. 429, 307, eq. 13; Komatsu et al.
2011, ApJS 192, 18, eq. 24 write the same integral before approximating it). The model
needs F to better than 1e-7, so we tabulate the integral itself rather than a fitting
function: Gauss–Legendre quadrature in the variable t defined by x = y sinh t (which removes
the branch points at x = ±iy that slow quadrature in x for small y), on a uniform grid in
ln y, joined to the exact small-y series and the large-y asymptotic series at the ends.
"""

import functools
import math

import numpy as np

from . import _hermite as hermite

__all__ = ["fermi_dirac", "LOG_Y_MIN", "LOG_Y_MAX"]

_NORM = 120.0 / (7.0 * math.pi**4)
_ZETA3 = 1.2020569031595942854  # Riemann zeta(3)
_ZETA5 = 1.0369277551433699263  # Riemann zeta(5)
_ZETA7 = 1.0083492773819228268  # Riemann zeta(7)

# Table range in ln y; outside it the series below are exact to better than 1e-10.
LOG_Y_MIN = math.log(1.0e-3)
LOG_Y_MAX = math.log(1.0e3)
_STEP = 0.01
_X_MAX = 64.0  # e^-64 relative tail of the Fermi–Dirac factor
_NODES = 320


def _quadrature(y):
    """F(y), y F'(y) and y F'(y) + y^2 F''(y) by Gauss–Legendre in t, x = y sinh t."""
    nodes, weights = np.polynomial.legendre.leggauss(_NODES)
    y = np.asarray(y, dtype=float)[:, None]
    t_max = np.arcsinh(_X_MAX / y)
    t = 0.5 * t_max * (nodes + 1.0)
    w = 0.5 * t_max * weights
    sh, ch = np.sinh(t), np.cosh(t)
    occupation = 1.0 / (np.exp(y * sh) + 1.0)
    # dx = y cosh t dt and sqrt(x^2 + y^2) = y cosh t turn each integrand into a smooth one.
    f = np.sum(w * y**4 * sh**2 * ch**2 * occupation, axis=1)
    df = np.sum(w * y**3 * sh**2 * occupation, axis=1)  # ∫ x^2 y / sqrt(x^2+y^2) ...
    d2f = np.sum(w * y**2 * sh**4 / ch**2 * occupation, axis=1)  # ∫ x^4 / (x^2+y^2)^(3/2) ...
    yv = y[:, 0]
    return _NORM * f, _NORM * yv * df, _NORM * (yv * df + yv**2 * d2f)


@functools.cache
def _table():
    log_y = np.arange(LOG_Y_MIN, LOG_Y_MAX + 0.5 * _STEP, _STEP)
    f, g, dg = _quadrature(np.exp(log_y))
    return log_y, f, g, dg


@functools.cache
def _coefficients():
    """Hermite coefficients of F and of g = dF/d ln y on the ln y grid."""
    _, f, g, dg = _table()
    return hermite.coefficients(f, g, _STEP), hermite.coefficients(g, dg, _STEP)


def fermi_dirac(y):
    """Energy density of a massive neutrino species relative to its massless value.

    Parameters
    ----------
    y : array_like
        Mass over temperature, ``m a / (k_B T_nu0)``, dimensionless, ``y >= 0``.

    Returns
    -------
    f : ndarray
        ``F(y)``, the shape of ``y`` (0-d for a scalar), with ``F(0) = 1`` and ``F ~ 180 zeta(3) y / (7 pi^4)`` for ``y >> 1``.
    g : ndarray
        ``dF/d ln y = y F'(y)``; the species' equation of state is ``w = (1 - g/F) / 3``.
    dg : ndarray
        ``dg/d ln y``.

    Notes
    -----
    ``F(y) = (120 / 7 pi^4) ∫_0^∞ x^2 sqrt(x^2 + y^2) / (e^x + 1) dx``. Below ``y = 1e-3`` the
    series ``F = 1 + 5 y^2 / (7 pi^2)`` is used (next term O(y^4 ln y) < 1e-11); above
    ``y = 1e3`` the asymptotic series ``(120/7 pi^4) [3 zeta(3) y / 2 + 45 zeta(5) / (4 y)
    - 2835 zeta(7) / (32 y^3)]`` (next term < 1e-15 relative). In between, cubic Hermite
    interpolation of the quadrature table on a grid of 0.01 in ln y (error < 1e-10).

    References
    ----------
    Lesgourgues, J. & Pastor, S. 2006, Phys. Rep. 429, 307, eq. (13).

    Examples
    --------
    >>> f, g, dg = fermi_dirac([0.0])
    >>> float(f[0])
    1.0
    """
    y = np.asarray(y, dtype=float)
    shape = y.shape
    y = y.ravel()  # 0-d inputs too: the in-place clip below needs an array
    log_y_tab, _, _, dg_tab = _table()
    f_coef, g_coef = _coefficients()
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        log_y = np.log(y)
        s = (log_y - LOG_Y_MIN) * (1.0 / _STEP)
        np.clip(s, 0.0, len(log_y_tab) - 1.0 - 1e-9, out=s)
        i = s.astype(np.intp)
        t = s - i
        f = hermite.evaluate(f_coef, i, t)
        g = hermite.evaluate(g_coef, i, t)
        dg = np.interp(log_y, log_y_tab, dg_tab)
        small = log_y < LOG_Y_MIN
        if small.any():
            ys = y[small]
            c = 5.0 / (7.0 * math.pi**2)
            f[small] = 1.0 + c * ys**2
            g[small] = 2.0 * c * ys**2
            dg[small] = 4.0 * c * ys**2
        large = log_y > LOG_Y_MAX
        if large.any():
            yl = y[large]
            a1, a3, a5 = 1.5 * _ZETA3, 11.25 * _ZETA5, -88.59375 * _ZETA7
            f[large] = _NORM * (a1 * yl + a3 / yl + a5 / yl**3)
            g[large] = _NORM * (a1 * yl - a3 / yl - 3 * a5 / yl**3)
            dg[large] = _NORM * (a1 * yl + a3 / yl + 9 * a5 / yl**3)
    return f.reshape(shape), g.reshape(shape), dg.reshape(shape)
