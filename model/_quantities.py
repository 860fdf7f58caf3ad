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

from dataclasses import dataclass
from typing import Callable

__all__ = ["Quantity", "QUANTITIES", "THEMES", "invertible_quantities"]

# Themes group the quantities on screen, in this order, with these headings.
THEMES = {
    "expansion": "Expansion rate and scale",
    "distances": "Distances",
    "times": "Times",
    "volumes": "Volumes",
    "scales": "Angular scales",
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
    invertible : bool
        Whether :func:`model.redshift_at` inverts it (monotonic from z = 0 on its first branch).
    derive : callable, optional
        ``derive(cosmo, z, values) -> ndarray``: computes the quantity from the redshifts and the
        built-in values; None for the quantities the kernel fills itself.
    """

    key: str
    unit: str
    symbol: str
    description: str
    theme: str
    invertible: bool = False
    derive: Callable | None = None

    def __post_init__(self):
        if self.theme not in THEMES:
            raise ValueError(f"theme: {self.theme!r} is not a theme; expected one of {', '.join(THEMES)}")
        if self.unit == "1":
            raise ValueError(f"unit of {self.key}: dimensionless is spelled '' (empty), not '1'")


QUANTITIES: dict[str, Quantity] = {q.key: q for q in (
    Quantity("scale_factor", "", "a", "scale factor a = 1/(1+z)", "expansion"),
    Quantity("hubble_parameter", "km/s/Mpc", "H", "Hubble parameter H(z)", "expansion"),
    Quantity("hubble_distance_at_z", "Mpc", "D_H", "Hubble distance c/H(z)", "distances"),
    Quantity("comoving_distance", "Mpc", "D_C", "line-of-sight comoving distance D_C", "distances",
             invertible=True),
    Quantity("transverse_comoving_distance", "Mpc", "D_M", "transverse comoving distance D_M", "distances",
             invertible=True),
    Quantity("angular_diameter_distance", "Mpc", "D_A", "angular-diameter distance D_A", "distances"),
    Quantity("luminosity_distance", "Mpc", "D_L", "luminosity distance D_L", "distances", invertible=True),
    Quantity("distance_modulus", "mag", "μ", "distance modulus μ", "distances", invertible=True),
    Quantity("lookback_time", "Gyr", "t_L", "lookback time", "times", invertible=True),
    Quantity("age", "Gyr", "t", "age of the universe at z", "times", invertible=True),
    Quantity("comoving_volume", "Gpc³", "V_C", "all-sky comoving volume within z", "volumes", invertible=True),
    Quantity("comoving_volume_element", "Mpc³/sr", "dV_C/dz/dΩ", "comoving volume per steradian per unit z",
             "volumes"),
    Quantity("angular_scale", "kpc/arcsec", "kpc per arcsec", "proper length per arcsecond", "scales"),
    Quantity("volume_averaged_distance", "Mpc", "D_V", "BAO volume-averaged distance D_V", "distances"),
    Quantity("particle_horizon", "Mpc", "χ_particle", "comoving particle horizon", "distances",
             invertible=True),
    Quantity("event_horizon", "Mpc", "χ_event", "comoving event horizon", "distances"),
    Quantity("deceleration_parameter", "", "q", "deceleration parameter q", "expansion"),
)}


def invertible_quantities() -> tuple[str, ...]:
    """Keys of the registered quantities that :func:`model.redshift_at` inverts, in registry order."""
    return tuple(k for k, q in QUANTITIES.items() if q.invertible)
