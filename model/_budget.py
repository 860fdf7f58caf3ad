"""Public views of the energy budget: Ω_i(z), ρ_i(z), w(z)."""

import math

import numpy as np

from . import _constants as const
from ._background import components
from ._distances import as_redshifts

__all__ = ["density_parameters", "densities", "w_dark_energy", "w_effective", "COMPONENTS"]

COMPONENTS = ("photons", "neutrinos", "baryons", "cold_dark_matter", "dark_energy", "curvature")


def _scale_factors(z, name="z"):
    """Redshifts of any size with a positive scale factor, z > −1."""
    return as_redshifts(z, name, lo=-1.0, hi=math.inf, above=True)


def _grouped(cosmo, z):
    c = components(cosmo, _scale_factors(z))
    return {
        "photons": c["photons"],
        "neutrinos": c["neutrinos_massless"] + c["neutrinos_massive"],
        "baryons": c["baryons"],
        "cold_dark_matter": c["cold_dark_matter"],
        "dark_energy": c["dark_energy"],
        "curvature": c["curvature"],
    }


def density_parameters(cosmo, z):
    """Density parameters Ω_i(z) = ρ_i(z)/ρ_crit(z) of every component.

    Parameters
    ----------
    cosmo : Cosmology
    z : array_like
        Redshifts, any shape, z > −1 (no upper limit: a = 1e-7 is z ≈ 1e7).

    Returns
    -------
    dict of str to ndarray
        ``photons``, ``neutrinos`` (massless and massive), ``baryons``,
        ``cold_dark_matter``, ``dark_energy`` and ``curvature`` (Ω_k(z) = Ω_k (1+z)²/E²),
        dimensionless; they sum to 1.

    Notes
    -----
    Friedmann's equation divided by H²(z): 1 = Σ_i Ω_i(z) + Ω_k(z) (e.g. Peebles 1993,
    *Principles of Physical Cosmology*, eq. 5.14). Photons and massless neutrinos scale as
    a⁻⁴, cold matter as a⁻³, massive neutrinos by the Fermi–Dirac integral, dark energy as
    ρ_de ∝ a^{−3(1+w₀+w_a)} exp[−3 w_a (1 − a)] (Linder 2003, eq. 5).

    Examples
    --------
    >>> from model import Cosmology
    >>> om = density_parameters(Cosmology(h0=70.0, omega_m=0.3, t_cmb=0.0), 0.0)
    >>> round(float(om["dark_energy"]), 12)
    0.7
    """
    parts = _grouped(cosmo, z)
    total = sum(parts.values())
    with np.errstate(invalid="ignore", divide="ignore"):
        return {k: v / total for k, v in parts.items()}


def densities(cosmo, z):
    """Physical densities ρ_i(z) of every component and the critical density.

    Parameters
    ----------
    cosmo : Cosmology
    z : array_like
        Redshifts, any shape, z > −1.

    Returns
    -------
    dict of str to ndarray
        The keys of :func:`density_parameters` in kg m⁻³, plus ``critical``,
        ρ_crit(z) = 3 H²(z) / (8π G). The curvature entry is the equivalent density
        −3 k c² / (8π G a²) = Ω_k (1+z)² ρ_crit,0, so the entries other than ``critical``
        sum to it.

    Notes
    -----
    ρ_crit,0 = 3 H₀² / (8π G) with G from CODATA (scipy.constants); ρ_γ,0 =
    (π²/15) (k_B T_CMB)⁴ / (ħ³ c⁵) (Stefan–Boltzmann law for the photon energy density).
    """
    rho0 = const.critical_density(cosmo.h0)
    parts = {k: v * rho0 for k, v in _grouped(cosmo, z).items()}
    parts["critical"] = sum(parts.values())
    return parts


def w_dark_energy(cosmo, z):
    """Dark-energy equation of state w(z) = w₀ + w_a z/(1+z).

    Parameters
    ----------
    cosmo : Cosmology
    z : array_like
        Redshifts, z > −1.

    Returns
    -------
    ndarray
        w, dimensionless.

    References
    ----------
    Chevallier, M. & Polarski, D. 2001, Int. J. Mod. Phys. D 10, 213, eq. 14;
    Linder, E. V. 2003, PRL 90, 091301, eq. 4.
    """
    z = _scale_factors(z)
    return cosmo.w0 + cosmo.wa * z / (1.0 + z)


def w_effective(cosmo, z):
    """Equation of state of the whole content, w_tot = Σ p_i / Σ ρ_i (curvature excluded).

    Parameters
    ----------
    cosmo : Cosmology
    z : array_like
        Redshifts, z > −1.

    Returns
    -------
    ndarray
        w_tot, dimensionless.

    Notes
    -----
    With p_i = w_i ρ_i c²: radiation 1/3, cold matter 0, massive neutrinos
    w_ν = (1 − d ln F / d ln y)/3 from their Fermi–Dirac pressure, dark energy w(z).
    For a flat model w_tot = (2q − 1)/3, from Friedmann's acceleration equation
    (e.g. Peebles 1993, *Principles of Physical Cosmology*, eq. 5.15).
    """
    c = components(cosmo, _scale_factors(z))
    rho = (c["photons"] + c["neutrinos_massless"] + c["neutrinos_massive"] + c["baryons"]
           + c["cold_dark_matter"] + c["dark_energy"])
    # pressure_weight = Σ (1 + 3w) ρ  ⇒  Σ p = (pressure_weight − Σ ρ)/3
    with np.errstate(invalid="ignore", divide="ignore"):
        return (c["pressure_weight"] - rho) / (3.0 * rho)
