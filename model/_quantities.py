"""The quantity registry: every output of :func:`model.evaluate`, described once.

Each :class:`Quantity` carries what any consumer needs to show, export or invert it: its key
(the name in ``evaluate``'s answer, the API and the CSV headers), unit (``""`` when
dimensionless), a short symbol, a one-line description, the theme it belongs to, and whether
:func:`model.redshift_at` can invert it. The API, the table panel, the CSV downloads, the
catalogue columns, the hover texts and the inverse look-up all read :data:`QUANTITIES`; a new
quantity is one entry here plus its computation.

Built-in quantities (``derive`` is None) are filled by the vectorised kernel in
``model._distances``. An entry with a ``derive`` function is computed after them from the
redshifts and the values already there, so a quantity built from others needs no change to
the kernel:

>>> from model import Cosmology, Quantity, QUANTITIES, evaluate
>>> QUANTITIES["hubble_time_at_z"] = Quantity(
...     "hubble_time_at_z", "Gyr", "1/H", "Hubble time 1/H(z)", "times",
...     derive=lambda cosmo, z, v: cosmo.hubble_time * cosmo.h0 / v["hubble_parameter"])
>>> c = Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0)
>>> t = float(evaluate(c, 3.0)["hubble_time_at_z"])  # Einstein–de Sitter: H = H0 (1+z)^1.5
>>> bool(abs(t / (c.hubble_time / 8.0) - 1.0) < 1e-12)
True
>>> del QUANTITIES["hubble_time_at_z"]
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np

__all__ = ["Quantity", "QUANTITIES", "THEMES", "invertible_quantities"]

# Themes group the quantities on screen, in this order, with these headings.
THEMES = {
    "expansion": "Expansion rate and scale",
    "distances": "Distances",
    "times": "Times",
    "volumes": "Volumes",
    "scales": "Angular scales",
    "growth": "Growth of structure",
}


@dataclass(frozen=True)
class Quantity:
    """One output of :func:`model.evaluate`.

    Parameters
    ----------
    key : str
        Name in the answer of ``evaluate`` (and in the API, CSV headers and links).
    unit : str
        Unit as plain text (``"Mpc"``, ``"Gyr"``); ``""`` for a dimensionless quantity.
    symbol : str
        Short symbol for column headers and hover texts (``"D_L"``).
    description : str
        One line saying what it is.
    theme : str
        One of :data:`THEMES`.
    slope : callable, optional
        ``slope(cosmo, values, x) -> ndarray``: the derivative with respect to ln(1+z), from the
        values of :func:`model.evaluate` at x = 1 + z. A quantity with a slope is invertible:
        :func:`model.redshift_at` inverts it on its monotonic branch from z = 0.
    derive : callable, optional
        ``derive(cosmo, z, values) -> ndarray``: computes the quantity from the redshifts and the
        built-in values; None for the quantities the kernel fills itself.
    """

    key: str
    unit: str
    symbol: str
    description: str
    theme: str
    slope: Callable | None = None
    derive: Callable | None = None

    @property
    def invertible(self) -> bool:
        """Whether :func:`model.redshift_at` inverts it (it has a slope)."""
        return self.slope is not None

    def __post_init__(self):
        if self.theme not in THEMES:
            raise ValueError(f"theme: {self.theme!r} is not a theme; expected one of {', '.join(THEMES)}")
        if self.unit == "1":
            raise ValueError(f"unit of {self.key}: dimensionless is spelled '' (empty), not '1'")


# Slopes d/du, u = ln(1+z), from the values of evaluate() (Hogg 1999 differentiated): dD_C/du =
# (1+z) c/H(z) (§5, eq. 15); dt/du = 1/H(z) (§10, eq. 30); dD_M/dD_C = cos or cosh of
# √|Ω_k| D_C/D_H (§5, eq. 16), negative past the equator of a closed universe, where D_M falls.


def _d_chi(cosmo, v, x):
    return x * v["hubble_distance_at_z"]


def _d_time(cosmo, v, x):
    return cosmo.hubble_time * cosmo.h0 / v["hubble_parameter"]


def _d_dm(cosmo, v, x):
    angle = math.sqrt(abs(cosmo.omega_k)) * v["comoving_distance"] / cosmo.hubble_distance
    if cosmo.omega_k < 0.0:
        return _d_chi(cosmo, v, x) * np.cos(angle)
    if cosmo.omega_k > 0.0:
        return _d_chi(cosmo, v, x) * np.cosh(angle)
    return _d_chi(cosmo, v, x)


def _d_dl(cosmo, v, x):  # D_L = (1+z) D_M
    return x * (v["transverse_comoving_distance"] + _d_dm(cosmo, v, x))


def _d_mu(cosmo, v, x):  # μ = 5 log10(D_L / 10 pc)
    with np.errstate(divide="ignore", invalid="ignore"):
        return 5.0 / math.log(10.0) * _d_dl(cosmo, v, x) / v["luminosity_distance"]


def _d_volume(cosmo, v, x):  # dV_C = 4π D_M² dD_C, in Gpc³
    return 4.0e-9 * math.pi * v["transverse_comoving_distance"] ** 2 * _d_chi(cosmo, v, x)


QUANTITIES: dict[str, Quantity] = {q.key: q for q in (
    Quantity("scale_factor", "", "a", "scale factor a = 1/(1+z)", "expansion"),
    Quantity("hubble_parameter", "km/s/Mpc", "H", "Hubble parameter H(z)", "expansion"),
    Quantity("hubble_distance_at_z", "Mpc", "D_H", "Hubble distance c/H(z)", "distances"),
    Quantity("comoving_distance", "Mpc", "D_C", "line-of-sight comoving distance D_C", "distances",
             slope=_d_chi),
    Quantity("transverse_comoving_distance", "Mpc", "D_M", "transverse comoving distance D_M", "distances",
             slope=_d_dm),
    Quantity("angular_diameter_distance", "Mpc", "D_A", "angular-diameter distance D_A", "distances"),
    Quantity("luminosity_distance", "Mpc", "D_L", "luminosity distance D_L", "distances", slope=_d_dl),
    Quantity("distance_modulus", "mag", "μ", "distance modulus μ", "distances", slope=_d_mu),
    Quantity("lookback_time", "Gyr", "t_L", "lookback time", "times", slope=_d_time),
    Quantity("age", "Gyr", "t", "age of the universe at z", "times", slope=lambda c, v, x: -_d_time(c, v, x)),
    Quantity("comoving_volume", "Gpc³", "V_C", "all-sky comoving volume within z", "volumes", slope=_d_volume),
    Quantity("comoving_volume_element", "Mpc³/sr", "dV_C/dz/dΩ", "comoving volume per steradian per unit z",
             "volumes"),
    Quantity("angular_scale", "kpc/arcsec", "kpc per arcsec", "proper length per arcsecond", "scales"),
    Quantity("volume_averaged_distance", "Mpc", "D_V", "BAO volume-averaged distance D_V", "distances"),
    Quantity("particle_horizon", "Mpc", "χ_particle", "comoving particle horizon", "distances",
             slope=lambda c, v, x: -_d_chi(c, v, x)),
    Quantity("event_horizon", "Mpc", "χ_event", "comoving event horizon", "distances"),
    Quantity("deceleration_parameter", "", "q", "deceleration parameter q", "expansion"),
    # linear growth of CDM + baryons (model._growth; massive neutrinos smooth), all from the
    # kernel: fσ₈ = σ₈ f D/D(0) = σ₈ (dD/d ln a)/D(0) needs no product of the other two
    Quantity("growth_factor", "", "D/D₀", "linear growth factor D(z)/D(0)", "growth"),
    Quantity("growth_rate", "", "f", "growth rate f = d ln D / d ln a", "growth"),
    Quantity("f_sigma8", "", "fσ₈", "growth rate times σ₈(z), f σ₈ D(z)/D(0)", "growth"),
    Quantity("sigma8_at_z", "", "σ₈(z)", "σ₈(z) = σ₈ D(z)/D(0)", "growth"),
)}


def invertible_quantities() -> tuple[str, ...]:
    """Keys of the registered quantities that :func:`model.redshift_at` inverts, in registry order."""
    return tuple(k for k, q in QUANTITIES.items() if q.invertible)
