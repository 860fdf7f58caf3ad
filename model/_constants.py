"""Physical constants and unit conversions, each with its unit and source.

Everything numerical in :mod:`model` takes its constants from here, so that a
change of standard is made in one place.
"""

import math

from scipy import constants as _si

# Speed of light in vacuum, exact by definition of the metre (SI, 2019 redefinition).
SPEED_OF_LIGHT_KM_S = 299_792.458  # km s^-1
SPEED_OF_LIGHT_M_S = _si.c  # m s^-1 (exact)

# Astronomical unit, exact (IAU 2012 Resolution B2).
ASTRONOMICAL_UNIT_M = 149_597_870_700.0  # m
# Parsec = 648000/pi au (IAU 2015 Resolution B2).
PARSEC_M = 648_000.0 / math.pi * ASTRONOMICAL_UNIT_M  # m
MEGAPARSEC_M = 1.0e6 * PARSEC_M  # m
MEGAPARSEC_KM = MEGAPARSEC_M / 1.0e3  # km

# Julian year of 365.25 days of 86 400 s (IAU).
JULIAN_YEAR_S = 365.25 * 86_400.0  # s
GIGAYEAR_S = 1.0e9 * JULIAN_YEAR_S  # s

# CODATA values as shipped by scipy.constants.
GRAVITATIONAL_CONSTANT = _si.G  # m^3 kg^-1 s^-2
REDUCED_PLANCK = _si.hbar  # J s
BOLTZMANN = _si.k  # J K^-1
ELECTRON_VOLT_J = _si.e  # J per eV (exact since 2019)

# One arcsecond in radians.
ARCSEC_RAD = math.pi / (180.0 * 3600.0)

# Neutrino sector (standard decoupling; e.g. Lesgourgues & Pastor 2006, Phys. Rep. 429, 307).
NEUTRINO_TEMPERATURE_RATIO = (4.0 / 11.0) ** (1.0 / 3.0)  # T_nu0 / T_CMB
# Energy density of one massless neutrino species (with its antiparticle) per photon density
# when N_eff = 3: (7/8) (4/11)^(4/3).
NEUTRINO_PER_PHOTON = 7.0 / 8.0 * (4.0 / 11.0) ** (4.0 / 3.0)

# CMB temperature today (Fixsen 2009, ApJ 707, 916: 2.72548 +- 0.00057 K), rounded as usual.
T_CMB_DEFAULT = 2.7255  # K
# Effective number of neutrino species (Froustey, Pitrou & Volpe 2020; Bennett et al. 2021).
N_EFF_DEFAULT = 3.044
# Cosmic baryon fraction omega_b / (omega_b + omega_c) of Planck 2018 VI (A&A 641, A6), Table 2,
# TT,TE,EE+lowE+lensing: 0.02237 / (0.02237 + 0.1200) = 0.1571; used when omega_b is not given.
BARYON_FRACTION_DEFAULT = 0.157
# sigma_8, rms linear fluctuation in 8 h^-1 Mpc spheres today, dimensionless: Planck 2018 VI
# (A&A 641, A6), Table 2, TT,TE,EE+lowE+lensing column, 0.8111 +- 0.0060.
SIGMA8_DEFAULT = 0.8111


def critical_density(h0):
    """Critical density today, 3 H0^2 / (8 pi G), in kg m^-3, for h0 in km s^-1 Mpc^-1."""
    h0_si = h0 / MEGAPARSEC_KM  # s^-1
    return 3.0 * h0_si**2 / (8.0 * math.pi * GRAVITATIONAL_CONSTANT)


def photon_density(t_cmb):
    """Photon mass density rho_gamma = (pi^2/15) (k_B T)^4 / (hbar^3 c^5) in kg m^-3."""
    kt = BOLTZMANN * t_cmb
    return math.pi**2 / 15.0 * kt**4 / (REDUCED_PLANCK**3 * SPEED_OF_LIGHT_M_S**5)
