"""Model results for the page and the API, memoized per model by its canonical parameters.

Editing one card changes one model's cache key only, so only that model is recomputed. Curves
carry `GRID_POINTS` points (the energy budget's, `BUDGET_POINTS`) rounded to `SIGNIFICANT_DIGITS`
digits to keep responses small;
the API's values at the link's redshifts are not rounded (they equal `model.evaluate`).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

import model
from server import codec
from server.cache import in_process, memoized, request_deadline

__all__ = [
    "GRID_POINTS", "BUDGET_POINTS", "LINEAR_GRID_ZMAX", "SIGNIFICANT_DIGITS", "A_MIN", "A_MAX", "GUIDE_POWERS", "Resolved", "resolve",
    "resolve_all", "model_curves", "values_at", "round_significant", "json_ready", "survey_volume", "inverse_lookup",
    "cosmology_for", "goodness", "fit", "chi2_grid", "fitted_count",
]

GRID_POINTS = 400
SIGNIFICANT_DIGITS = 6
A_MIN, A_MAX = 1e-7, 10.0  # energy budget from deep in the radiation era into the future
# the budget's scale-factor grid: 25 points a decade over those 8 decades, where the fractions
# and densities change over a decade or more (a segment is under 2 px on a four-model small plot
# of about 330 px); the panel draws about 60 curves of them, and 400 points made its update
# 334 KiB, 200 make it 216 KiB, with no visible change (a judgement, no source)
BUDGET_POINTS = 200

_URL_KEY_OF = {name: key for key, name in codec.MODEL_KEYS}


@dataclass(frozen=True)
class Resolved:
    """A model slot after validation: the Cosmology (unlabelled, shared by every slot with the
    same parameters; the label is in `state`), or the problem that stopped it."""

    state: codec.ModelState
    cosmology: model.Cosmology | None
    problem: codec.Problem | None

    @functools.cached_property
    def key(self) -> str:  # computed once: panels look it up per model and per table
        return codec.model_cache_key(self.state)


def resolve(state: codec.ModelState) -> Resolved:
    """Validate one slot with the model. A value the link could not read is its own problem and
    comes first; the model's `ParameterError` names its field, `NoBigBangError` the slot."""
    own = state.problems()
    if own:
        return Resolved(state, None, own[0])
    prefix = f"m{state.slot}"
    try:
        cosmo = cosmology_for(codec.model_cache_key(state))  # the label is the state's, not needed here
    except model.ParameterError as err:
        if err.field == "omega_k" and state.omega_de is not None:
            # Ω_k was derived from the Ω_de the card gives: name the key that was sent
            key = f"{prefix}.ode"
            return Resolved(state, None, codec.Problem(key, (
                f"{key}: Ω_de = {codec.format_number(state.omega_de)} makes the derived curvature "
                f"Ω_k = 1 − Ω_m − Ω_de − Ω_r = {_value_text(err.value)}, outside {err.expected}; "
                "choose Ω_de (or Ω_m) so that Ω_k stays in that range")))
        key = f"{prefix}.{_URL_KEY_OF.get(err.field, err.field)}"
        return Resolved(state, None, codec.Problem(key, f"{key}: {_value_text(err.value)} is not accepted; "
                                                        f"expected {err.expected}"))
    except model.NoBigBangError as err:
        text = str(err)
        return Resolved(state, None, codec.Problem(prefix, f"{prefix}: {text}" if text.startswith("no big bang")
                                                   else f"{prefix}: no big bang: {text}"))
    except Exception as err:  # noqa: BLE001 - any other failure is this model's problem, not a 500
        return Resolved(state, None, codec.Problem(prefix, f"{prefix}: this model cannot be built ({err!r})"))
    return Resolved(state, cosmo, None)


def _value_text(value) -> str:
    if isinstance(value, (tuple, list)):
        return ",".join(_value_text(v) for v in value)
    try:
        return codec.format_number(float(value))
    except (TypeError, ValueError):
        return repr(value)


def resolve_all(state: codec.LinkState) -> list[Resolved]:
    return [resolve(m) for m in state.models]


@in_process(64)
def cosmology_for(key: str) -> model.Cosmology:
    """The Cosmology for a canonical model key (`codec.model_cache_key`), without a label.

    Cosmology is frozen and building one (its tables) is the costly part of validating a card;
    every update validates every card, so the few in use are kept."""
    query = "&".join(f"m1.{pair}" for pair in key.split("&") if pair)
    return codec.decode(query or "m1.label=").models[0].to_cosmology()


def round_significant(values, digits: int = SIGNIFICANT_DIGITS) -> np.ndarray:
    """Round to `digits` significant digits, landing on the nearest double of the short decimal
    (so its shortest repr is at most `digits` digits). Non-finite values pass through."""
    x = np.asarray(values, dtype=float)
    out = x.copy()
    finite = np.isfinite(x) & (x != 0)
    if not finite.any():
        return out
    v = x[finite]
    power = digits - 1 - np.floor(np.log10(np.abs(v))).astype(int)
    small = power >= 0  # divide by an exact power of ten
    r = np.empty_like(v)
    r[small] = np.round(v[small] * 10.0 ** power[small]) / 10.0 ** power[small]
    big = ~small  # multiply by an exact power of ten
    r[big] = np.round(v[big] / 10.0 ** (-power[big])) * 10.0 ** (-power[big])
    out[finite] = r
    return out


def json_ready(value):
    """Plain JSON types: arrays to lists, NaN and infinities to None, numpy scalars to floats."""
    if isinstance(value, dict):
        return {k: json_ready(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray)):
        return [json_ready(v) for v in np.asarray(value, dtype=object).tolist()] if isinstance(
            value, np.ndarray) else [json_ready(v) for v in value]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)) and not isinstance(value, bool):
        return int(value)
    if isinstance(value, (float, np.floating)):
        value = float(value)
        return value if math.isfinite(value) else None
    return value


def _resolved_parameters(cosmo: model.Cosmology) -> dict:
    baryons = cosmo.omega_b if cosmo.omega_b is not None else cosmo.omega_cb - cosmo.omega_cold_dark_matter
    return {
        "h0": cosmo.h0, "omega_m": cosmo.omega_m, "omega_b": baryons, "omega_k": cosmo.omega_k,
        "omega_de": cosmo.omega_de, "w0": cosmo.w0, "wa": cosmo.wa, "t_cmb": cosmo.t_cmb,
        "n_eff": cosmo.n_eff, "m_nu": list(cosmo.m_nu), "sigma8": cosmo.sigma8, "omega_r": cosmo.omega_r,
        "omega_gamma": cosmo.omega_gamma, "omega_nu": cosmo.omega_nu,
        "omega_nu_massless": cosmo.omega_nu_massless, "omega_cold_dark_matter": cosmo.omega_cold_dark_matter,
        "omega_cb": cosmo.omega_cb, "hubble_distance": cosmo.hubble_distance,
        "hubble_time": cosmo.hubble_time,
    }


def _plain(mapping: dict) -> dict:
    out = {}
    for k, v in mapping.items():
        if isinstance(v, (float, np.floating)):
            v = float(v)
            out[k] = v if math.isfinite(v) else None
        else:
            out[k] = v
    return out


LINEAR_GRID_ZMAX = 20.0  # up to here the panels draw z on a linear axis (server.views.parts.z_axis)


def redshift_grid(zmax: float, n: int = GRID_POINTS) -> np.ndarray:
    """0..zmax: uniform in z while the axis is linear (the figures then send the grid as a start
    and a step instead of an array); beyond, uniform in ln(1 + z), fine near z = 0 and still
    reaching far redshifts on the log axis."""
    if zmax <= LINEAR_GRID_ZMAX:
        return np.linspace(0.0, zmax, n)
    z = np.expm1(np.linspace(0.0, math.log1p(zmax), n))
    z[-1] = zmax  # expm1(log1p(x)) can land an ulp above x, outside the model's range at x = Z_MAX
    return z


# Slope guides on the density plot: component -> power of a (radiation a⁻⁴, matter a⁻³, a
# cosmological constant a⁰), each drawn through the component's density today.
GUIDE_POWERS = {"photons": -4, "cold_dark_matter": -3, "dark_energy": 0}


def _budget(cosmo: model.Cosmology) -> dict:
    a = np.geomspace(A_MIN, A_MAX, BUDGET_POINTS)
    z = 1.0 / a - 1.0
    with np.errstate(all="ignore"):
        fractions = model.density_parameters(cosmo, z)
        rho = model.densities(cosmo, z)
        ends = np.array([a[0], a[-1]])
        # each guide passes through the component's density today; NaN where that is not positive
        today = {k: float(np.asarray(v).ravel()[0]) for k, v in model.densities(cosmo, np.zeros(1)).items()}
        guides = {k: today[k] * ends ** power if math.isfinite(today[k]) and today[k] > 0 else np.full(2, np.nan)
                  for k, power in GUIDE_POWERS.items() if k in today}
    return {"a": a, "omega": fractions, "rho": rho, "guides": guides, "guide_a": ends}


def _epoch_scale_factors(epochs: dict) -> dict:
    """a = 1/(1+z) of the epochs the budget panel marks (None where an epoch does not happen)."""
    out = {}
    for name in ("z_equality", "z_dark_energy_equality", "z_acceleration"):
        z = epochs.get(name)
        out["a" + name[1:]] = None if z is None or not math.isfinite(z) or z <= -1 else 1.0 / (1.0 + z)
    return out


def _growth_index(cosmo: model.Cosmology, z: np.ndarray, rate: np.ndarray) -> np.ndarray:
    """γ(z) = ln f / ln Ω_cb(z), Ω_cb(z) the clustering matter's share of the critical density
    (Linder 2005, PRD 72, 043529, eq. 3, with the matter that clusters); NaN where
    Ω_cb(z) is within 1e-6 of 1, where the ratio is 0/0."""
    fractions = model.density_parameters(cosmo, z)
    ln_omega = np.log(fractions["baryons"] + fractions["cold_dark_matter"])
    return np.where(np.abs(ln_omega) > 1e-6, np.log(rate) / ln_omega, np.nan)


@memoized
def model_curves(key: str, zmax: float) -> dict:
    """Everything the panels draw for one model (rounded numpy arrays and plain dicts): the
    curves over z and a, the slope guides of the density plot (``rho_guides`` at ``guide_a``),
    H/(1+z), the epochs and their scale factors, the acoustic scales."""
    cosmo = cosmology_for(key)
    z = redshift_grid(zmax)
    with np.errstate(all="ignore"):
        at = model.evaluate(cosmo, z)
        w = model.w_dark_energy(cosmo, z)
        history = model.scale_factor_history(cosmo, a_end=A_MAX, n=GRID_POINTS)
        acoustic = model.acoustic_scales(cosmo)
        r_drag = acoustic["r_drag"]
        bao = {
            "dm_rd": at["transverse_comoving_distance"] / r_drag,
            "dh_rd": at["hubble_distance_at_z"] / r_drag,
            "dv_rd": at["volume_averaged_distance"] / r_drag,
        }
        # the comoving expansion rate H/(1+z) = ȧ (in units of H's), flat during coasting
        hubble_over_1pz = at["hubble_parameter"] / (1.0 + z)
        growth_index = _growth_index(cosmo, z, at["growth_rate"])
    budget = _budget(cosmo)
    curves = _rounded_together({
        "z": z,
        "at": at,
        "w": w,
        "history": history,
        "bao": bao,
        "hubble_over_1pz": hubble_over_1pz,
        "growth_index": growth_index,
        "a": budget["a"],
        "omega": budget["omega"],
        "rho": budget["rho"],
        # what the log-scale density plot draws (negative densities have no point there)
        "rho_positive": {k: np.where(np.asarray(v) > 0, v, np.nan) for k, v in budget["rho"].items()},
        "rho_guides": budget["guides"],
        "guide_a": budget["guide_a"],
    })
    epochs = _plain(model.epochs(cosmo))
    theta = acoustic.get("theta_star")
    return {
        "params": _plain(_resolved_parameters(cosmo)),
        "epochs": epochs,
        "epoch_a": _epoch_scale_factors(epochs),
        "acoustic": _plain(acoustic),
        # θ* as the acoustic table shows it: in degrees, and 100 θ* in radians
        "theta_star_shown": _plain({"degrees": math.degrees(theta) if theta is not None else None,
                                    "hundred_rad": 100.0 * theta if theta is not None else None}),
        **curves,
    }


def _rounded_together(tree: dict) -> dict:
    """`round_significant` of every array in a (one-level nested) dict, in one numpy pass
    instead of one per curve (about fifty curves a model)."""
    leaves = [(k, None, v) for k, v in tree.items() if not isinstance(v, dict)]
    leaves += [(k, k2, v) for k, v in tree.items() if isinstance(v, dict) for k2, v in v.items()]
    arrays = [np.asarray(v, dtype=float) for _, _, v in leaves]
    flat = round_significant(np.concatenate([a.ravel() for a in arrays]))
    out = {k: {} for k, v in tree.items() if isinstance(v, dict)}
    start = 0
    for (k, k2, _), a in zip(leaves, arrays):
        piece = flat[start:start + a.size].reshape(a.shape).copy()
        start += a.size
        if k2 is None:
            out[k] = piece
        else:
            out[k][k2] = piece
    return {k: out[k] for k in tree}  # the original key order


@memoized
def values_at(key: str, redshifts: tuple[float, ...]) -> dict:
    """`model.evaluate` at the link's redshifts, unrounded, as numpy arrays."""
    with np.errstate(all="ignore"):
        return {k: np.asarray(v, dtype=float) for k, v in
                model.evaluate(cosmology_for(key), np.asarray(redshifts, dtype=float)).items()}


@memoized
def survey_volume(key: str, sky_deg2: float, z_low: float, z_high: float) -> float:
    """Comoving volume [Gpc³] of a survey of `sky_deg2` square degrees between two redshifts:
    the all-sky shell (Hogg 1999, §9) times the sky fraction."""
    with np.errstate(all="ignore"):
        v = model.evaluate(cosmology_for(key), np.array([z_low, z_high]))["comoving_volume"]
    return float((v[1] - v[0]) * sky_deg2 / codec.FULL_SKY_DEG2)


@memoized
def inverse_lookup(key: str, quantity: str, value: float) -> float | None:
    """The redshift at which `quantity` takes `value`, or None where there is none."""
    try:
        with np.errstate(all="ignore"):
            z = float(np.asarray(model.redshift_at(cosmology_for(key), quantity, np.array([value]))).ravel()[0])
    except (model.ModelError, ValueError):
        return None
    return z if math.isfinite(z) else None


# ----------------------------------------------------------------------------- measurements


def _measurements(digest: str) -> model.MeasurementSet:
    from server import data_store  # needs the app's cache: imported where it is used

    return data_store.load(digest).measurements


def fitted_count(view: codec.ViewState, slot: int) -> int:
    """Cosmological parameters the link's ``fit`` note says slot `slot` was fitted with (its free
    nuisances are counted by `model.goodness_of_fit` itself)."""
    if view.fit is None or view.fit[0] != slot:
        return 0
    return sum(1 for name in view.fit[1] if codec.FIT_KEYS[name] not in ("r_d", "offset"))


@memoized
def goodness(key: str, digest: str, r_d: str, n_free: int = 0) -> dict:
    """`model.goodness_of_fit` of one model against a stored set, as plain numbers and arrays.

    `r_d` is ``"model"`` (each model's own r_drag) or ``"free"`` (minimised); the supernova
    offset is always marginalised. `n_free` counts parameters fitted to these data."""
    data = _measurements(digest)
    with np.errstate(all="ignore"):
        g = model.goodness_of_fit(cosmology_for(key), data, model.Nuisances(r_d=r_d), n_free=n_free)
    return {"chi2": g.chi2, "n_points": g.n_points, "n_parameters": g.n_parameters, "dof": g.dof,
            "p_value": g.p_value, "aic": g.aic, "bic": g.bic, "r_d": g.r_d, "offset": g.offset,
            "prediction": np.array(g.prediction), "residual": np.array(g.residual), "pull": np.array(g.pull)}


@memoized
def fit(key: str, digest: str, free: tuple[tuple[str, float, float], ...], r_d: str) -> dict:
    """`model.quick_fit` of the parameters ``free`` (``(name, low, high)``, names of
    `model.FIT_PARAMETERS`) of one model; raises `model.FitError` when it cannot be done."""
    data = _measurements(digest)
    with np.errstate(all="ignore"):
        result = model.quick_fit(cosmology_for(key), data, {n: (lo, hi) for n, lo, hi in free},
                                 model.Nuisances(r_d=r_d), deadline=request_deadline())
    c = result.cosmology
    g = result.goodness
    return {"names": list(result.names), "values": result.values.tolist(), "errors": result.errors.tolist(),
            "correlation": result.correlation.tolist(), "chi2_min": result.chi2_min, "dof": result.dof,
            "p_value": g.p_value, "aic": g.aic, "bic": g.bic, "n_parameters": g.n_parameters,
            "at_bound": list(result.at_bound), "success": result.success, "message": result.message,
            "n_evaluations": result.n_evaluations, "r_d": g.r_d, "offset": g.offset,
            "cosmology": {"h0": c.h0, "omega_m": c.omega_m, "omega_k": c.omega_k, "w0": c.w0, "wa": c.wa,
                          "sigma8": c.sigma8}}


@memoized
def chi2_grid(key: str, digest: str, x: tuple[str, float, float], y: tuple[str, float, float], n: int,
              r_d: str) -> dict:
    """`model.chi2_map` on an n x n grid: ``x`` and ``y`` are ``(name, low, high)``."""
    data = _measurements(digest)
    xs, ys = np.linspace(x[1], x[2], n), np.linspace(y[1], y[2], n)
    with np.errstate(all="ignore"):
        m = model.chi2_map(cosmology_for(key), data, x[0], xs, y[0], ys, model.Nuisances(r_d=r_d),
                           deadline=request_deadline())
    return {"x_name": m.x_name, "y_name": m.y_name, "x": xs, "y": ys, "delta_chi2": np.array(m.delta_chi2),
            "chi2_min": m.chi2_min, "best": dict(m.best), "levels": [list(level) for level in m.levels]}
