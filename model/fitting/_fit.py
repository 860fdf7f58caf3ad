"""Quick fits of cosmological parameters to a measurement set.

Both the fits and the maps (``model.fitting._maps``) score parameter sets through
:class:`_Problem`, which rests on :class:`~model.fitting.DistanceBatch` (H(z), D_C(z) and
D_M(z) at the measured redshifts for many parameter sets at once) and, for fσ₈ rows, on the
linear growth of each distinct set of cosmological parameters (``model._growth``), scaled by
σ₈, in which fσ₈ is linear.

Errors, drawn as a tree::

    ValueError
    └── ModelError          (model._errors)
        └── FitError        a fit or map cannot be set up or has no valid point
"""

import dataclasses
import math
import time

import numpy as np
from scipy import optimize

from .._acoustic import r_drag_fit
from .._errors import ModelError
from .._growth import Growth
from .._params import PARAMETERS, without_tables
from ._batch import COSMOLOGICAL, DistanceBatch
from ._kinds import growth_kinds, kinds_with
from ._likelihood import Nuisances, goodness_of_fit, observable_parts, profile_nuisances
from ._measurements import _frozen

__all__ = ["FIT_PARAMETERS", "FitError", "FitResult", "quick_fit"]

_SPEC = {p.name: p for p in PARAMETERS}

#: name -> (unit, default lower bound, default upper bound) of every parameter a fit or
#: map can vary: the cosmological ones with the ranges Cosmology accepts, the growth
#: amplitude σ₈ (only fσ₈ rows depend on it; its lower bound is 0.01 rather than Cosmology's
#: exclusive 0, so every point of a fit is a valid model) and the two nuisances (sound horizon
#: r_d [Mpc], supernova magnitude offset [mag]).
FIT_PARAMETERS = {
    **{name: (_SPEC[name].unit, _SPEC[name].minimum, _SPEC[name].maximum) for name in COSMOLOGICAL},
    "sigma8": ("", 0.01, _SPEC["sigma8"].maximum),
    "r_d": ("Mpc", 1.0, 1000.0),
    "offset": ("mag", -30.0, 30.0),
}


# Step in ln a of the fits' growth solutions: 1/16 instead of evaluate's 1/64 makes each about
# five times cheaper (a Δχ² map solves one per node); the fourth-order error grows to about
# 1e-6 relative (measured against the fine grid), far inside any measurement's error.
_GROWTH_STEP = 1.0 / 16.0


class FitError(ModelError):
    """A fit or a map cannot be set up, or found no parameter set with a finite chi^2."""


# --------------------------------------------------------------------------------------------
# chi^2 of many parameter sets


class _Problem:
    """A measurement set, a base model and nuisance settings, ready to score parameter sets."""

    def __init__(self, base, data, nuisances):
        if not isinstance(nuisances, Nuisances):
            raise TypeError(f"nuisances: expected a Nuisances, got {type(nuisances).__name__}")
        self.base, self.data, self.nuisances = base, data, nuisances
        self.batch = DistanceBatch(base, data.z)
        self.needs_r_d = bool(np.isin(data.kind, kinds_with("r_d")).any())
        self.needs_offset = bool(np.isin(data.kind, kinds_with("offset")).any())
        self.growth_rows = np.flatnonzero(np.isin(data.kind, growth_kinds()))
        self.needs_sigma8 = bool(self.growth_rows.size)

    def growth(self, sets, cosmological, n_sets):
        """fσ₈ of each set at the data redshifts, shape (P, N) (None without fσ₈ rows).

        f D/D(0) is solved once per distinct set of cosmological parameters (a new model each,
        built without its distance tables, on a coarser grid: about 0.3 ms), then scaled by each set's σ₈; NaN for
        a set the model refuses.
        """
        if not self.needs_sigma8:
            return None
        rows, z = self.growth_rows, self.data.z[self.growth_rows]
        names = tuple(cosmological)
        columns = np.stack([np.broadcast_to(np.asarray(cosmological[n], dtype=float), n_sets) for n in names],
                           axis=1) if names else np.zeros((n_sets, 0))
        distinct, which = np.unique(columns, axis=0, return_inverse=True)
        shapes = np.full((distinct.shape[0], z.size), np.nan)
        for k, values in enumerate(distinct):
            try:
                with without_tables():  # the budget is all the growth needs (a set with no big
                    # bang never reaches today on the growth grid and gives NaN)
                    cosmo = self.base.replace(**dict(zip(names, values.tolist()))) if names else self.base
            except ModelError:
                continue
            # f D/D(0) = (dD/d ln a)/D(0), on a grid 4× coarser than evaluate's (error ~1e-6)
            shapes[k] = Growth(cosmo, step=_GROWTH_STEP, a_end=1.0).at(1.0 / (1.0 + z))[1]
        out = np.zeros((n_sets, self.data.z.size))
        sigma8 = np.broadcast_to(np.asarray(sets.get("sigma8", self.base.sigma8), dtype=float), n_sets)
        out[:, rows] = sigma8[:, None] * shapes[np.ravel(which)]
        return out

    def model_r_d(self, sets, n_sets):
        """r_drag of each set as ``acoustic_scales`` gives it [Mpc], vectorised.

        The calibrated formula (``model.r_drag_fit``; Aubourg et al. 2015, PRD 92, 123516,
        eq. 16) depends on the sets only through h0 and omega_m (omega_b stays the base
        model's, as ``Cosmology.replace`` keeps it). NaN where acoustic_scales has no value
        (no photons or no baryons) or Cosmology would refuse the set (omega_b > omega_cb).
        """
        h2 = (np.broadcast_to(sets.get("h0", self.base.h0), n_sets) / 100.0) ** 2
        omega_m = np.broadcast_to(sets.get("omega_m", self.base.omega_m), n_sets)
        omega_nu_h2 = self.base.omega_nu * self.base.h**2
        omega_cb_h2 = omega_m * h2 - omega_nu_h2
        omega_b_h2 = self.base.omega_b * h2
        valid = (self.base.omega_gamma > 0.0) & (omega_b_h2 > 0.0) & (omega_cb_h2 >= omega_b_h2)
        with np.errstate(invalid="ignore", divide="ignore"):
            r_d = r_drag_fit(np.where(valid, omega_cb_h2, 1.0), omega_b_h2, omega_nu_h2)
        return np.where(valid, r_d, np.nan)

    def score(self, sets):
        """:func:`profile_nuisances` output for parameter sets given as a dict of arrays.

        Keys are any of :data:`FIT_PARAMETERS`; an explicit ``r_d`` or ``offset``
        overrides the nuisance setting.
        """
        n_sets = np.broadcast(*(np.atleast_1d(v) for v in sets.values())).size if sets else 1
        cosmological = {n: sets[n] for n in COSMOLOGICAL if n in sets}
        quantities = self.batch.evaluate(**cosmological)
        base, bao = observable_parts(
            self.data, quantities["hubble_parameter"], quantities["comoving_distance"],
            quantities["transverse_comoving_distance"], self.growth(sets, cosmological, n_sets))
        # only nuisances vary (or none): every set shares the base model's distances
        base, bao = (np.broadcast_to(a, (n_sets, a.shape[1])) for a in (base, bao))
        if "r_d" in sets:
            r_d = np.broadcast_to(sets["r_d"], n_sets)
        elif self.nuisances.r_d == "free":
            r_d = None
        elif self.nuisances.r_d == "model":
            r_d = self.model_r_d(sets, n_sets) if self.needs_r_d else np.full(n_sets, np.nan)
        else:
            r_d = np.full(n_sets, float(self.nuisances.r_d))
        if "offset" in sets:
            offset = np.broadcast_to(sets["offset"], n_sets)
        elif self.nuisances.offset == "free":
            offset = None
        else:
            offset = np.full(n_sets, float(self.nuisances.offset))
        return profile_nuisances(self.data, base, bao, r_d, offset)


def _normalise_free(free):
    """{name: (low, high)} from a mapping or a sequence of names (default bounds)."""
    if isinstance(free, str):
        free = [free]
    items = free.items() if hasattr(free, "items") else ((name, None) for name in free)
    out = {}
    for name, bounds in items:
        if name not in FIT_PARAMETERS:
            raise FitError(f"free: unknown parameter {name!r}; expected some of {', '.join(FIT_PARAMETERS)}")
        unit, low, high = FIT_PARAMETERS[name]
        if bounds is not None:
            try:
                low, high = (float(b) for b in bounds)
            except (TypeError, ValueError):
                raise FitError(f"{name}: bounds must be two numbers (low, high), got {bounds!r}") from None
        if not (math.isfinite(low) and math.isfinite(high) and low < high):
            raise FitError(f"{name}: bounds must be finite with low < high, got ({low:g}, {high:g})")
        out[name] = (low, high)
    if not out:
        raise FitError("free: choose at least one parameter to fit")
    return out


# --------------------------------------------------------------------------------------------
# The quick fit


@dataclasses.dataclass(frozen=True, eq=False)
class FitResult:
    """Best fit of some parameters of a model to a measurement set.

    Attributes
    ----------
    names : tuple of str
        Fitted parameters, in the order of the arrays below.
    values, errors : ndarray
        Best-fit values and 1-sigma errors (units of :data:`FIT_PARAMETERS`).
    covariance, correlation : ndarray, shape (p, p)
        (J^T J)^-1 from the Jacobian J of the whitened residuals at the best
        fit, and its normalised form.
    chi2_min : float
        chi^2 at the best fit (free nuisances minimised).
    dof : int
        Measurements minus fitted parameters minus free nuisances.
    bounds : dict
        name -> (low, high) used.
    at_bound : tuple of str
        Parameters that ended on a bound (their errors are not meaningful).
    cosmology : Cosmology
        The base model with the fitted cosmological parameters.
    goodness : GoodnessOfFit
        Full report at the best fit, computed with ``model.evaluate``.
    success : bool
    message : str
        The optimiser's status text.
    n_evaluations : int
        Residual evaluations used by the optimiser.
    """

    names: tuple
    values: np.ndarray
    errors: np.ndarray
    covariance: np.ndarray
    correlation: np.ndarray
    chi2_min: float
    dof: int
    bounds: dict
    at_bound: tuple
    cosmology: object
    goodness: object
    success: bool
    message: str
    n_evaluations: int

    @property
    def best(self):
        """dict name -> best-fit value."""
        return dict(zip(self.names, self.values.tolist()))

    @property
    def sigma(self):
        """dict name -> 1-sigma error."""
        return dict(zip(self.names, self.errors.tolist()))

    def __repr__(self):
        parts = ", ".join(f"{n}={v:.6g}±{e:.2g}" for n, v, e in zip(self.names, self.values, self.errors))
        return f"FitResult({parts}, chi2_min={self.chi2_min:.4g}, dof={self.dof})"


def quick_fit(cosmo, data, free, nuisances=Nuisances(), *, max_evaluations=200, deadline=None):
    """Least-squares fit of chosen parameters of a model to a measurement set.

    Parameters
    ----------
    cosmo : Cosmology
        Start point; parameters not fitted keep its values.
    data : MeasurementSet
    free : mapping or sequence
        Parameters to fit, any of :data:`FIT_PARAMETERS` (h0, omega_m, omega_k,
        w0, wa, sigma8 and the nuisances r_d [Mpc] and offset [mag]); a mapping gives
        ``(low, high)`` bounds (None: the defaults of FIT_PARAMETERS). A nuisance
        listed here is fitted explicitly, overriding ``nuisances``.
    nuisances : Nuisances, optional
        Treatment of the nuisances not listed in ``free``.
    max_evaluations : int, optional
        Budget of residual evaluations for the optimiser.
    deadline : float, optional
        A ``time.monotonic()`` instant: the fit stops with :class:`FitError` when an
        evaluation would start after it (a server's time budget for one request).

    Returns
    -------
    FitResult

    Raises
    ------
    FitError
        Unknown parameter or bad bounds, no finite chi^2 at the start, or a best
        fit that is not a valid model.

    Notes
    -----
    ``scipy.optimize.least_squares`` (trust-region reflective, bounds) on the
    whitened residuals L^-1 (d - p), C = L L^T, with the free linear nuisances
    projected out (variable projection; Golub & Pereyra 1973, SIAM J. Numer.
    Anal. 10, 413). The Jacobian is taken by central differences in one batched
    evaluation. Errors and correlations come from the Gauss-Newton covariance
    (J^T J)^-1 (Press et al., Numerical Recipes, 3rd ed. 2007, section 15.5).
    """
    bounds = _normalise_free(free)
    names = tuple(bounds)
    problem = _Problem(cosmo, data, nuisances)
    unused = [n for n, needed in (("r_d", problem.needs_r_d), ("offset", problem.needs_offset),
                                  ("sigma8", problem.needs_sigma8)) if n in names and not needed]
    if unused:
        raise FitError(f"free: no measurement depends on {unused[0]}; leave it out")
    low = np.array([bounds[n][0] for n in names])
    high = np.array([bounds[n][1] for n in names])

    start = _start_values(problem, names)
    span = high - low
    x0 = np.clip(start, low + 1e-9 * span, high - 1e-9 * span)
    steps = 6e-6 * np.maximum(np.abs(x0), np.minimum(1.0, span))  # ~ eps^(1/3)
    n_evaluations = [0]

    def sets_of(matrix):
        return {name: matrix[:, j] for j, name in enumerate(names)}

    def in_time():
        if deadline is not None and time.monotonic() > deadline:
            raise FitError(f"stopped after {n_evaluations[0]} evaluations: the time budget ran out; "
                           "free fewer parameters, narrow the bounds or use a smaller table")

    def residuals(theta):
        in_time()
        n_evaluations[0] += 1
        return problem.score(sets_of(theta[None, :]))["whitened"][0]

    def jacobian(theta):
        in_time()
        up = np.minimum(theta + steps, high)
        down = np.maximum(theta - steps, low)
        p = theta.size
        matrix = np.repeat(theta[None, :], 2 * p, axis=0)
        matrix[np.arange(p), np.arange(p)] = up
        matrix[p + np.arange(p), np.arange(p)] = down
        whitened = problem.score(sets_of(matrix))["whitened"]
        return ((whitened[:p] - whitened[p:]) / (up - down)[:, None]).T

    if not np.all(np.isfinite(residuals(x0))):
        raise FitError("the start model has no finite chi^2 for these data (check the bounds "
                       "and the start values)")
    solution = optimize.least_squares(
        residuals, x0, jac=jacobian, bounds=(low, high), method="trf", x_scale="jac",
        ftol=1e-12, xtol=1e-12, gtol=1e-12, max_nfev=max_evaluations)
    theta = solution.x
    covariance = _gauss_newton_covariance(jacobian(theta))
    errors = np.sqrt(np.diag(covariance))
    with np.errstate(invalid="ignore", divide="ignore"):
        correlation = covariance / np.outer(errors, errors)
    at_bound = tuple(n for n, t, lo, hi in zip(names, theta, low, high)
                     if min(t - lo, hi - t) <= 1e-6 * (hi - lo))

    best = dict(zip(names, theta.tolist()))
    cosmological = {n: v for n, v in best.items() if n in COSMOLOGICAL or n == "sigma8"}
    label = f"{cosmo.label} (best fit)" if cosmo.label else "best fit"
    try:
        fitted = cosmo.replace(label=label, **cosmological)
    except ModelError as exc:
        raise FitError(f"the best fit {best} is not a valid model: {exc}") from exc
    fixed = Nuisances(r_d=best.get("r_d", nuisances.r_d), offset=best.get("offset", nuisances.offset))
    goodness = goodness_of_fit(fitted, data, fixed, n_free=len(names))
    chi2_min = float(2.0 * solution.cost)
    return FitResult(
        names=names, values=_frozen(theta), errors=_frozen(errors),
        covariance=_frozen(covariance), correlation=_frozen(correlation),
        chi2_min=chi2_min, dof=goodness.dof, bounds=bounds, at_bound=at_bound,
        cosmology=fitted, goodness=goodness, success=bool(solution.success),
        message=str(solution.message), n_evaluations=n_evaluations[0])


def _start_values(problem, names):
    """The base model's values; for a nuisance its fixed value, else its closed-form best
    value for the base model with both nuisances free."""
    free_nuisances = None
    values = []
    for name in names:
        setting = getattr(problem.base if name in COSMOLOGICAL or name == "sigma8" else problem.nuisances, name)
        if not isinstance(setting, str):
            values.append(float(setting))
            continue
        if free_nuisances is None:
            quantities = problem.batch.evaluate()
            base, bao = observable_parts(
                problem.data, quantities["hubble_parameter"], quantities["comoving_distance"],
                quantities["transverse_comoving_distance"], problem.growth({}, {}, 1))
            free_nuisances = profile_nuisances(problem.data, base, bao, None, None)
        values.append(float(free_nuisances[name][0]))
    return np.array(values, dtype=float)


def _gauss_newton_covariance(jacobian):
    """(J^T J)^-1 through the SVD of J, directions with no information get infinite variance."""
    _, singular, vt = np.linalg.svd(jacobian, full_matrices=False)
    tiny = singular <= np.finfo(float).eps * max(jacobian.shape) * (singular[0] if singular.size else 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        inverse = np.where(tiny, np.inf, 1.0 / singular**2)
        return (vt.T * inverse) @ vt


