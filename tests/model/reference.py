"""Independent arbitrary-precision reference for the model tests.

Everything here is written from the physics conventions (../shared/CONVENTIONS.md) and the
published formulas named beside each function, with mpmath at 30 significant digits. It does not
import or copy anything from ``model``; the tests compare the two.

Units (CONVENTIONS.md):
    1 au = 149 597 870 700 m exactly (IAU 2012 Resolution B2),
    1 pc = 648000/pi au (IAU 2015 Resolution B2), 1 Mpc = 1e6 pc,
    c = 299 792 458 m/s exactly (SI), Julian year = 365.25 d of 86 400 s,
    G, hbar, k_B, eV from scipy.constants (CODATA).

Integrals are done in the scale factor a: D_C = D_H int_a^1 da / (a^2 E), t = t_H int da / (a E)
(Hogg 1999, astro-ph/9905116, sections 5 and 8), by tanh-sinh quadrature (mpmath.quad) on short
sub-intervals in ln a, so each piece is smooth on its interval.
"""

from __future__ import annotations

import dataclasses
import functools

import mpmath as mp
from scipy import constants as sc

mp.mp.dps = 30

# --------------------------------------------------------------------------- constants
AU_M = mp.mpf(149597870700)                 # m, exact (IAU 2012 Resolution B2)
PC_M = 648000 / mp.pi * AU_M                # m (IAU 2015 Resolution B2)
MPC_M = PC_M * 10**6                        # m
C_M_S = mp.mpf(299792458)                   # m/s, exact (SI)
C_KM_S = C_M_S / 1000                       # km/s
GYR_S = mp.mpf(365.25) * 86400 * 10**9      # s, Julian gigayear
G_SI = mp.mpf(sc.G)                         # m^3 kg^-1 s^-2 (CODATA via scipy)
HBAR_SI = mp.mpf(sc.hbar)                   # J s (CODATA via scipy)
KB_SI = mp.mpf(sc.k)                        # J/K (CODATA via scipy)
EV_J = mp.mpf(sc.electron_volt)             # J (CODATA via scipy)
KB_EV = KB_SI / EV_J                        # eV/K

# 7/8 (4/11)^(4/3): massless neutrino density per species over photons (CONVENTIONS.md)
NU_PER_SPECIES = mp.mpf(7) / 8 * mp.power(mp.mpf(4) / 11, mp.mpf(4) / 3)
ARCSEC_RAD = mp.pi / 648000


def photon_mass_density(t_cmb):
    """rho_gamma = (pi^2/15) (k_B T)^4 / (hbar^3 c^5), kg m^-3 (CONVENTIONS.md)."""
    t = mp.mpf(t_cmb)
    return mp.pi**2 / 15 * (KB_SI * t) ** 4 / (HBAR_SI**3 * C_M_S**5)


def critical_density(h0):
    """rho_crit = 3 H^2 / (8 pi G), kg m^-3, H in s^-1 from km/s/Mpc."""
    h_si = mp.mpf(h0) * 1000 / MPC_M
    return 3 * h_si**2 / (8 * mp.pi * G_SI)


# ----------------------------------------------------- Fermi-Dirac energy and pressure integrals
# F(y) = int x^2 sqrt(x^2+y^2) f(x) dx / int x^3 f(x) dx,   f = 1/(e^x + 1)      (energy)
# P(y) = int x^4 / sqrt(x^2+y^2) f(x) dx / int x^3 f(x) dx                    (3 x pressure)
# so that rho_nu = rho_massless F(y), p_nu = rho_massless P(y)/3, F(0) = P(0) = 1, and
# y F'(y) = F - P (energy conservation; checked in the self-tests).
# int_0^inf x^(s-1)/(e^x+1) dx = (1 - 2^(1-s)) Gamma(s) zeta(s)   (standard Fermi-Dirac integral).


def _fd_moment(s):
    s = mp.mpf(s)
    return (1 - mp.power(2, 1 - s)) * mp.gamma(s) * mp.zeta(s)


_FD_NORM = _fd_moment(4)                    # = 7 pi^4 / 120


def _fd_breakpoints(y):
    pts = {mp.mpf(0), mp.mpf(4), mp.mpf(20)}
    if y < 20:
        pts.add(y)
    return sorted(pts) + [mp.inf]


def fd_energy_direct(y):
    """F(y) by direct tanh-sinh quadrature (slow; used to build the table and to check it)."""
    y = mp.mpf(y)
    val = mp.quad(lambda x: x * x * mp.sqrt(x * x + y * y) / (mp.exp(x) + 1), _fd_breakpoints(y))
    return val / _FD_NORM


def fd_pressure_direct(y):
    """P(y) (three times the pressure in units of the massless density), direct quadrature."""
    y = mp.mpf(y)
    val = mp.quad(lambda x: x**4 / mp.sqrt(x * x + y * y) / (mp.exp(x) + 1), _fd_breakpoints(y))
    return val / _FD_NORM


_Y_SMALL = mp.mpf("1e-3")
_Y_LARGE = mp.mpf("1e3")
_SEG_WIDTH = mp.mpf("1.5")                  # in u = ln y; F is analytic for |Im u| < pi/2
_N_CHEB = 16                                # measured interpolation error ~ 3e-14
_TABLE_DPS = 20                             # the table needs ~1e-14, not 30 digits


class _ChebTable:
    """Piecewise Chebyshev interpolant of ln g(e^u) on [ln 1e-4, ln 1e4]."""

    def __init__(self, func):
        with mp.workdps(_TABLE_DPS):
            self._build(func)

    def _build(self, func):
        u0, u1 = mp.log(_Y_SMALL), mp.log(_Y_LARGE)
        nseg = int(mp.ceil((u1 - u0) / _SEG_WIDTH))
        self.u0 = u0
        self.width = (u1 - u0) / nseg
        self.nseg = nseg
        n = _N_CHEB
        nodes = [mp.cos(mp.pi * (j + mp.mpf(1) / 2) / n) for j in range(n)]
        self.coeffs = []
        for s in range(nseg):
            lo = u0 + s * self.width
            mid, half = lo + self.width / 2, self.width / 2
            vals = [mp.log(func(mp.exp(mid + half * t))) for t in nodes]
            c = []
            for k in range(n):
                acc = mp.fsum(vals[j] * mp.cos(mp.pi * k * (j + mp.mpf(1) / 2) / n) for j in range(n))
                c.append(2 * acc / n)
            self.coeffs.append([+ck for ck in c])

    def __call__(self, y):
        u = mp.log(y)
        s = int(mp.floor((u - self.u0) / self.width))
        s = min(max(s, 0), self.nseg - 1)
        lo = self.u0 + s * self.width
        t = 2 * (u - lo) / self.width - 1
        c = self.coeffs[s]
        b1 = b2 = mp.mpf(0)
        for ck in reversed(c[1:]):
            b1, b2 = 2 * t * b1 - b2 + ck, b1
        return mp.exp(t * b1 - b2 + c[0] / 2)


@functools.lru_cache(maxsize=None)
def _tables():
    return _ChebTable(fd_energy_direct), _ChebTable(fd_pressure_direct)


def fd_energy(y):
    """F(y), normalised F(0) = 1; series below 1e-3, asymptotic series above 1e3, else table."""
    y = mp.mpf(y)
    if y < _Y_SMALL:
        # F = 1 + 5 y^2 / (7 pi^2) + O(y^4 ln y)   (expand sqrt(x^2+y^2) in y)
        return 1 + 5 * y * y / (7 * mp.pi**2)
    if y > _Y_LARGE:
        # y sqrt(1+t), t = x^2/y^2: 1 + t/2 - t^2/8 + t^3/16 - 5 t^4/128 + ...
        m = _fd_moment
        return (y * m(3) + m(5) / (2 * y) - m(7) / (8 * y**3) + m(9) / (16 * y**5)
                - 5 * m(11) / (128 * y**7)) / _FD_NORM
    return _tables()[0](y)


def fd_pressure(y):
    """P(y) = 3 p / rho_massless, normalised P(0) = 1."""
    y = mp.mpf(y)
    if y < _Y_SMALL:
        return 1 - 5 * y * y / (7 * mp.pi**2)
    if y > _Y_LARGE:
        # (x^4/y) (1+t)^(-1/2) = (x^4/y) (1 - t/2 + 3t^2/8 - 5t^3/16 + 35t^4/128 - ...)
        m = _fd_moment
        return (m(5) / y - m(7) / (2 * y**3) + 3 * m(9) / (8 * y**5) - 5 * m(11) / (16 * y**7)
                + 35 * m(13) / (128 * y**9)) / _FD_NORM
    return _tables()[1](y)


# --------------------------------------------------------------------------- the cosmology
@dataclasses.dataclass(frozen=True)
class RefCosmology:
    """Inputs as in the model contract (h0 km/s/Mpc, Omegas today, T_CMB K, masses eV)."""

    h0: float
    omega_m: float
    omega_b: float | None = None
    omega_k: float = 0.0
    w0: float = -1.0
    wa: float = 0.0
    t_cmb: float = 2.7255
    n_eff: float = 3.044
    m_nu: tuple = (0.06,)
    omega_de_input: float | None = None   # when given, Omega_k is derived from it

    @classmethod
    def from_dark_energy(cls, omega_de, **kw):
        return cls(omega_de_input=omega_de, **kw)

    # ---- derived (mpf)
    @functools.cached_property
    def h(self):
        return mp.mpf(self.h0) / 100

    @functools.cached_property
    def hubble_distance(self):          # Mpc
        return C_KM_S / mp.mpf(self.h0)

    @functools.cached_property
    def hubble_time(self):              # Gyr
        return MPC_M / (mp.mpf(self.h0) * 1000) / GYR_S

    @functools.cached_property
    def omega_gamma(self):
        return photon_mass_density(self.t_cmb) / critical_density(self.h0)

    @functools.cached_property
    def _radiation_on(self):
        return self.t_cmb > 0

    @functools.cached_property
    def omega_nu_one(self):
        """Density today of one massless neutrino species (N_eff/3 of 7/8 (4/11)^(4/3))."""
        if not self._radiation_on:
            return mp.mpf(0)
        return mp.mpf(self.n_eff) / 3 * NU_PER_SPECIES * self.omega_gamma

    @functools.cached_property
    def masses(self):
        """Masses [eV] of the massive species (zeros and missing entries are massless)."""
        if not self._radiation_on:
            return ()
        return tuple(mp.mpf(m) for m in self.m_nu if m > 0)

    @functools.cached_property
    def n_massless(self):
        return 3 - len(self.masses) if self._radiation_on else 0

    @functools.cached_property
    def t_nu0(self):
        return mp.cbrt(mp.mpf(4) / 11) * mp.mpf(self.t_cmb)

    @functools.cached_property
    def y0(self):
        """m / (k_B T_nu0) for each massive species."""
        return tuple(m / (KB_EV * self.t_nu0) for m in self.masses)

    @functools.cached_property
    def _y0_groups(self):
        """Equal masses share one F evaluation."""
        groups = {}
        for y in self.y0:
            groups[y] = groups.get(y, 0) + 1
        return tuple(groups.items())

    @functools.cached_property
    def omega_nu_massless(self):
        return self.n_massless * self.omega_nu_one

    @functools.cached_property
    def omega_nu(self):
        """Massive species today (their whole density, F(y0) times the massless value)."""
        return mp.fsum(self.omega_nu_one * fd_energy(y) for y in self.y0)

    @functools.cached_property
    def omega_r(self):
        return self.omega_gamma + self.omega_nu_massless

    @functools.cached_property
    def omega_r_all_relativistic(self):
        """Photons plus every neutrino counted relativistic (Planck's z_eq convention)."""
        return self.omega_gamma + 3 * self.omega_nu_one

    @functools.cached_property
    def omega_cb(self):
        return mp.mpf(self.omega_m) - self.omega_nu

    @functools.cached_property
    def omega_baryon(self):
        if self.omega_b is None:
            return mp.mpf("0.157") * self.omega_cb   # contract default (cosmic baryon fraction)
        return mp.mpf(self.omega_b)

    @functools.cached_property
    def omega_curv(self):
        if self.omega_de_input is not None:
            return 1 - mp.mpf(self.omega_m) - mp.mpf(self.omega_de_input) - self.omega_r
        return mp.mpf(self.omega_k)

    @functools.cached_property
    def omega_de(self):
        """Closes the budget (CONVENTIONS.md)."""
        return 1 - mp.mpf(self.omega_m) - self.omega_curv - self.omega_r

    # ---- background
    def de_factor(self, a):
        """rho_de(a)/rho_de(1) for CPL (Chevallier & Polarski 2001; Linder 2003)."""
        w0, wa = mp.mpf(self.w0), mp.mpf(self.wa)
        if w0 == -1 and wa == 0:
            return mp.mpf(1)
        arg = -3 * wa * (1 - a)
        # far-future tails of the event-horizon integral: exp of ~1e30 would stall mpmath, and
        # the integrand there is exp(-1e6) or smaller anyway
        if arg > 10**6:
            return mp.inf
        if arg < -(10**6):
            return mp.mpf(0)
        return mp.power(a, -3 * (1 + w0 + wa)) * mp.exp(arg)

    def w_de(self, a):
        return mp.mpf(self.w0) + mp.mpf(self.wa) * (1 - a)

    def components(self, a):
        """Omega_i today times f_i(a): the terms of E^2(a) (CONVENTIONS.md)."""
        a = mp.mpf(a)
        a2 = a * a
        a4 = a2 * a2
        nu = self.omega_nu_massless / a4
        for y in self.y0:
            nu += self.omega_nu_one * fd_energy(y * a) / a4
        return {
            "photons": self.omega_gamma / a4,
            "neutrinos": nu,
            "baryons": self.omega_baryon / (a2 * a),
            "cold_dark_matter": (self.omega_cb - self.omega_baryon) / (a2 * a),
            "dark_energy": self.omega_de * self.de_factor(a),
            "curvature": self.omega_curv / a2,
        }

    def a4e2(self, a):
        """a^4 E^2(a): the same sum as components(), regular at a = 0."""
        a = mp.mpf(a)
        a2 = a * a
        s = self.omega_r + self.omega_cb * a + self.omega_curv * a2
        for y, count in self._y0_groups:
            s += count * self.omega_nu_one * (fd_energy(y * a) if a else 1)
        if self.omega_de:
            s += self.omega_de * self.de_factor(a) * a2 * a2
        return s

    def e2(self, a):
        a = mp.mpf(a)
        return self.a4e2(a) / a**4

    def e(self, a):
        return mp.sqrt(self.e2(a))

    def w_neutrinos(self, a):
        """p/rho of all neutrinos together."""
        a = mp.mpf(a)
        rho = self.omega_nu_massless
        p3 = self.omega_nu_massless
        for y in self.y0:
            rho += self.omega_nu_one * fd_energy(y * a)
            p3 += self.omega_nu_one * fd_pressure(y * a)
        return p3 / (3 * rho) if rho else mp.mpf(1) / 3

    def eos(self, a):
        """w_i of each component at a (curvature: -1/3)."""
        return {
            "photons": mp.mpf(1) / 3,
            "neutrinos": self.w_neutrinos(a),
            "baryons": mp.mpf(0),
            "cold_dark_matter": mp.mpf(0),
            "dark_energy": self.w_de(a),
            "curvature": -mp.mpf(1) / 3,
        }

    def density_parameters(self, z):
        a = 1 / (1 + mp.mpf(z))
        comp = self.components(a)
        tot = mp.fsum(comp.values())
        return {k: v / tot for k, v in comp.items()}

    def densities(self, z):
        """kg m^-3, and the critical density at z."""
        a = 1 / (1 + mp.mpf(z))
        rc0 = critical_density(self.h0)
        comp = self.components(a)
        out = {k: v * rc0 for k, v in comp.items() if k != "curvature"}
        out["critical"] = rc0 * mp.fsum(comp.values())
        return out

    def deceleration(self, a):
        """q = (1/2) sum Omega_i(a) (1 + 3 w_i)  (Friedmann acceleration equation)."""
        comp = self.components(a)
        w = self.eos(a)
        tot = mp.fsum(comp.values())
        return mp.fsum(comp[k] * (1 + 3 * w[k]) for k in comp) / (2 * tot)

    def deceleration_numeric(self, a):
        """q = -1 - d ln E / d ln a by numerical differentiation (cross-check of the above)."""
        return -1 - mp.diff(lambda x: mp.log(self.e2(mp.exp(x))) / 2, mp.log(a))

    def w_effective(self, a):
        """Total p/rho of all matter and energy (curvature excluded)."""
        comp = self.components(a)
        w = self.eos(a)
        keys = [k for k in comp if k != "curvature"]
        return mp.fsum(comp[k] * w[k] for k in keys) / mp.fsum(comp[k] for k in keys)

    def sound_speed_factor(self, a):
        """c_s / c = 1/sqrt(3 (1 + R)), R = 3 rho_b / (4 rho_gamma) (CONVENTIONS.md)."""
        r = 3 * self.omega_baryon * a / (4 * self.omega_gamma)
        return 1 / mp.sqrt(3 * (1 + r))

    # ---- integration helpers
    def _integral(self, g, a_lo, a_hi):
        """int_{a_lo}^{a_hi} g(a) da for 0 <= a_lo < a_hi <= inf.

        Below a = 1e-5 in a itself (the integrands are regular or have an integrable power-law
        end point at a = 0, which tanh-sinh handles); above it in x = ln a on pieces at most
        2.5 long, so each piece is smooth (measured: 1e-26 against the flat matter+Lambda age).
        """
        a_lo, a_hi = mp.mpf(a_lo), mp.mpf(a_hi)
        if a_hi <= a_lo:
            return mp.mpf(0)
        total = mp.mpf(0)
        a_small = mp.mpf("1e-5")
        if a_lo < a_small:
            top = min(a_hi, a_small)
            total += mp.quad(g, [a_lo, top])
            if a_hi <= a_small:
                return total
            a_lo = a_small
        x_lo = mp.log(a_lo)
        x_hi = max(x_lo + 1, mp.mpf(3)) if a_hi == mp.inf else mp.log(a_hi)
        n = max(1, int(mp.ceil((x_hi - x_lo) / mp.mpf("2.5"))))
        pts = [x_lo + (x_hi - x_lo) * k / n for k in range(n + 1)]
        if a_hi == mp.inf:
            pts.append(mp.inf)
        total += mp.quad(lambda x: g(mp.exp(x)) * mp.exp(x), pts)
        return total

    def _has_big_bang_fluid(self):
        """Matter or radiation present, so the particle horizon and the age are finite."""
        return self.omega_r > 0 or self.omega_cb > 0 or bool(self.y0)

    def _head(self, g, a_min, kind):
        """int_0^{a_min} g da, or inf where it diverges (no matter and no radiation)."""
        if self._has_big_bang_fluid():
            return self._integral(g, 0, a_min)
        if kind == "time" and self.omega_curv > 0:      # Milne-like: a E -> sqrt(Omega_k)
            return self._integral(g, 0, a_min)
        return mp.inf

    def _cumulative(self, g, points, kind):
        """({p: int_{points[0]}^p g da}, int_0^{points[0]} g da), points ascending."""
        out, acc, prev = {points[0]: mp.mpf(0)}, mp.mpf(0), points[0]
        for p in points[1:]:
            acc += self._integral(g, prev, p)
            out[p] = acc
            prev = p
        return out, self._head(g, points[0], kind)

    def _a4e2(self, a):
        return self.a4e2(a)

    def _comoving_integrand(self, a):          # d(D_C/D_H)/da = 1/(a^2 E)
        return 1 / mp.sqrt(self._a4e2(a))

    def _time_integrand(self, a):              # d(t/t_H)/da = 1/(a E)
        return a / mp.sqrt(self._a4e2(a))

    def _sound_integrand(self, a):
        return self.sound_speed_factor(a) / mp.sqrt(self._a4e2(a))

    # ---- distances and times (Hogg 1999)
    def comoving_distance(self, z):
        a = 1 / (1 + mp.mpf(z))
        if a == 1:
            return mp.mpf(0)
        lo, hi, sign = (a, 1, 1) if a < 1 else (1, a, -1)
        return sign * self.hubble_distance * self._integral(self._comoving_integrand, lo, hi)

    def transverse_from_comoving(self, dc):
        """Hogg 1999 eq. 16."""
        k, dh = self.omega_curv, self.hubble_distance
        if k > 0:
            s = mp.sqrt(k)
            return dh / s * mp.sinh(s * dc / dh)
        if k < 0:
            s = mp.sqrt(-k)
            return dh / s * mp.sin(s * dc / dh)
        return dc

    def antipode_comoving_distance(self):
        """D_C at which a closed universe's antipode lies (inf when not closed)."""
        if self.omega_curv >= 0:
            return mp.inf
        return mp.pi * self.hubble_distance / mp.sqrt(-self.omega_curv)

    def comoving_volume(self, dc):
        """All-sky comoving volume inside D_C, Mpc^3 (Hogg 1999 sect. 9 eq. 29).

        Hogg's closed forms are written with D_M and hold for a closed universe only out to the
        equator (sqrt|Omega_k| D_C / D_H <= pi/2); beyond it the volume of a geodesic ball on the
        3-sphere of radius R = D_H/sqrt|Omega_k|, 2 pi R^3 (chi - sin chi cos chi), which equals
        Hogg's form below the equator, is used.
        """
        k, dh = self.omega_curv, self.hubble_distance
        dm = self.transverse_from_comoving(dc)
        if k == 0:
            return 4 * mp.pi / 3 * dm**3
        xc = dc / dh
        if abs(k) * xc * xc < mp.mpf("0.1"):
            # nearly flat: the closed forms cancel catastrophically; integrate the power series of
            # D_M^2 = (cosh(2 sqrt(k) u) - 1) / (2k) term by term, u = D_C/D_H (entire in k):
            # V = 4 pi D_H^3 sum_{n>=1} 2^(2n-1) k^(n-1) xc^(2n+1) / ((2n)! (2n+1))
            total, n = mp.mpf(0), 1
            while True:
                term = mp.power(2, 2 * n - 1) * k ** (n - 1) * xc ** (2 * n + 1) / (
                    mp.factorial(2 * n) * (2 * n + 1))
                total += term
                if abs(term) < abs(total) * mp.mpf("1e-40"):
                    break
                n += 1
            return 4 * mp.pi * dh**3 * total
        s = mp.sqrt(abs(k))
        x = dm / dh
        if k > 0:
            return 4 * mp.pi * dh**3 / (2 * k) * (x * mp.sqrt(1 + k * x * x) - mp.asinh(s * x) / s)
        chi = s * dc / dh
        if chi <= mp.pi / 2:
            return 4 * mp.pi * dh**3 / (2 * k) * (x * mp.sqrt(1 + k * x * x) - mp.asin(s * x) / s)
        r = dh / s
        return 2 * mp.pi * r**3 * (chi - mp.sin(chi) * mp.cos(chi))

    def lookback_time(self, z):
        a = 1 / (1 + mp.mpf(z))
        if a == 1:
            return mp.mpf(0)
        lo, hi, sign = (a, 1, 1) if a < 1 else (1, a, -1)
        return sign * self.hubble_time * self._integral(self._time_integrand, lo, hi)

    def age(self, z):
        a = 1 / (1 + mp.mpf(z))
        return self.hubble_time * self._head(self._time_integrand, a, "time")

    def particle_horizon(self, z):
        a = 1 / (1 + mp.mpf(z))
        return self.hubble_distance * self._head(self._comoving_integrand, a, "distance")

    def event_horizon(self, z):
        """Comoving; only meaningful for a model that expands for ever with a finite integral."""
        a = 1 / (1 + mp.mpf(z))
        return self.hubble_distance * self._integral(self._comoving_integrand, a, mp.inf)

    def sound_horizon(self, z):
        """r_s(z) = int_z^inf c_s dz / H, Mpc comoving (CONVENTIONS.md)."""
        a = 1 / (1 + mp.mpf(z))
        return self.hubble_distance * self._integral(self._sound_integrand, 0, a)

    def time_at_scale_factor(self, a):
        """Cosmic time t [Gyr] at scale factor a (a may exceed 1, up to inf)."""
        return self.hubble_time * self._integral(self._time_integrand, 0, a)

    # ---- every quantity of evaluate()
    def evaluate_many(self, zs, event_horizon=False):
        """{z: {quantity: mpf}} for every quantity of the model's evaluate() at each z > -1.

        The integrals share their pieces between the sorted redshifts. Hogg 1999: D_C eq. 15,
        D_M eq. 16, D_A eq. 18, D_L eq. 21, mu eq. 25, V_C eq. 29, dV_C eq. 28, t_L eq. 30.
        """
        zs = [mp.mpf(z) for z in zs]
        a_list = sorted({1 / (1 + z) for z in zs} | {mp.mpf(1)})
        cum_c, head_c = self._cumulative(self._comoving_integrand, a_list, "distance")
        cum_t, head_t = self._cumulative(self._time_integrand, a_list, "time")
        if event_horizon:
            c_inf = cum_c[a_list[-1]] + self._integral(self._comoving_integrand, a_list[-1], mp.inf)
        dh, th = self.hubble_distance, self.hubble_time
        result = {}
        for z in zs:
            a = 1 / (1 + z)
            ez = self.e(a)
            dc = dh * (cum_c[mp.mpf(1)] - cum_c[a])
            dm = self.transverse_from_comoving(dc)
            da = dm / (1 + z)
            dl = dm * (1 + z)
            out = {
                "scale_factor": a,
                "hubble_parameter": mp.mpf(self.h0) * ez,
                "hubble_distance_at_z": dh / ez,
                "comoving_distance": dc,
                "transverse_comoving_distance": dm,
                "angular_diameter_distance": da,
                "luminosity_distance": dl,
                # mu = 5 log10(D_L / 10 pc), D_L in Mpc
                "distance_modulus": 5 * mp.log10(dl * 10**5) if dl > 0 else mp.nan,
                "lookback_time": th * (cum_t[mp.mpf(1)] - cum_t[a]),
                "age": th * (head_t + cum_t[a]),
                "comoving_volume": self.comoving_volume(dc) / 10**9,           # Gpc^3
                "comoving_volume_element": dh * dm**2 / ez,                    # Hogg eq. 28
                "angular_scale": da * 1000 * ARCSEC_RAD,                       # kpc / arcsec
                "volume_averaged_distance": mp.cbrt(z * dm**2 * dh / ez) if z > 0 else mp.nan,
                "particle_horizon": dh * (head_c + cum_c[a]),
                "deceleration_parameter": self.deceleration(a),
            }
            if event_horizon:
                out["event_horizon"] = dh * (c_inf - cum_c[a])
            result[z] = out
        return result

    def evaluate(self, z, event_horizon=False):
        return self.evaluate_many([z], event_horizon)[mp.mpf(z)]

    # ---- epochs (root finding with mpmath)
    def a_equality(self):
        """rho_cb = rho_r with every neutrino relativistic."""
        f = lambda x: mp.log(self.omega_cb) - 3 * x - mp.log(self.omega_r_all_relativistic) + 4 * x
        return mp.exp(mp.findroot(f, mp.log(self.omega_r_all_relativistic / self.omega_cb)))

    def a_dark_energy_equality(self, include_massive_nu=False):
        """rho_matter(a) = rho_de(a), searched for 1e-3 < a < 1e3; None if no crossing."""
        def g(x):
            a = mp.exp(x)
            c = self.components(a)
            m = c["baryons"] + c["cold_dark_matter"]
            if include_massive_nu:
                m += c["neutrinos"] - self.omega_nu_massless / a**4
            return mp.log(m) - mp.log(c["dark_energy"]) if c["dark_energy"] > 0 else mp.mpf(1)
        return _bracketed_root(g, mp.log(mp.mpf("1e-3")), mp.log(mp.mpf(1000)), 400, first_from_hi=False)

    def a_acceleration(self):
        """Largest a < 1 where q turns from > 0 (before) to < 0; None if q(today) >= 0."""
        if self.deceleration(1) >= 0:
            return None
        g = lambda x: self.deceleration(mp.exp(x))
        return _bracketed_root(g, mp.log(mp.mpf("1e-4")), mp.mpf(0), 300, first_from_hi=True)

    def a_future_acceleration(self):
        if self.deceleration(1) < 0:
            return None
        g = lambda x: self.deceleration(mp.exp(x))
        return _bracketed_root(g, mp.mpf(0), mp.log(mp.mpf(1e4)), 300, first_from_hi=False)

    def a_turnaround_future(self):
        """Smallest a > 1 with E^2 = 0 (maximum expansion); None if none below a = 1e4."""
        g = lambda x: self._a4e2(mp.exp(x))
        return _bracketed_root(g, mp.mpf(0), mp.log(mp.mpf(1e4)), 600, first_from_hi=False)

    def a_bounce_past(self):
        """Largest a < 1 with E^2 = 0 (no big bang); None if E^2 > 0 on (0, 1]."""
        g = lambda x: self._a4e2(mp.exp(x))
        return _bracketed_root(g, mp.log(mp.mpf("1e-6")), mp.mpf(0), 600, first_from_hi=True)


def _bracketed_root(g, x_lo, x_hi, n, first_from_hi):
    """Scan g on n+1 points; refine the first sign change (from x_hi downwards or x_lo upwards)."""
    xs = [x_lo + (x_hi - x_lo) * k / n for k in range(n + 1)]
    if first_from_hi:
        xs = xs[::-1]
    prev_x, prev_g = xs[0], g(xs[0])
    for x in xs[1:]:
        gx = g(x)
        if gx == 0:
            return mp.exp(x)
        if (gx > 0) != (prev_g > 0):
            lo, hi = sorted((prev_x, x))
            root = mp.findroot(g, (lo, hi), solver="anderson")
            return mp.exp(root)
        prev_x, prev_g = x, gx
    return None


def relative_error(got, want):
    """|got - want| / |want| as a float."""
    got, want = mp.mpf(float(got)), mp.mpf(want)
    if want == 0:
        return float(abs(got))
    return float(abs(got - want) / abs(want))

