"""Friedmann Desk's numerical core: energy budgets and distance measures of FLRW models.

A pure numpy/scipy library, usable from a notebook::

    >>> from model import Cosmology, evaluate
    >>> planck = Cosmology(h0=67.36, omega_m=0.3153, omega_b=0.0493, n_eff=3.046)
    >>> round(float(evaluate(planck, 0.0)["age"]), 2)
    13.8
"""

from ._acoustic import acoustic_scales, r_drag_fit, sound_horizon, z_drag_fit, z_star_fit
from ._budget import COMPONENTS, densities, density_parameters, w_dark_energy, w_effective
from ._distances import Z_MAX, Z_MIN, evaluate
from ._epochs import cosmic_time, epochs, scale_factor_history
from ._errors import ModelError, NoBigBangError, ParameterError
from ._growth import linear_growth
from ._inverse import INVERTIBLE, redshift_at
from . import fitting
from .fitting import BinnedResiduals, binned_residuals
from .fitting import (DELIMITERS, CONFIDENCE_LEVELS_2D, FIT_PARAMETERS, MEASUREMENT_COLUMNS, MEASUREMENT_KINDS,
                      PREDICTIONS, Chi2Map, DistanceBatch, FitError, FitResult, GoodnessOfFit,
                      KindResiduals, MeasurementFormatError, MeasurementKind, MeasurementLimits,
                      MeasurementSet, Nuisances, TableFormatError, chi2_map, compare_models,
                      content_cells, goodness_of_fit, parse_measurements, quick_fit,
                      read_lines, read_measurements, read_rows, sniff_delimiter)
from ._quantities import QUANTITIES, THEMES, Quantity
from ._params import MAX_NEUTRINO_SPECIES, PARAMETERS, Cosmology, ParameterSpec

__all__ = [
    "Cosmology",
    "ParameterSpec",
    "PARAMETERS",
    "MAX_NEUTRINO_SPECIES",
    "ModelError",
    "ParameterError",
    "NoBigBangError",
    "evaluate",
    "QUANTITIES",
    "Quantity",
    "THEMES",
    "Z_MIN",
    "Z_MAX",
    "density_parameters",
    "densities",
    "w_dark_energy",
    "w_effective",
    "COMPONENTS",
    "epochs",
    "scale_factor_history",
    "cosmic_time",
    "sound_horizon",
    "acoustic_scales",
    "z_star_fit",
    "z_drag_fit",
    "r_drag_fit",
    "redshift_at",
    "linear_growth",
    "INVERTIBLE",
    *fitting.__all__,  # measurements, goodness of fit and fits
]
