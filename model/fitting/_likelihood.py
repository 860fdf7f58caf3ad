"""Goodness of fit of models to a :class:`~model.MeasurementSet`.

Gaussian likelihood with the full covariance C of the measurements:

    chi^2 = r^T C^-1 r,   r = data - prediction,

computed with the Cholesky factor C = L L^T as |L^-1 r|^2 (whitened residuals).

Two nuisance parameters enter the predictions linearly and can be left free:

* the supernova absolute-magnitude offset ``offset`` [mag], added to every
  ``distance_modulus`` prediction, and
* the inverse sound horizon 1/r_d [Mpc^-1], multiplying every D/r_d
  prediction when ``r_d`` is ``"free"``.

Free linear nuisances are removed in closed form by generalised least squares
(chi^2 minimised over them). For the additive offset this is the analytic
marginalisation over a flat prior of Goliath et al. (2001) and Conley et al.
(2011): with a = r^T C^-1 r, b = r^T C^-1 1, e = 1^T C^-1 1 (sums over the
supernova rows),

    -2 ln ∫ exp(-chi^2(M)/2) dM = a - b^2/e + ln(e / 2 pi),

and a - b^2/e is the minimum over M; the last term does not depend on the
model and is left out of the reported chi^2. For 1/r_d the minimum (profile)
is reported.
"""

import dataclasses
import math

import numpy as np
from scipy import linalg, stats

from .._acoustic import acoustic_scales
from .._distances import evaluate
from ._kinds import GROWTH_PREDICTIONS, MEASUREMENT_KINDS, PREDICTIONS, kinds_with
from ._measurements import _frozen

__all__ = [
    "Nuisances",
    "GoodnessOfFit",
    "goodness_of_fit",
    "KindResiduals",
    "compare_models",
]



@dataclasses.dataclass(frozen=True)
class Nuisances:
    """How the two nuisance parameters are treated.

    Attributes
    ----------
    r_d : {"model", "free"} or float
        Sound horizon at the drag epoch for the D/r_d kinds: ``"model"`` takes
        ``acoustic_scales(cosmo)["r_drag"]`` of each model; ``"free"`` leaves it
        free (chi^2 minimised over 1/r_d in closed form); a number fixes it [Mpc].
    offset : "free" or float
        Supernova absolute-magnitude offset added to every predicted distance
        modulus: ``"free"`` marginalises it analytically; a number fixes it [mag].
    """

    r_d: object = "model"
    offset: object = "free"

    def __post_init__(self):
        if not (self.r_d in ("model", "free") or _positive_number(self.r_d)):
            raise ValueError(f"r_d: expected 'model', 'free' or a positive number of Mpc, got {self.r_d!r}")
        if not (self.offset == "free" or _finite_number(self.offset)):
            raise ValueError(f"offset: expected 'free' or a finite number of mag, got {self.offset!r}")


def _finite_number(x):
    return isinstance(x, (int, float, np.integer, np.floating)) and not isinstance(x, bool) \
        and math.isfinite(x)


def _positive_number(x):
    return _finite_number(x) and x > 0.0


# --------------------------------------------------------------------------------------------
# Predictions from the three background quantities every kind is built from


def observable_parts(data, hubble, comoving, transverse, growth=None):
    """Predictions of every row from H(z), D_C(z) and D_M(z), before the nuisances.

    Parameters
    ----------
    data : MeasurementSet
    hubble, comoving, transverse : ndarray, shape (P, N)
        H(z) [km/s/Mpc], line-of-sight and transverse comoving distance [Mpc]
        of P parameter sets at the N data redshifts.
    growth : ndarray, shape (P, N) or (N,), optional
        fσ₈(z) of the sets at the data redshifts (dimensionless; only its rows of
        the growth kinds are read); without it those rows are predicted as NaN.

    Returns
    -------
    base : ndarray, shape (P, N)
        Prediction of every row, with 0 for the D/r_d rows and no offset on the
        distance moduli.
    bao : ndarray, shape (P, N)
        The distance [Mpc] of every D/r_d row (D_M, c/H or D_V), 0 elsewhere:
        the prediction is ``bao / r_d``.

    Notes
    -----
    Each row's kind names its quantity (:data:`~model.MEASUREMENT_KINDS`), formed from
    the three distances by :data:`~model.fitting.PREDICTIONS` (Hogg 1999,
    arXiv:astro-ph/9905116, sections 5 to 8; Eisenstein et al. 2005, ApJ 633, 560); the
    growth kinds (:data:`~model.fitting.GROWTH_PREDICTIONS`) are ``growth`` itself.
    """
    hubble, comoving, transverse, growth = np.broadcast_arrays(
        np.atleast_2d(hubble), np.atleast_2d(comoving), np.atleast_2d(transverse),
        np.atleast_2d(np.nan if growth is None else growth))
    base = np.zeros(hubble.shape)
    bao = np.zeros(hubble.shape)
    with np.errstate(divide="ignore", invalid="ignore"):
        for key in data.kinds_present:
            kind = MEASUREMENT_KINDS[key]
            rows = _selector(data.kind == key)
            if kind.quantity in GROWTH_PREDICTIONS:
                predicted = growth[:, rows]
            else:
                predicted = PREDICTIONS[kind.quantity](
                    data.z[rows], data.z_helio[rows], hubble[:, rows], comoving[:, rows],
                    transverse[:, rows])
            (bao if kind.nuisance == "r_d" else base)[:, rows] = predicted
    return base, bao


def _selector(mask):
    """A slice where the selected rows are contiguous (views, no copies), else their indices."""
    index = np.flatnonzero(mask)
    if index.size and index[-1] - index[0] + 1 == index.size:
        return slice(int(index[0]), int(index[-1]) + 1)
    return index


def _whiten(data, x):
    """L^-1 x for every row of x (shape (P, N) or (N,)); NaN propagates.

    Without a covariance file L has at most one off-diagonal entry per row, L[j, i] with
    i < j the first row of j's pair (``data.pair_rows``, ``data.pair_factor``), and row i
    has none: forward substitution then takes one vectorised step on O(N) numbers instead
    of a dense triangular solve.
    """
    if data.covariance_source == "file":
        return linalg.solve_triangular(data.file_cholesky, x.T, lower=True, check_finite=False).T
    diagonal = data.factor_diagonal
    whitened = x / diagonal
    if len(data.pair_rows):
        first, second = data.pair_rows.T
        whitened[..., second] -= whitened[..., first] * (data.pair_factor / diagonal[second])
    return whitened


def _row_dot(a, b):
    """Inner products row by row of arrays of shape (P, N) or (N,) (broadcast to (P,))."""
    if a.ndim == 1 or b.ndim == 1:
        return (b @ a) if a.ndim == 1 else (a @ b)
    return np.einsum("pn,pn->p", a, b)


def profile_nuisances(data, base, bao, r_d, offset):
    """chi^2 of P parameter sets with the free linear nuisances minimised in closed form.

    Parameters
    ----------
    data : MeasurementSet
    base, bao : ndarray, shape (P, N)
        From :func:`observable_parts`.
    r_d : ndarray of shape (P,), or None
        Sound horizon [Mpc] of each set; None leaves 1/r_d free.
    offset : ndarray of shape (P,), or None
        Supernova magnitude offset [mag]; None leaves it free.

    Returns
    -------
    dict
        ``chi2`` (P,), ``whitened`` (P, N) residuals L^-1 (data - prediction)
        with the free nuisances at their best values (chi2 is their squared
        norm), ``prediction`` (P, N), ``r_d`` and ``offset`` (P,) as used or
        fitted (NaN where no row depends on them) and ``n_profiled`` (int).

    Notes
    -----
    Generalised least squares for the prediction p0 + A theta, linear in the
    free nuisances theta: theta = (A^T C^-1 A)^-1 A^T C^-1 (d - p0), evaluated
    on whitened arrays (e.g. Press et al., Numerical Recipes, 3rd ed. 2007,
    section 15.4).
    """
    supernova = np.isin(data.kind, kinds_with("offset"))
    acoustic = np.isin(data.kind, kinds_with("r_d"))
    n_sets = base.shape[0]
    prediction = base.copy()
    columns, names = [], []
    if r_d is None:
        if acoustic.any():
            columns.append(bao)
            names.append("inverse_r_d")
    else:
        r_d = np.broadcast_to(np.asarray(r_d, dtype=float), (n_sets,))
        prediction[:, acoustic] += bao[:, acoustic] / r_d[:, None]
    if offset is None:
        if supernova.any():
            columns.append(supernova.astype(float))  # the same for every set: shape (N,)
            names.append("offset")
    else:
        offset = np.broadcast_to(np.asarray(offset, dtype=float), (n_sets,))
        prediction[:, supernova] += offset[:, None]

    whitened = _whiten(data, data.value - prediction)
    fitted = {}
    if columns:
        design = [_whiten(data, c) for c in columns]
        k = len(design)
        normal = np.empty((n_sets, k, k))
        rhs = np.empty((n_sets, k))
        for i in range(k):
            rhs[:, i] = _row_dot(design[i], whitened)
            for j in range(i + 1):
                normal[:, i, j] = normal[:, j, i] = _row_dot(design[i], design[j])
        with np.errstate(invalid="ignore"):
            finite = np.isfinite(normal).all(axis=(1, 2)) & np.isfinite(rhs).all(axis=1)
        theta = np.full(rhs.shape, np.nan)
        if finite.any():
            theta[finite] = np.linalg.solve(normal[finite], rhs[finite][..., None])[..., 0]
        for i, (name, column) in enumerate(zip(names, columns)):
            whitened -= theta[:, i, None] * design[i]
            prediction += theta[:, i, None] * column
            fitted[name] = theta[:, i]
    nan = np.full(n_sets, np.nan)
    if "inverse_r_d" in fitted:
        with np.errstate(divide="ignore"):
            r_d = 1.0 / fitted["inverse_r_d"]
    elif r_d is None or not acoustic.any():
        r_d = nan
    if "offset" in fitted:
        offset = fitted["offset"]
    elif offset is None or not supernova.any():
        offset = nan
    return {
        "chi2": np.einsum("pn,pn->p", whitened, whitened),
        "whitened": whitened,
        "prediction": prediction,
        "r_d": np.array(r_d, dtype=float),
        "offset": np.array(offset, dtype=float),
        "n_profiled": len(columns),
    }


def information_criteria(chi2, n_parameters, n_points):
    """AIC = chi^2 + 2k (Akaike 1974, IEEE Trans. Autom. Control 19, 716) and
    BIC = chi^2 + k ln N (Schwarz 1978, Ann. Stat. 6, 461), with chi^2 = -2 ln L_max
    up to a model-independent constant."""
    return chi2 + 2.0 * n_parameters, chi2 + n_parameters * math.log(n_points)


@dataclasses.dataclass(frozen=True)
class KindResiduals:
    """Residuals of one measurement kind, rows in file order.

    Attributes: ``kind``, ``unit``, and arrays ``z``, ``value``, ``error``,
    ``prediction``, ``residual`` (value - prediction, in the kind's unit) and
    ``pull`` (residual / error), plus ``label`` (tuple of str).
    """

    kind: str
    unit: str
    z: np.ndarray
    value: np.ndarray
    error: np.ndarray
    prediction: np.ndarray
    residual: np.ndarray
    pull: np.ndarray
    label: tuple


@dataclasses.dataclass(frozen=True, eq=False)
class GoodnessOfFit:
    """chi^2 and residuals of one model against a measurement set.

    Attributes
    ----------
    label : str
        The model's label.
    chi2 : float
        Minimum over the free nuisances of r^T C^-1 r (NaN where the model
        has no finite prediction for some row).
    n_points, n_parameters, dof : int
        Measurements N, free parameters k (fitted plus free nuisances that
        some row depends on) and degrees of freedom N - k.
    p_value : float
        Probability of a chi^2 at least this large, ``scipy.stats.chi2.sf(chi2, dof)``
        (NaN if dof < 1).
    aic, bic : float
        Akaike and Bayesian information criteria (see :func:`information_criteria`).
    delta_chi2 : float
        chi2 minus the reference model's (NaN unless built by :func:`compare_models`).
    r_d : float
        Sound horizon used or fitted [Mpc] (NaN without D/r_d rows).
    offset : float
        Supernova magnitude offset used or fitted [mag] (NaN without supernovae).
    prediction, residual, pull : ndarray, shape (N,)
        Prediction with the nuisances applied, data minus prediction and
        residual / error (diagonal errors; with correlations the pulls are
        not independent).
    data : MeasurementSet
    nuisances : Nuisances
    """

    label: str
    chi2: float
    n_points: int
    n_parameters: int
    dof: int
    p_value: float
    aic: float
    bic: float
    delta_chi2: float
    r_d: float
    offset: float
    prediction: np.ndarray
    residual: np.ndarray
    pull: np.ndarray
    data: object
    nuisances: Nuisances

    def by_kind(self):
        """dict kind -> :class:`KindResiduals`, kinds in the order of MEASUREMENT_KINDS."""
        out = {}
        for kind in self.data.kinds_present:
            rows = self.data.kind == kind
            out[kind] = KindResiduals(
                kind=kind, unit=MEASUREMENT_KINDS[kind].unit, z=self.data.z[rows],
                value=self.data.value[rows], error=self.data.error[rows],
                prediction=self.prediction[rows], residual=self.residual[rows],
                pull=self.pull[rows], label=tuple(np.asarray(self.data.label, dtype=object)[rows]))
        return out

    def __repr__(self):
        return (f"GoodnessOfFit(label={self.label!r}, chi2={self.chi2:.4g}, dof={self.dof}, "
                f"p_value={self.p_value:.3g})")


def _resolve(nuisances, cosmo, data):
    """Turn the nuisance settings into numbers, or None for free ones."""
    if nuisances.r_d == "free":
        r_d = None
    elif nuisances.r_d == "model":
        needs = np.isin(data.kind, kinds_with("r_d")).any()
        r_d = acoustic_scales(cosmo)["r_drag"] if needs else np.nan
    else:
        r_d = float(nuisances.r_d)
    offset = None if nuisances.offset == "free" else float(nuisances.offset)
    return r_d, offset


def _summarise(label, data, nuisances, profiled, n_free):
    """A :class:`GoodnessOfFit` from row 0 of :func:`profile_nuisances` output."""
    chi2 = float(profiled["chi2"][0])
    n_points = len(data)
    n_parameters = int(n_free) + profiled["n_profiled"]
    dof = n_points - n_parameters
    p_value = float(stats.chi2.sf(chi2, dof)) if dof >= 1 and math.isfinite(chi2) else math.nan
    aic, bic = information_criteria(chi2, n_parameters, n_points)
    prediction = profiled["prediction"][0]
    residual = data.value - prediction
    return GoodnessOfFit(
        label=label, chi2=chi2, n_points=n_points, n_parameters=n_parameters, dof=dof,
        p_value=p_value, aic=aic, bic=bic, delta_chi2=math.nan,
        r_d=float(profiled["r_d"][0]), offset=float(profiled["offset"][0]),
        prediction=_frozen(prediction), residual=_frozen(residual),
        pull=_frozen(residual / data.error), data=data, nuisances=nuisances)


def goodness_of_fit(cosmo, data, nuisances=Nuisances(), n_free=0):
    """chi^2, degrees of freedom, p-value, AIC/BIC and residuals of one model.

    Parameters
    ----------
    cosmo : Cosmology
    data : MeasurementSet
    nuisances : Nuisances, optional
        Treatment of r_d and of the supernova offset (default: r_d from the
        model, offset marginalised).
    n_free : int, optional
        Cosmological parameters fitted to these data (0 for a model given by
        hand); counted in dof, AIC and BIC together with the free nuisances.

    Returns
    -------
    GoodnessOfFit

    Notes
    -----
    chi^2 = |L^-1 (d - p)|^2 with C = L L^T; free linear nuisances minimised in
    closed form (:func:`profile_nuisances`); for the supernova offset this is
    the analytic marginalisation of Goliath et al. 2001 (A&A 380, 6, appendix)
    and Conley et al. 2011 (ApJS 192, 1, appendix C) without its constant
    ln(e/2 pi).

    References
    ----------
    Goliath, M. et al. 2001, A&A 380, 6. Conley, A. et al. 2011, ApJS 192, 1.
    """
    quantities = evaluate(cosmo, data.z)
    base, bao = observable_parts(
        data, quantities["hubble_parameter"], quantities["comoving_distance"],
        quantities["transverse_comoving_distance"], quantities["f_sigma8"])
    r_d, offset = _resolve(nuisances, cosmo, data)
    profiled = profile_nuisances(data, base, bao, r_d, offset)
    return _summarise(cosmo.label, data, nuisances, profiled, n_free)


def compare_models(models, data, nuisances=Nuisances(), reference=0, n_free=0):
    """:func:`goodness_of_fit` for several models, with delta chi^2 against one of them.

    Parameters
    ----------
    models : sequence of Cosmology
    data : MeasurementSet
    nuisances : Nuisances, optional
    reference : int, optional
        Index of the reference model in ``models``.
    n_free : int or sequence of int, optional
        Fitted parameters of each model.

    Returns
    -------
    tuple of GoodnessOfFit
        In the order of ``models``; ``delta_chi2 = chi2 - chi2[reference]``.
    """
    models = list(models)
    if not 0 <= reference < len(models):
        raise ValueError(f"reference: expected an index 0..{len(models) - 1}, got {reference!r}")
    counts = [n_free] * len(models) if np.isscalar(n_free) else list(n_free)
    results = [goodness_of_fit(m, data, nuisances, k) for m, k in zip(models, counts)]
    chi2_ref = results[reference].chi2
    return tuple(dataclasses.replace(r, delta_chi2=r.chi2 - chi2_ref) for r in results)
