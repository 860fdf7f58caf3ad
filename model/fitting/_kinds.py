"""The measurement kinds: one registry of what a table row may hold and how it is predicted.

Every kind names the :func:`model.evaluate` quantity its prediction is (built from H, D_C and
D_M by :data:`PREDICTIONS`, or one of the :data:`GROWTH_PREDICTIONS` taken from the linear
growth of each model), and the nuisance that
enters it linearly: none, the supernova magnitude offset M (prediction + M) or the sound
horizon at the drag epoch (prediction / r_d, the BAO ratios). The parser, the likelihood,
the fits and the page (titles, units) all read :data:`MEASUREMENT_KINDS`; adding a kind is
one entry here (and a test), provided its quantity is in :data:`PREDICTIONS`.
"""

import dataclasses

import numpy as np

from .._constants import SPEED_OF_LIGHT_KM_S

__all__ = ["MeasurementKind", "MEASUREMENT_KINDS", "PREDICTIONS", "GROWTH_PREDICTIONS"]


@dataclasses.dataclass(frozen=True)
class MeasurementKind:
    """One kind of measurement.

    Attributes
    ----------
    key : str
        The ``kind`` cell of a table row.
    unit : str
        Unit of ``value`` and ``error`` ("" for dimensionless).
    title : str
        Its name on screen.
    description : str
        One line for documentation and messages.
    quantity : str
        The :func:`model.evaluate` key the prediction is made of (a key of
        :data:`PREDICTIONS`, or of :data:`GROWTH_PREDICTIONS`).
    nuisance : {"", "offset", "r_d"}
        "offset": the prediction is quantity + M (supernova magnitude offset, mag);
        "r_d": it is quantity / r_d (r_d the sound horizon at the drag epoch, Mpc).
    heliocentric : bool
        Rows may give ``z_helio`` (the quantity then uses it, see :data:`PREDICTIONS`).
    zero_redshift : bool
        z = 0 is accepted (else 0 < z).
    positive : bool
        Values must be > 0.
    """

    key: str
    unit: str
    title: str
    description: str
    quantity: str
    nuisance: str = ""
    heliocentric: bool = False
    zero_redshift: bool = False
    positive: bool = True

    def __post_init__(self):
        if self.nuisance not in ("", "offset", "r_d"):
            raise ValueError(f"nuisance: expected '', 'offset' or 'r_d', got {self.nuisance!r}")
        if self.quantity not in PREDICTIONS and self.quantity not in GROWTH_PREDICTIONS:
            raise ValueError(f"quantity: expected one of {', '.join((*PREDICTIONS, *GROWTH_PREDICTIONS))}, "
                             f"got {self.quantity!r}")


def _distance_modulus(z, z_helio, hubble, comoving, transverse):
    mu = np.log10(transverse * (1.0 + z_helio))
    mu *= 5.0
    mu += 25.0
    return mu


def _hubble_distance(z, z_helio, hubble, comoving, transverse):
    return SPEED_OF_LIGHT_KM_S / hubble


def _volume_averaged(z, z_helio, hubble, comoving, transverse):
    return np.cbrt(z * transverse**2 * SPEED_OF_LIGHT_KM_S / hubble)


#: quantity -> f(z, z_helio, H, D_C, D_M): the quantity from H(z) [km/s/Mpc] and the line-of-
#: sight and transverse comoving distances [Mpc], arrays of shape (P, n) for P parameter sets
#: (z and z_helio of shape (n,)). Definitions of Hogg 1999 (arXiv:astro-ph/9905116): D_A =
#: D_M/(1+z) (section 6), D_L = (1+z) D_M (section 7), mu = 5 log10(D_L / 10 pc) (section 8),
#: with D_L = (1+z_helio) D_M(z) for supernovae (Davis et al. 2011, ApJ 741, 67, from memory);
#: D_H = c/H and D_V = [z D_M^2 D_H]^(1/3) (Eisenstein et al. 2005, ApJ 633, 560, eq. 2).
PREDICTIONS = {
    "distance_modulus": _distance_modulus,
    "luminosity_distance": lambda z, zh, h, dc, dm: (1.0 + z) * dm,
    "angular_diameter_distance": lambda z, zh, h, dc, dm: dm / (1.0 + z),
    "comoving_distance": lambda z, zh, h, dc, dm: dc,
    "transverse_comoving_distance": lambda z, zh, h, dc, dm: dm,
    "hubble_parameter": lambda z, zh, h, dc, dm: h,
    "hubble_distance_at_z": _hubble_distance,
    "volume_averaged_distance": _volume_averaged,
}

#: Quantities of the linear growth (``model._growth``) a kind can be compared with: fσ₈(z) =
#: f(z) σ₈ D(z)/D(0) (the product of the growth rate and the amplitude σ₈(z); e.g. Percival &
#: White 2009, MNRAS 393, 297, from memory), linear in σ₈.
GROWTH_PREDICTIONS = ("f_sigma8",)

_KINDS = (
    MeasurementKind("distance_modulus", "mag", "distance modulus μ",
                    "supernova distance modulus mu; absolute-magnitude offset free",
                    "distance_modulus", nuisance="offset", heliocentric=True, positive=False),
    MeasurementKind("luminosity_distance", "Mpc", "luminosity distance D_L",
                    "luminosity distance D_L", "luminosity_distance"),
    MeasurementKind("angular_diameter_distance", "Mpc", "angular-diameter distance D_A",
                    "angular-diameter distance D_A", "angular_diameter_distance"),
    MeasurementKind("comoving_distance", "Mpc", "comoving distance D_C",
                    "line-of-sight comoving distance D_C", "comoving_distance"),
    MeasurementKind("dm_over_rd", "", "D_M / r_d",
                    "transverse comoving distance over the sound horizon at drag, D_M/r_d",
                    "transverse_comoving_distance", nuisance="r_d"),
    MeasurementKind("dh_over_rd", "", "D_H / r_d",
                    "Hubble distance c/H(z) over the sound horizon at drag, D_H/r_d",
                    "hubble_distance_at_z", nuisance="r_d"),
    MeasurementKind("dv_over_rd", "", "D_V / r_d",
                    "volume-averaged distance over the sound horizon at drag, D_V/r_d",
                    "volume_averaged_distance", nuisance="r_d"),
    MeasurementKind("hubble_parameter", "km/s/Mpc", "expansion rate H(z)", "expansion rate H(z)",
                    "hubble_parameter", zero_redshift=True),
    MeasurementKind("f_sigma8", "", "growth rate fσ₈",
                    "growth rate times the fluctuation amplitude, f σ8(z), from redshift-space distortions",
                    "f_sigma8", zero_redshift=True),
)

#: key -> :class:`MeasurementKind`, in the order tables and the page list them.
MEASUREMENT_KINDS = {kind.key: kind for kind in _KINDS}


def growth_kinds():
    """Keys of the kinds predicted from the linear growth (:data:`GROWTH_PREDICTIONS`)."""
    return tuple(key for key, kind in MEASUREMENT_KINDS.items() if kind.quantity in GROWTH_PREDICTIONS)


def kinds_with(nuisance):
    """Keys of the kinds whose prediction carries ``nuisance`` ("offset" or "r_d")."""
    return tuple(key for key, kind in MEASUREMENT_KINDS.items() if kind.nuisance == nuisance)
