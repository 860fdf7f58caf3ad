"""Quick fits and delta-chi^2 maps of cosmological parameters to a measurement set.

Both rest on :class:`DistanceBatch`, which computes H(z), D_C(z) and D_M(z)
at the measured redshifts for many parameter sets at once (vectorised over
the sets), instead of building one :class:`~model.Cosmology` per set.

Errors, drawn as a tree::

    ValueError
    └── ModelError          (model._errors)
        └── FitError        a fit or map cannot be set up or has no valid point
"""

import dataclasses
import math

import numpy as np
from scipy import optimize

from ._acoustic import r_drag_fit
from ._background import components
from ._constants import SPEED_OF_LIGHT_KM_S
from ._errors import ModelError
from ._likelihood import (BAO_KINDS, SUPERNOVA_KIND, Nuisances, goodness_of_fit,
                          observable_parts, profile_nuisances)
from ._measurements import _frozen
from ._params import PARAMETERS

__all__ = [
    "FIT_PARAMETERS",
    "CONFIDENCE_LEVELS_2D",
    "FitError",
    "FitResult",
    "Chi2Map",
    "DistanceBatch",
    "quick_fit",
    "chi2_map",
]

COSMOLOGICAL = ("h0", "omega_m", "omega_k", "w0", "wa")
_SPEC = {p.name: p for p in PARAMETERS}

#: name -> (unit, default lower bound, default upper bound) of every parameter a fit or
#: map can vary: the cosmological ones with the ranges Cosmology accepts, and the two
#: nuisances (sound horizon r_d [Mpc], supernova magnitude offset [mag]).
FIT_PARAMETERS = {
    **{name: (_SPEC[name].unit, _SPEC[name].minimum, _SPEC[name].maximum) for name in COSMOLOGICAL},
    "r_d": ("Mpc", 1.0, 1000.0),
    "offset": ("mag", -30.0, 30.0),
}

#: (probability, delta chi^2) of the joint confidence regions of two parameters for a
#: Gaussian likelihood: 68 % -> 2.30, 95 % -> 6.18 (common practice, no source; these are
#: scipy.stats.chi2.ppf(0.6827, 2) and chi2.ppf(0.9545, 2) rounded).
CONFIDENCE_LEVELS_2D = ((0.68, 2.30), (0.95, 6.18))

# Gauss-Lobatto-Legendre panels in u = ln(1+z), at most _PANEL wide: the 3-point rule
# (Simpson's) when at most _NARROW wide, the 5-point rule otherwise (exact for polynomials of
# degree 3 and 7; Abramowitz & Stegun 1964, eq. 25.4.32 and Table 25.6). Lobatto rules include
# the panel ends, so E at the data redshifts is shared by neighbouring panels and gives H(z)
# there at no extra cost. The integrand (1+z)/E changes on scales of order 0.1 in u even for
# extreme w0, wa; these rules are then accurate to better than 1e-10 relative.
_PANEL = 0.1
_NARROW = 0.02
# rule -> (interior nodes on [-1, 1], their weights, weight of each end)
_LOBATTO = {
    3: (np.array([0.0]), np.array([4.0 / 3.0]), 1.0 / 3.0),
    5: (np.array([-math.sqrt(3.0 / 7.0), 0.0, math.sqrt(3.0 / 7.0)]),
        np.array([49.0 / 90.0, 32.0 / 45.0, 49.0 / 90.0]), 1.0 / 10.0),
}
# Redshift-independent check for a big bang: E^2 > 0 on this grid in u (model._background
# checks the same range on a grid 25 times finer; a fit's best model passes that check too).
_BIG_BANG_U = np.linspace(0.0, 25.0, 126)
# Parameter sets per vectorised block, sized to keep temporaries near 10 MB.
_BLOCK_ELEMENTS = 1 << 20


class FitError(ModelError):
    """A fit or a map cannot be set up, or found no parameter set with a finite chi^2."""


def _lobatto_panels(edges):
    """Panels covering [edges[0], edges[-1]] with every edge a panel end.

    Returns the panel ends (E,), the interior nodes (I,) with their weights, the index of
    each panel's first interior node, the end weight of each panel (E - 1,), and the index
    in the ends of every edge.
    """
    ends, interior, weights, end_weights, starts, edge_index = [edges[0]], [], [], [], [], [0]
    n_interior = 0
    for lo, hi in zip(edges[:-1], edges[1:]):
        n_panels = max(1, math.ceil((hi - lo) / _PANEL))
        step = (hi - lo) / n_panels
        nodes, node_weights, end_weight = _LOBATTO[3 if step <= _NARROW else 5]
        for k in range(n_panels):
            left = lo + k * step
            starts.append(n_interior)
            n_interior += nodes.size
            interior.append(left + 0.5 * step * (nodes + 1.0))
            weights.append(0.5 * step * node_weights)
            end_weights.append(0.5 * step * end_weight)
            ends.append(hi if k == n_panels - 1 else left + step)
        edge_index.append(len(ends) - 1)
    concat = (lambda parts: np.concatenate(parts)) if interior else (lambda parts: np.zeros(0))
    return (np.array(ends), concat(interior), concat(weights), np.array(starts, dtype=int),
            np.array(end_weights), np.array(edge_index, dtype=int))


class DistanceBatch:
    """H(z), D_C(z) and D_M(z) at fixed redshifts for many parameter sets at once.

    Parameters
    ----------
    base : Cosmology
        Supplies everything that is not varied: T_CMB, N_eff, neutrino masses
        and the default values of h0, omega_m, omega_k, w0, wa.
    z : array_like, 1-D
        Redshifts, ``0 <= z <= 1e5``, any order, repeats allowed.

    Notes
    -----
    D_C = (c/H0) ∫_0^ln(1+z) e^u / E du (Hogg 1999, arXiv:astro-ph/9905116, eq. 15,
    in u = ln(1+z)), by fixed Gauss-Lobatto-Legendre panels between the sorted
    distinct redshifts, summed cumulatively; D_M from D_C (eq. 16), NaN beyond the antipode
    of a closed model. E^2 = Omega_cb (1+z)^3 + R(z) (h_base/h)^2 + Omega_k (1+z)^2
    + Omega_de f_de(z), where R(z) is the base model's photon and neutrino density
    over its critical density today (``model._background.components``; it scales as
    1/h^2 at fixed T_CMB and neutrino masses), Omega_cb = Omega_m - Omega_nu, and
    f_de = exp[3(1+w0+wa) u - 3 wa (1 - e^-u)] (Linder 2003, PRL 90, 091301, eq. 5).
    Sets whose E^2 is not positive somewhere between z = 0 and z ~ 7e10 (no big
    bang) give NaN.
    """

    def __init__(self, base, z):
        z = np.asarray(z, dtype=float)
        if z.ndim != 1 or not np.all(np.isfinite(z)) or (z.size and (z.min() < 0 or z.max() > 1e5)):
            raise ValueError("z: expected a 1-D array of redshifts 0 <= z <= 1e5")
        self.base = base
        self.z = z
        distinct, inverse = np.unique(z, return_inverse=True)
        edges = np.concatenate([[0.0], np.log1p(distinct[distinct > 0.0])])
        ends, interior, weights, self._starts, end_weights, edge_index = _lobatto_panels(edges)
        # Column of the panel ends holding each input redshift (z = 0 is the first end).
        self._column = (edge_index if distinct[0] == 0.0 else edge_index[1:])[inverse] \
            if z.size else np.zeros(0, dtype=int)
        # Every redshift where E^2 is needed: panel ends, interior nodes, big-bang check.
        self._u = np.concatenate([ends, interior, _BIG_BANG_U])
        self._n_ends, self._n_interior = ends.size, interior.size
        x = np.exp(self._u)
        c = components(base, np.expm1(self._u))
        radiation = c["photons"] + c["neutrinos_massless"] + c["neutrinos_massive"]
        self._matter_basis = np.stack([x**3, radiation, x**2])
        self._de_basis = np.stack([self._u, -np.expm1(-self._u)])  # u and 1 - a
        # Quadrature weights times e^u (the integrand is e^u / E in u).
        self._end_factor = x[:ends.size]
        self._end_weights = end_weights
        self._interior_factor = x[ends.size:ends.size + interior.size] * weights
        self._h2_base = base.h**2
        self._omega_nu_h2 = base.omega_nu * self._h2_base
        self._omega_r_h2 = base.omega_r * self._h2_base

    def defaults(self):
        """The base model's values of the varied parameters, as a dict of floats."""
        return {name: float(getattr(self.base, name)) for name in COSMOLOGICAL}

    def _e2(self, h0, omega_m, omega_k, w0, wa):
        """E^2 at every redshift of the batch for parameter columns of shape (P, 1).

        Written as matrix products of per-set coefficients with per-redshift basis rows,
        which is several times faster than broadcasting element by element.
        """
        h2 = (h0 / 100.0) ** 2
        omega_cb = omega_m - self._omega_nu_h2 / h2
        omega_de = 1.0 - omega_m - omega_k - self._omega_r_h2 / h2
        coefficients = np.concatenate([omega_cb, self._h2_base / h2, omega_k], axis=1)
        if np.all((w0 == -1.0) & (wa == 0.0)):
            return coefficients @ self._matter_basis + omega_de
        exponent = np.concatenate([3.0 * (1.0 + w0 + wa), -3.0 * wa], axis=1) @ self._de_basis
        with np.errstate(over="ignore"):
            np.exp(exponent, out=exponent)
        exponent *= omega_de
        exponent += coefficients @ self._matter_basis
        return exponent

    def evaluate(self, **params):
        """H, D_C and D_M at the batch's redshifts for P parameter sets.

        Parameters
        ----------
        h0, omega_m, omega_k, w0, wa : array_like, optional
            Values for each set, broadcast to a common shape (P,); missing
            ones take the base model's value.

        Returns
        -------
        dict
            ``hubble_parameter`` [km/s/Mpc], ``comoving_distance`` and
            ``transverse_comoving_distance`` [Mpc], each of shape (P, N) for the
            N redshifts given at construction; NaN for sets with no big bang and
            beyond a closed model's antipode.
        """
        unknown = set(params) - set(COSMOLOGICAL)
        if unknown:
            raise ValueError(f"unknown parameter(s) {sorted(unknown)}; expected some of {COSMOLOGICAL}")
        values = {**self.defaults(), **params}
        arrays = np.broadcast_arrays(*(np.atleast_1d(np.asarray(values[n], dtype=float))
                                       for n in COSMOLOGICAL))
        if arrays[0].ndim != 1:
            raise ValueError("parameters: expected scalars or 1-D arrays")
        n_sets = arrays[0].size
        block = max(1, _BLOCK_ELEMENTS // self._u.size)
        out = {key: np.empty((n_sets, self.z.size)) for key in
               ("hubble_parameter", "comoving_distance", "transverse_comoving_distance")}
        for start in range(0, n_sets, block):
            rows = slice(start, start + block)
            self._evaluate_block(*(a[rows, None] for a in arrays),
                                 out={key: value[rows] for key, value in out.items()})
        return out

    def _evaluate_block(self, h0, omega_m, omega_k, w0, wa, out):
        """Fill ``out`` (views of shape (P, N)) for the parameter columns of shape (P, 1)."""
        e2 = self._e2(h0, omega_m, omega_k, w0, wa)
        n_sets, ne, ni = e2.shape[0], self._n_ends, self._n_interior
        with np.errstate(invalid="ignore", divide="ignore"):
            no_big_bang = ~np.all(e2 > 0.0, axis=1)
            e = np.sqrt(e2[:, :ne + ni])
            chi = np.zeros((n_sets, ne))
            if ne > 1:
                at_ends = self._end_factor / e[:, :ne]
                panels = np.add.reduceat(self._interior_factor / e[:, ne:], self._starts, axis=1)
                panels += self._end_weights * (at_ends[:, :-1] + at_ends[:, 1:])
                np.cumsum(panels, axis=1, out=chi[:, 1:])
            d_c, d_m, hubble = (out[k] for k in ("comoving_distance",
                                                 "transverse_comoving_distance",
                                                 "hubble_parameter"))
            np.take(chi, self._column, axis=1, out=d_c)
            if np.any(omega_k != 0.0):
                np.multiply(d_c, _curvature_shape(omega_k, d_c), out=d_m)
            else:
                d_m[...] = d_c
            d_c *= SPEED_OF_LIGHT_KM_S / h0
            d_m *= SPEED_OF_LIGHT_KM_S / h0
            np.take(e, self._column, axis=1, out=hubble)
            hubble *= h0
            for array in (d_c, d_m, hubble):
                array[no_big_bang] = np.nan


def _curvature_shape(omega_k, chi):
    """D_M / D_C = sinh(s)/s (open), sin(s)/s (closed), 1 (flat), s = sqrt|Omega_k| D_C/D_H
    (Hogg 1999, eq. 16); NaN beyond a closed model's antipode, s > pi."""
    s = np.sqrt(np.abs(omega_k)) * chi
    safe = np.where(s > 0.0, s, 1.0)
    shape = np.where(omega_k > 0.0, np.sinh(safe) / safe,
                     np.where(s <= math.pi, np.sin(safe) / safe, np.nan))
    return np.where((omega_k == 0.0) | (s == 0.0), 1.0, shape)


# --------------------------------------------------------------------------------------------
# chi^2 of many parameter sets


class _Problem:
    """A measurement set, a base model and nuisance settings, ready to score parameter sets."""

    def __init__(self, base, data, nuisances):
        if not isinstance(nuisances, Nuisances):
            raise TypeError(f"nuisances: expected a Nuisances, got {type(nuisances).__name__}")
        self.base, self.data, self.nuisances = base, data, nuisances
        self.batch = DistanceBatch(base, data.z)
        self.needs_r_d = bool(np.isin(data.kind, BAO_KINDS).any())
        self.needs_offset = bool(np.any(data.kind == SUPERNOVA_KIND))

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
            quantities["transverse_comoving_distance"])
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


def quick_fit(cosmo, data, free, nuisances=Nuisances(), *, max_evaluations=200):
    """Least-squares fit of chosen parameters of a model to a measurement set.

    Parameters
    ----------
    cosmo : Cosmology
        Start point; parameters not fitted keep its values.
    data : MeasurementSet
    free : mapping or sequence
        Parameters to fit, any of :data:`FIT_PARAMETERS` (h0, omega_m, omega_k,
        w0, wa and the nuisances r_d [Mpc] and offset [mag]); a mapping gives
        ``(low, high)`` bounds (None: the defaults of FIT_PARAMETERS). A nuisance
        listed here is fitted explicitly, overriding ``nuisances``.
    nuisances : Nuisances, optional
        Treatment of the nuisances not listed in ``free``.
    max_evaluations : int, optional
        Budget of residual evaluations for the optimiser.

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
    unused = [n for n, needed in (("r_d", problem.needs_r_d), ("offset", problem.needs_offset))
              if n in names and not needed]
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

    def residuals(theta):
        n_evaluations[0] += 1
        return problem.score(sets_of(theta[None, :]))["whitened"][0]

    def jacobian(theta):
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
    cosmological = {n: v for n, v in best.items() if n in COSMOLOGICAL}
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
        setting = getattr(problem.base if name in COSMOLOGICAL else problem.nuisances, name)
        if not isinstance(setting, str):
            values.append(float(setting))
            continue
        if free_nuisances is None:
            quantities = problem.batch.evaluate()
            base, bao = observable_parts(
                problem.data, quantities["hubble_parameter"], quantities["comoving_distance"],
                quantities["transverse_comoving_distance"])
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


# --------------------------------------------------------------------------------------------
# delta chi^2 maps


@dataclasses.dataclass(frozen=True, eq=False)
class Chi2Map:
    """chi^2 on a grid of two parameters, the others held at the base model's values.

    Attributes
    ----------
    x_name, y_name : str
        The two parameters (keys of :data:`FIT_PARAMETERS`).
    x, y : ndarray
        Grid values along each axis (units of FIT_PARAMETERS).
    chi2 : ndarray, shape (len(y), len(x))
        chi^2 at each node, ``chi2[j, i]`` at ``(x[i], y[j])``, free nuisances
        minimised; NaN where the parameters give no valid model (no big bang,
        beyond a closed antipode).
    delta_chi2 : ndarray, shape (len(y), len(x))
        chi2 minus its smallest value on the grid.
    chi2_min : float
    best : dict
        ``{x_name: value, y_name: value}`` of the grid node with the smallest chi^2.
    levels : tuple of (probability, delta chi^2)
        :data:`CONFIDENCE_LEVELS_2D`, the contours to draw.
    """

    x_name: str
    y_name: str
    x: np.ndarray
    y: np.ndarray
    chi2: np.ndarray
    delta_chi2: np.ndarray
    chi2_min: float
    best: dict
    levels: tuple = CONFIDENCE_LEVELS_2D

    def __repr__(self):
        return (f"Chi2Map({self.y_name} x {self.x_name}: {self.y.size} x {self.x.size}, "
                f"chi2_min={self.chi2_min:.4g} at {self.best})")


def _axis(name, values):
    if name not in FIT_PARAMETERS:
        raise FitError(f"unknown map parameter {name!r}; expected one of {', '.join(FIT_PARAMETERS)}")
    values = np.asarray(values, dtype=float)
    if values.ndim != 1 or values.size < 2 or not np.all(np.isfinite(values)):
        raise FitError(f"{name}: expected at least two finite grid values in a 1-D array")
    _, low, high = FIT_PARAMETERS[name]
    if values.min() < low or values.max() > high:
        raise FitError(f"{name}: grid values must lie within [{low:g}, {high:g}]")
    return values


def chi2_map(cosmo, data, x_name, x_values, y_name, y_values, nuisances=Nuisances()):
    """chi^2 and delta chi^2 of a measurement set on a grid of two parameters.

    Parameters
    ----------
    cosmo : Cosmology
        Supplies every parameter not on the grid.
    data : MeasurementSet
    x_name, y_name : str
        Two different keys of :data:`FIT_PARAMETERS` (a nuisance on an axis is
        fixed to each grid value).
    x_values, y_values : array_like, 1-D
        Grid values (units of FIT_PARAMETERS).
    nuisances : Nuisances, optional
        Treatment of the nuisances not on an axis (free ones are minimised at
        every node in closed form).

    Returns
    -------
    Chi2Map

    Notes
    -----
    All nodes are computed in one vectorised pass of :class:`DistanceBatch`;
    the other cosmological parameters are held fixed, not minimised over. The
    68 % and 95 % joint regions of two parameters are delta chi^2 < 2.30 and
    6.18 (common practice, no source).
    """
    if x_name == y_name:
        raise FitError(f"the two map parameters must differ, both are {x_name!r}")
    x = _axis(x_name, x_values)
    y = _axis(y_name, y_values)
    problem = _Problem(cosmo, data, nuisances)
    for name in (x_name, y_name):
        if name == "r_d" and not problem.needs_r_d or name == "offset" and not problem.needs_offset:
            raise FitError(f"no measurement depends on {name}; choose another map parameter")
    grid_x, grid_y = np.meshgrid(x, y)
    chi2 = problem.score({x_name: grid_x.ravel(), y_name: grid_y.ravel()})["chi2"]
    chi2 = chi2.reshape(grid_x.shape)
    if not np.isfinite(chi2).any():
        raise FitError("no node of the grid gives a valid model for these data")
    j, i = np.unravel_index(np.nanargmin(chi2), chi2.shape)
    chi2_min = float(chi2[j, i])
    return Chi2Map(x_name=x_name, y_name=y_name, x=_frozen(x), y=_frozen(y),
                   chi2=_frozen(chi2), delta_chi2=_frozen(chi2 - chi2_min), chi2_min=chi2_min,
                   best={x_name: float(x[i]), y_name: float(y[j])})
