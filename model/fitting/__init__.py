"""Measurements, their likelihood and fits: comparing models of ``model`` with data.

Reading text tables (:func:`read_rows`), the measurement format and its kinds
(:data:`MEASUREMENT_KINDS`), chi^2 with nuisances (:func:`goodness_of_fit`), quick fits and
delta-chi^2 maps over many parameter sets (:class:`DistanceBatch`, :func:`quick_fit`,
:func:`chi2_map`). Every name here is also exported by ``model`` itself.
"""

from . import _batch, _bins, _fit, _kinds, _likelihood, _maps, _measurements, _rows
from ._batch import DistanceBatch
from ._bins import BinnedResiduals, binned_residuals
from ._fit import FIT_PARAMETERS, FitError, FitResult, quick_fit
from ._kinds import MEASUREMENT_KINDS, PREDICTIONS, MeasurementKind
from ._likelihood import GoodnessOfFit, KindResiduals, Nuisances, compare_models, goodness_of_fit
from ._maps import CONFIDENCE_LEVELS_2D, Chi2Map, chi2_map
from ._measurements import (MEASUREMENT_COLUMNS, MeasurementFormatError, MeasurementLimits,
                            MeasurementSet, parse_measurements, read_measurements)
from ._rows import DELIMITERS, TableFormatError, content_cells, read_lines, read_rows, sniff_delimiter

__all__ = [*_rows.__all__, *_kinds.__all__, *_measurements.__all__, *_likelihood.__all__,
           *_fit.__all__, *_maps.__all__, *_batch.__all__, *_bins.__all__]
