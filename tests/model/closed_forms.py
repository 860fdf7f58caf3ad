"""Closed-form results for textbook expansion histories (all without radiation unless stated).

Distances are in units of the Hubble distance D_H = c/H0 and times in units of the Hubble time
t_H = 1/H0; the tests multiply by the model's own D_H and t_H. Each function names its source.
These are used both to check the mpmath reference (test_model_reference_selfcheck.py) and the
model itself (test_model_closed_forms.py).
"""

from __future__ import annotations

import cmath

import mpmath as mp
import numpy as np
from scipy.special import elliprf


# ---- Einstein-de Sitter (Omega_m = 1): a ~ t^(2/3). Standard textbook closed forms
# (e.g. Weinberg 1972, Gravitation and Cosmology, ch. 15; from memory).
def eds_comoving_distance(z):
    return 2 * (1 - 1 / mp.sqrt(1 + mp.mpf(z)))        # D_C = 2 D_H (1 - 1/sqrt(1+z))


def eds_age(z):
    return mp.mpf(2) / 3 * mp.power(1 + mp.mpf(z), mp.mpf(-3) / 2)  # t0 = 2/(3 H0) at z = 0


def eds_particle_horizon(z):
    return 2 / mp.sqrt(1 + mp.mpf(z))                 # comoving, int_z^inf dz/E


# ---- Milne (empty, Omega_k = 1): a ~ t. Standard closed forms (Hogg 1999 fig. 1 discussion).
def milne_comoving_distance(z):
    return mp.log(1 + mp.mpf(z))


def milne_luminosity_distance(z):
    z = mp.mpf(z)
    return z * (1 + z / 2)                            # D_L = D_H z (1 + z/2)


def milne_lookback(z):
    z = mp.mpf(z)
    return z / (1 + z)


# ---- de Sitter (Omega_Lambda = 1): E = 1.
def de_sitter_comoving_distance(z):
    return mp.mpf(z)                                  # D_C = D_H z


def de_sitter_lookback(z):
    return mp.log(1 + mp.mpf(z))                      # t_L = t_H ln(1+z)


def de_sitter_event_horizon(z):
    return 1 + mp.mpf(z)                              # comoving: D_H int_a^inf da/a^2 = D_H / a


# ---- Mattig's relation, matter only, any curvature (Mattig 1958, Astron. Nachr. 284, 109):
# D_L = 2 D_H [Omega z + (Omega - 2)(sqrt(1 + Omega z) - 1)] / Omega^2.
def mattig_luminosity_distance(omega_m, z):
    om, z = mp.mpf(omega_m), mp.mpf(z)
    return 2 * (om * z + (om - 2) * (mp.sqrt(1 + om * z) - 1)) / om**2


# ---- Matter-only parametric (cycloid) solutions (Friedmann 1922, 1924; textbook, from memory).
# Open: a = A (cosh eta - 1), t = B (sinh eta - eta); closed: a = A (1 - cos th), t = B (th - sin th),
# A = Omega / (2 |1 - Omega|), B = Omega / (2 |1 - Omega|^(3/2)) in units of 1/H0.
def matter_only_age(omega_m, z=0):
    om, a = mp.mpf(omega_m), 1 / (1 + mp.mpf(z))
    if om < 1:
        big_a, big_b = om / (2 * (1 - om)), om / (2 * (1 - om) ** mp.mpf(1.5))
        eta = mp.acosh(1 + a / big_a)
        return big_b * (mp.sinh(eta) - eta)
    big_a, big_b = om / (2 * (om - 1)), om / (2 * (om - 1) ** mp.mpf(1.5))
    th = mp.acos(1 - a / big_a)
    return big_b * (th - mp.sin(th))


def closed_matter_only_turnaround(omega_m):
    """(a_max, t_max, t_recollapse) for Omega_m > 1: a_max = 2A, t_max = pi B, t_crunch = 2 pi B."""
    om = mp.mpf(omega_m)
    big_a, big_b = om / (2 * (om - 1)), om / (2 * (om - 1) ** mp.mpf(1.5))
    return 2 * big_a, mp.pi * big_b, 2 * mp.pi * big_b


# ---- Flat matter + Lambda.
def flat_lambda_age(omega_m, z=0):
    """t(a) = 2/(3 H0 sqrt(OL)) asinh(sqrt(OL/Om) a^(3/2)), OL = 1 - Om (textbook, from memory)."""
    om = mp.mpf(omega_m)
    ol = 1 - om
    a = 1 / (1 + mp.mpf(z))
    return 2 / (3 * mp.sqrt(ol)) * mp.asinh(mp.sqrt(ol / om) * a ** mp.mpf(1.5))


def flat_lambda_comoving_distance_carlson(omega_m, z):
    """D_C / D_H for flat matter + Lambda through Carlson's R_F (float, scipy.special.elliprf).

    Following the idea of Baes, Camps & Van De Putte 2017 (MNRAS 468, 927): with
    s^3 = OL/Om and x = s u, int_1^{1+z} dx / sqrt(Om x^3 + OL) =
    Om^(-1/3) OL^(-1/6) [G(1/s) - G((1+z)/s)], G(u) = int_u^inf dt / sqrt(t^3 + 1).
    Factorising t^3 + 1 = (t + 1)(t - w)(t - conj w), w = exp(i pi/3), and shifting t -> t + u in
    the definition R_F(x,y,z) = (1/2) int_0^inf dt / sqrt((t+x)(t+y)(t+z)) (DLMF 19.16.1) gives
    G(u) = 2 R_F(u + 1, u - w, u - conj w), real for real u >= 0.
    """
    om = float(omega_m)
    ol = 1.0 - om
    s = (ol / om) ** (1.0 / 3.0)
    w = cmath.exp(1j * cmath.pi / 3)

    def big_g(u):
        return 2.0 * elliprf(u + 1.0, u - w, u - np.conj(w)).real

    z = np.asarray(z, dtype=float)
    return om ** (-1.0 / 3.0) * ol ** (-1.0 / 6.0) * (big_g(1.0 / s) - big_g((1.0 + z) / s))


def flat_lambda_future_acceleration(omega_m):
    """q = Om a^-3 / 2 - OL = 0 -> a = (Om / (2 OL))^(1/3); t there from flat_lambda_age."""
    om = mp.mpf(omega_m)
    ol = 1 - om
    a = mp.cbrt(om / (2 * ol))
    t = 2 / (3 * mp.sqrt(ol)) * mp.asinh(mp.sqrt(ol / om) * a ** mp.mpf(1.5))
    return a, t


def flat_lambda_acceleration_redshift(omega_m):
    """z_acc = (2 OL / Om)^(1/3) - 1 (q = 0 for flat matter + Lambda)."""
    om = mp.mpf(omega_m)
    return mp.cbrt(2 * (1 - om) / om) - 1


def flat_lambda_de_equality_redshift(omega_m):
    """Om (1+z)^3 = OL."""
    om = mp.mpf(omega_m)
    return mp.cbrt((1 - om) / om) - 1


# ---- Radiation (no matter). E^2 = Or a^-4 [+ Ok a^-2 or + OL].
def radiation_only_age(z=0):
    """Omega_r = 1: a ~ t^(1/2), t = a^2 / (2 H0) (textbook)."""
    a = 1 / (1 + mp.mpf(z))
    return a**2 / 2


def radiation_only_comoving_distance(z):
    z = mp.mpf(z)
    return z / (1 + z)                                # int_a^1 da = 1 - a


def radiation_curvature_age(omega_r, z=0):
    """Or + Ok = 1: t = int_0^a a da / sqrt(Or + Ok a^2) = [sqrt(Or + Ok a^2) - sqrt(Or)] / Ok."""
    orad = mp.mpf(omega_r)
    ok = 1 - orad
    a = 1 / (1 + mp.mpf(z))
    return (mp.sqrt(orad + ok * a * a) - mp.sqrt(orad)) / ok


def radiation_curvature_comoving_distance(omega_r, z):
    """int_a^1 da / sqrt(Or + Ok a^2) = [asinh(sqrt(Ok/Or)) - asinh(sqrt(Ok/Or) a)] / sqrt(Ok)."""
    orad = mp.mpf(omega_r)
    ok = 1 - orad
    a = 1 / (1 + mp.mpf(z))
    k = mp.sqrt(ok / orad)
    return (mp.asinh(k) - mp.asinh(k * a)) / mp.sqrt(ok)


def radiation_lambda_age(omega_r, z=0):
    """Flat Or + OL = 1: t = int_0^a a da / sqrt(Or + OL a^4) = asinh(sqrt(OL/Or) a^2) / (2 sqrt(OL))."""
    orad = mp.mpf(omega_r)
    ol = 1 - orad
    a = 1 / (1 + mp.mpf(z))
    return mp.asinh(mp.sqrt(ol / orad) * a * a) / (2 * mp.sqrt(ol))
