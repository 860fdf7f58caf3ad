"""The far future of a model: eternal expansion, recollapse or a big rip.

Cosmic time and conformal time beyond the integration grid (a > 110) and up to a
turnaround are computed here with adaptive quadrature (QUADPACK via scipy.integrate.quad),
once per cosmology.
"""

import math

import numpy as np
from scipy import integrate, optimize

from ._background import hubble_squared_x
from ._tables import U_MIN, per_model, tables

__all__ = ["future", "scalar_e2"]

_A_FAR = 1.0e12
def scalar_e2(cosmo):
    """E²(a) of one scale factor, for Brent's method and QUADPACK (same physics as everywhere:
    :func:`model._background.hubble_squared_x`)."""

    def e2(a):
        with np.errstate(all="ignore"):
            return float(hubble_squared_x(cosmo, np.array([1.0 / a]))[0])

    return e2


class _Future:
    """Fate, turnaround and the integrals from today to the end of time (units 1/H₀, c/H₀)."""

    def __init__(self, cosmo):
        self.fate = "eternal expansion"
        self.a_max = None
        self.dtau_to_end = None  # cosmic time from today to the turnaround / rip
        self.deta_to_end = None  # conformal time from today to the turnaround, or to a = ∞
        e2 = scalar_e2(cosmo)
        tab = tables(cosmo)
        a_edge = math.exp(-U_MIN)
        a = np.concatenate([np.exp(-tab.u[tab.u <= 0.0][::-1]),
                            np.geomspace(a_edge, _A_FAR, 601)[1:]])
        with np.errstate(all="ignore"):
            e2v = np.concatenate([tab.e2[tab.u <= 0.0][::-1],
                                  hubble_squared_x(cosmo, 1.0 / a[a > a_edge])])
        bad = ~(e2v > 0.0)
        opts = dict(limit=200, epsabs=0.0, epsrel=1e-11)
        if bad.any():
            k = int(np.argmax(bad))
            if k == 0:
                self.a_max = 1.0
            else:
                self.a_max = optimize.brentq(e2, a[k - 1], a[k], xtol=1e-15, rtol=1e-15)
            self.fate = "recollapse"
            am = self.a_max
            if am > 1.0:
                # ∫ da / (a^p E) up to the turnaround, where E ∝ sqrt(a_max − a): with
                # a = a_max − s² the integrand 2 s / (a^p E) is regular at s = 0.
                def g(s_, p):
                    a_ = am - s_ * s_
                    v = e2(a_)
                    return 2.0 * s_ / (a_**p * math.sqrt(v)) if v > 0 else 0.0

                top = math.sqrt(am - 1.0)
                self.dtau_to_end = integrate.quad(g, 0.0, top, args=(1,), **opts)[0]
                self.deta_to_end = integrate.quad(g, 0.0, top, args=(2,), **opts)[0]
            else:
                self.dtau_to_end = self.deta_to_end = 0.0
            return
        phantom_end = cosmo.omega_de > 0.0 and (cosmo.wa > 0.0
                                                 or (cosmo.wa == 0.0 and cosmo.w0 < -1.0))
        accelerating_end = cosmo.omega_de > 0.0 and (
            cosmo.wa > 0.0 or (cosmo.wa == 0.0 and cosmo.w0 < -1.0 / 3.0))

        if accelerating_end or phantom_end:
            dtau, deta = _to_infinity(cosmo)
            dtau -= tab.values["tau"][0]  # the grid's share, from today to a = e^{-U_MIN}
            deta -= tab.values["chi"][0]
            self.deta_to_end = deta if accelerating_end else math.inf
            if phantom_end:
                self.fate = "big rip"
                self.dtau_to_end = dtau
        else:
            self.deta_to_end = math.inf


_V_END = 50.0
_V_STEP = 1.0 / 8.0
_GL_X, _GL_W = np.polynomial.legendre.leggauss(6)


def _to_infinity(cosmo):
    """∫ da/(a E) and ∫ da/(a² E) from the grid's edge a = e^{-U_MIN} to a = ∞.

    Composite 6-point Gauss–Legendre in v = ln a up to v = 50, then the tail of the local
    power law E ∝ a^s beyond (by then the slowest-falling component dominates alone).
    """
    v0 = -U_MIN
    n_int = int(math.ceil((_V_END - v0) / _V_STEP))
    step = (_V_END - v0) / n_int
    mid = v0 + step * (np.arange(n_int) + 0.5)
    v = (mid[:, None] + 0.5 * step * _GL_X[None, :]).ravel()
    w = np.tile(0.5 * step * _GL_W, n_int)
    n = v.size
    v_all = np.concatenate([v, [_V_END - 1e-3, _V_END]])
    with np.errstate(all="ignore"):
        e2 = hubble_squared_x(cosmo, np.exp(-v_all))
        e = np.sqrt(np.where(e2 > 0.0, e2, np.nan))
        inv_e = np.where(np.isfinite(e), 1.0 / e, 0.0)
    dtau = float(np.sum(w * inv_e[:n]))
    deta = float(np.sum(w * np.exp(-v) * inv_e[:n]))
    e_a, e_b = e[n], e[n + 1]
    if np.isfinite(e_a) and np.isfinite(e_b) and e_b > 0:
        slope = (math.log(e_b) - math.log(e_a)) / 1e-3  # d ln E / d ln a
        # Beyond v_end, E = E_b e^{slope (v - v_end)}: ∫ dv/E converges for slope > 0 (a
        # phantom), ∫ e^{-v} dv/E for slope > -1 (acceleration).
        dtau = dtau + 1.0 / (slope * e_b) if slope > 0 else math.inf
        deta = deta + math.exp(-_V_END) / ((1.0 + slope) * e_b) if slope > -1 else math.inf
    return dtau, deta


future = per_model(_Future)
future.__doc__ = "The far-future summary of a cosmology, cached by its physics."
