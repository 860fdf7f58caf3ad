"""The sound horizon and the acoustic scales of the CMB and of baryon acoustic oscillations."""

import math

import numpy as np

from ._distances import as_redshifts, evaluate
from ._tables import tables

__all__ = ["sound_horizon", "acoustic_scales", "z_star_fit", "z_drag_fit", "r_drag_fit"]


def sound_horizon(cosmo, z):
    """Comoving sound horizon r_s(z) = ∫_z^∞ c_s dz' / H(z'), in Mpc.

    Parameters
    ----------
    cosmo : Cosmology
    z : array_like
        Redshifts, any shape, 0 ≤ z ≤ 1e5.

    Returns
    -------
    ndarray
        r_s in comoving Mpc; NaN when T_CMB = 0 (no photon–baryon fluid).

    Notes
    -----
    c_s = c / √(3 (1 + R)), R = 3 ρ_b / (4 ρ_γ) ∝ a (e.g. Hu & Sugiyama 1996, ApJ 471, 542,
    eq. B6; Eisenstein & Hu 1998, ApJ 496, 605, eq. 5 before its approximation). The
    integral is tabulated per model from z = ∞ downward (see ``model._tables``).
    """
    z = as_redshifts(z, lo=0.0)
    tab = tables(cosmo)
    u = np.log1p(z.ravel())
    return (cosmo.hubble_distance * tab.interpolate("rs", tab.locate(u))).reshape(z.shape)


def z_star_fit(omega_b_h2, omega_m_h2):
    """Redshift of photon decoupling z* from the fit of Hu & Sugiyama 1996, eq. E1.

    z* = 1048 [1 + 0.00124 ω_b^−0.738] [1 + g₁ ω_m^g₂], g₁ = 0.0783 ω_b^−0.238 /
    (1 + 39.5 ω_b^0.763), g₂ = 0.560 / (1 + 21.1 ω_b^1.81) (Hu & Sugiyama 1996, ApJ 471,
    542, eqs. E1–E2); accurate to about 1 % over 0.0025 ≲ ω_b ≲ 0.25 and ω_m up to 1
    (their appendix E). For the Planck 2018 base model it gives z* ≈ 1091.9 against
    Planck's 1089.92 (0.18 % high), which moves θ* by about −0.12 %.
    """
    g1 = 0.0783 * omega_b_h2**-0.238 / (1.0 + 39.5 * omega_b_h2**0.763)
    g2 = 0.560 / (1.0 + 21.1 * omega_b_h2**1.81)
    return 1048.0 * (1.0 + 0.00124 * omega_b_h2**-0.738) * (1.0 + g1 * omega_m_h2**g2)


def z_drag_fit(omega_b_h2, omega_m_h2):
    """Redshift of the baryon drag epoch z_d from the fit of Eisenstein & Hu 1998, eq. 4.

    z_d = 1291 ω_m^0.251 / (1 + 0.659 ω_m^0.828) [1 + b₁ ω_b^b₂], b₁ = 0.313 ω_m^−0.419
    [1 + 0.607 ω_m^0.674], b₂ = 0.238 ω_m^0.223 (Eisenstein & Hu 1998, ApJ 496, 605). The
    fit matches their recombination calculation to 1 %; Boltzmann codes' z_drag differs
    systematically, so it is not comparable with Planck's tabulated z_drag.
    """
    b1 = 0.313 * omega_m_h2**-0.419 * (1.0 + 0.607 * omega_m_h2**0.674)
    b2 = 0.238 * omega_m_h2**0.223
    return (1291.0 * omega_m_h2**0.251 / (1.0 + 0.659 * omega_m_h2**0.828)
            * (1.0 + b1 * omega_b_h2**b2))


def r_drag_fit(omega_cb_h2, omega_b_h2, omega_nu_h2):
    """Sound horizon at the drag epoch from the calibrated formula of Aubourg et al. 2015.

    r_d = 55.154 exp[−72.3 (ω_ν + 0.0006)²] / (ω_cb^0.25351 ω_b^0.12807) Mpc (Aubourg et al.
    2015, PRD 92, 123516, eq. 16), calibrated on CAMB for N_eff = 3.046 to 0.021 % over
    the range allowed by Planck; it does not depend on N_eff otherwise.
    """
    return (55.154 * math.exp(-72.3 * (omega_nu_h2 + 0.0006) ** 2)
            / (omega_cb_h2**0.25351 * omega_b_h2**0.12807))


def acoustic_scales(cosmo):
    """CMB and BAO acoustic scales of a model.

    Returns
    -------
    dict
        ``z_star`` (Hu & Sugiyama 1996 fit), ``r_star`` = r_s(z*) [Mpc, integrated],
        ``d_m_star`` = D_M(z*) [Mpc], ``theta_star`` = r*/D_M(z*) [rad]; ``z_drag``
        (Eisenstein & Hu 1998 fit), ``r_drag`` [Mpc] from the calibrated formula of Aubourg
        et al. 2015 (eq. 16), and ``r_drag_integrated`` = r_s(z_drag) [Mpc]. All NaN when
        T_CMB = 0 or Ω_b = 0 (no acoustic oscillations).

    Notes
    -----
    Each fit is documented in :func:`z_star_fit`, :func:`z_drag_fit` and
    :func:`r_drag_fit` with its known accuracy. For the Planck 2018 base model r_drag agrees
    with Planck's Boltzmann-code value to 0.02 %, whereas r_s at the fitted z_drag does not
    (the fitted z_drag is not Planck's).
    """
    d = cosmo._derived
    h2 = cosmo.h**2
    nan = float("nan")
    if d["omega_gamma"] <= 0.0 or cosmo.omega_b <= 0.0 or d["omega_cb"] <= 0.0:
        keys = ("z_star", "r_star", "d_m_star", "theta_star", "z_drag", "r_drag",
                "r_drag_integrated")
        return {k: nan for k in keys}
    wb, wm = cosmo.omega_b * h2, cosmo.omega_m * h2
    z_star = float(z_star_fit(wb, wm))
    z_drag = float(z_drag_fit(wb, wm))
    r_star, r_drag_int = (float(v) for v in sound_horizon(cosmo, [z_star, z_drag]))
    d_m_star = float(evaluate(cosmo, z_star)["transverse_comoving_distance"])
    return {
        "z_star": z_star,
        "r_star": r_star,
        "d_m_star": d_m_star,
        "theta_star": r_star / d_m_star,
        "z_drag": z_drag,
        "r_drag": r_drag_fit(d["omega_cb"] * h2, wb, d["omega_nu"] * h2),
        "r_drag_integrated": r_drag_int,
    }
