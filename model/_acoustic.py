"""The sound horizon and the acoustic scales of the CMB and of baryon acoustic oscillations."""

import math

import numpy as np

from ._distances import Z_MAX, as_redshifts, evaluate
from ._tables import tables

__all__ = ["sound_horizon", "acoustic_scales", "z_star_fit", "z_drag_fit", "r_drag_fit",
           "R_DRAG_FIT_RANGE", "r_drag_fit_outside"]


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


# The calibrated range of the r_drag formula. Aubourg et al. 2015 (PRD 92, 123516, §II and
# eq. 16) calibrate it on CAMB for the standard radiation content, N_eff = 3.046 at
# T_CMB = 2.7255 K, over the parameter range the Planck data allow, with Σm_ν up to 0.6 eV;
# the exact edges below are our reading of that range (recalled from the paper, not copied
# from a table in it): common practice, no source for the edges.
R_DRAG_FIT_RANGE = {
    "n_eff": (2.946, 3.146),          # N_eff = 3.046 ± 0.1 (the fit has no N_eff dependence)
    "t_cmb": (2.7155, 2.7355),        # K, T_CMB = 2.7255 ± 0.01 K
    "sum_m_nu": (0.0, 0.6),           # eV
    "omega_b_h2": (0.018, 0.026),
    "omega_cb_h2": (0.09, 0.16),
}
# Outside these the formula ignores physics the model has (radiation content, masses), and
# r_drag becomes the integrated r_s(z_drag); outside the density edges only a caution is
# given, since there the formula still follows ω_b and ω_cb smoothly and the integral at the
# fitted z_drag is no better (it inherits the 1–4 % error of that fit).
_R_DRAG_SWITCH = ("n_eff", "t_cmb", "sum_m_nu")


def r_drag_fit(omega_cb_h2, omega_b_h2, omega_nu_h2):
    """Sound horizon at the drag epoch from the calibrated formula of Aubourg et al. 2015.

    r_d = 55.154 exp[−72.3 (ω_ν + 0.0006)²] / (ω_cb^0.25351 ω_b^0.12807) Mpc (Aubourg et al.
    2015, PRD 92, 123516, eq. 16), calibrated on CAMB for N_eff = 3.046 to 0.021 % over
    the range allowed by Planck; it does not depend on N_eff or T_CMB otherwise.

    Calibrated range (see :data:`R_DRAG_FIT_RANGE`): N_eff = 3.046 ± 0.1, T_CMB = 2.7255 ±
    0.01 K, Σm_ν ≤ 0.6 eV, 0.018 ≤ ω_b ≤ 0.026, 0.09 ≤ ω_cb ≤ 0.16. The paper states the
    standard radiation content and the Planck-allowed range; the numerical edges are our
    reading of it. Outside the radiation and mass edges the formula misses physics the
    model has (it is 20 % off the integrated sound horizon at N_eff = 10, 6.5 % at
    T_CMB = 2 K) and :func:`acoustic_scales` uses r_s(z_drag) instead; outside the density
    edges it only adds a caution.
    """
    return (55.154 * math.exp(-72.3 * (omega_nu_h2 + 0.0006) ** 2)
            / (omega_cb_h2**0.25351 * omega_b_h2**0.12807))


def r_drag_fit_outside(cosmo):
    """The inputs of ``cosmo`` outside :data:`R_DRAG_FIT_RANGE`, as (key, short text) pairs
    (empty if none)."""
    h2 = cosmo.h**2
    d = cosmo._derived
    have = {"n_eff": cosmo.n_eff, "t_cmb": cosmo.t_cmb, "omega_b_h2": cosmo.omega_b * h2,
            "omega_cb_h2": d["omega_cb"] * h2, "sum_m_nu": float(sum(d["masses"]))}
    names = {"n_eff": ("N_eff", ""), "t_cmb": ("T_CMB", " K"), "omega_b_h2": ("Ω_b h²", ""),
             "omega_cb_h2": ("Ω_cb h²", ""), "sum_m_nu": ("Σm_ν", " eV")}
    out = []
    for key, (lo, hi) in R_DRAG_FIT_RANGE.items():
        v = have[key]
        if not lo <= v <= hi:
            sym, unit = names[key]
            out.append((key, f"{sym} = {v:.4g}{unit} (calibrated {lo:g} to {hi:g}{unit})"))
    return out


def acoustic_scales(cosmo):
    """CMB and BAO acoustic scales of a model.

    Returns
    -------
    dict
        ``z_star`` (Hu & Sugiyama 1996 fit), ``r_star`` = r_s(z*) [Mpc, integrated],
        ``d_m_star`` = D_M(z*) [Mpc], ``theta_star`` = r*/D_M(z*) [rad]; ``z_drag``
        (Eisenstein & Hu 1998 fit); ``r_drag`` [Mpc], the model's r_d (used by the BAO
        χ²); ``r_drag_method``: ``"fit"`` when ``r_drag`` is the calibrated formula of
        Aubourg et al. 2015 (eq. 16), ``"integrated"`` when it is r_s(z_drag) because N_eff,
        T_CMB or Σm_ν is outside the formula's calibrated range; ``r_drag_fit`` [Mpc], the
        formula's value either way; ``r_drag_integrated`` = r_s(z_drag) [Mpc];
        ``r_drag_caution``: None inside the calibrated range, else a sentence naming every
        input outside it (Ω_b h², Ω_cb h² outside theirs give a caution with the fit kept).
        All numbers NaN (method and caution None) when T_CMB = 0 or Ω_b = 0 (no acoustic
        oscillations).

    Notes
    -----
    Each fit is documented in :func:`z_star_fit`, :func:`z_drag_fit` and
    :func:`r_drag_fit` with its known accuracy. For the Planck 2018 base model r_drag agrees
    with Planck's Boltzmann-code value to 0.02 %, whereas r_s at the fitted z_drag does not
    (the fitted z_drag is not Planck's). Outside the calibrated range
    (:data:`R_DRAG_FIT_RANGE`) the formula has no accuracy statement at all. Where the
    radiation content or the masses are outside, the integral r_s(z_drag) still carries the
    model's own physics and only the 1–4 % uncertainty of the fitted z_drag, so it is
    preferred; where only ω_b or ω_cb are, the formula still follows them smoothly (it
    stays within 3 % of r_s(z_drag) for 0.06 ≤ ω_cb ≤ 0.36, against 2.4 % at the Planck
    model), so it is kept, with the caution, and the fits' Δχ² maps stay consistent.
    """
    d = cosmo._derived
    h2 = cosmo.h**2
    nan = float("nan")
    if d["omega_gamma"] <= 0.0 or cosmo.omega_b <= 0.0 or d["omega_cb"] <= 0.0:
        keys = ("z_star", "r_star", "d_m_star", "theta_star", "z_drag", "r_drag",
                "r_drag_fit", "r_drag_integrated")
        out = {k: nan for k in keys}
        out.update(r_drag_method=None, r_drag_caution=None)
        return out
    wb, wm = cosmo.omega_b * h2, cosmo.omega_m * h2
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        z_star = float(z_star_fit(wb, wm))
        z_drag = float(z_drag_fit(wb, wm))
    # far outside their calibration (e.g. a vanishing Ω_b h²) the fits can leave the model's
    # range of redshifts: the scales at such a redshift are NaN, and the caution says why
    inside = [math.isfinite(z) and 0.0 <= z <= Z_MAX for z in (z_star, z_drag)]
    r_star, r_drag_int = (float(v) if ok else nan for v, ok in
                          zip(sound_horizon(cosmo, [z if ok else 0.0 for z, ok in zip((z_star, z_drag), inside)]),
                              inside))
    d_m_star = float(evaluate(cosmo, z_star)["transverse_comoving_distance"]) if inside[0] else nan
    r_fit = r_drag_fit(d["omega_cb"] * h2, wb, d["omega_nu"] * h2)
    found = r_drag_fit_outside(cosmo)
    if not all(inside):
        found = list(found) + [("z_fits", f"Ω_b h² = {wb:.3g}, where the fitted z* = {z_star:.3g} and "
                                          f"z_drag = {z_drag:.3g} leave the model's range z ≤ {Z_MAX:g}")]
    switch = any(key in _R_DRAG_SWITCH for key, _ in found)
    caution = None
    if found:
        lead = ("r_drag is the integrated sound horizon at the fitted z_drag: "
                if switch else "r_drag is the calibrated formula used outside its range: ")
        caution = (lead + "the formula of Aubourg et al. 2015 is calibrated only near "
                   "the Planck model, not for " + "; ".join(text for _, text in found))
    return {
        "z_star": z_star,
        "r_star": r_star,
        "d_m_star": d_m_star,
        "theta_star": r_star / d_m_star,
        "z_drag": z_drag,
        "r_drag": r_drag_int if switch else r_fit,
        "r_drag_method": "integrated" if switch else "fit",
        "r_drag_fit": r_fit,
        "r_drag_integrated": r_drag_int,
        "r_drag_caution": caution,
    }
