"""The data panel's tools: storing an upload, the quick fit and the Δχ² map requested from the
page (bounds parsed and checked, each error naming its field), the fit's report, and the texts
and choices the tools show."""

from __future__ import annotations

import math

import model
from layouts.specs import DataToolOptions, FitReport, MapResult
from layouts.text import byte_size, counted
from server import codec, compute, data_store, fields, state as states
from server.views.comparison import SYNTHETIC_NOTE, is_synthetic, num

__all__ = ["FIT_LABELS", "DEFAULT_BOUNDS", "MAP_POINTS", "FitRequestError", "data_tool_options", "store_upload",
           "parse_bounds", "fit_request", "fit_report", "map_request", "button_states", "NO_DATA_REASON",
           "NO_FIT_REASON"]

FIT_LABELS = {"h0": "H₀", "omega_m": "Ω_m", "omega_k": "Ω_k", "w0": "w₀", "wa": "w_a", "sigma8": "σ₈",
              "r_d": "r_d (nuisance)", "offset": "supernova offset M (nuisance)"}
# Bounds the page proposes: wide enough for any model people compare here, narrow enough for a
# readable MAP_POINTS x MAP_POINTS map (judgement, no source). The model accepts any within FIT_PARAMETERS.
DEFAULT_BOUNDS = {"h0": (50.0, 90.0), "omega_m": (0.05, 0.7), "omega_k": (-0.3, 0.3), "w0": (-2.0, -0.3),
                  "wa": (-3.0, 2.0), "sigma8": (0.4, 1.2), "r_d": (120.0, 180.0), "offset": (-2.0, 2.0)}
MAP_POINTS = 60  # the Δχ² map is MAP_POINTS x MAP_POINTS
MAP_SPAN_SIGMAS = 5  # after a fit of both parameters, the map spans the best value ± this many σ


class FitRequestError(ValueError):
    """A fit or map request from the page cannot be run; the message names the field."""


def _fit_unit(name: str) -> str:
    return model.FIT_PARAMETERS[name][0]


def _range_text(name: str) -> str:
    unit, low, high = model.FIT_PARAMETERS[name]
    return f"accepted {low:g} to {high:g}" + (f" {unit}" if unit else "")


def _title(name: str) -> str:
    unit = _fit_unit(name)
    return f"{FIT_LABELS[name]} [{unit}]" if unit else FIT_LABELS[name]


NO_DATA_REASON = "load measurements first"
NO_FIT_REASON = "run a fit first"


def data_tool_options() -> DataToolOptions:
    limits = data_store.LIMITS
    return {
        "format": ("One row per measurement: a header line naming the columns z, kind, value, error (required) "
                   "and label, z_helio, group, correlation (optional), then rows separated by commas (or tabs, as a "
                   "spreadsheet copies them, or semicolons); kinds: "
                   + ", ".join(model.MEASUREMENT_KINDS) + "."),
        "format_link": "the measurement format in full (columns, kinds, covariance files)",
        "format_url": "format",
        "no_data_reason": NO_DATA_REASON,
        "no_fit_reason": NO_FIT_REASON,
        "placeholder": "z,kind,value,error,label\n0.51,dm_over_rd,13.6,0.25,my survey z=0.51\n"
                       "0.8,hubble_parameter,95,9,my H(z) point",
        "limits": (f"Limits: measurement file ≤ {byte_size(limits.max_bytes)}, ≤ {limits.max_rows} rows, cells ≤ "
                   f"{limits.max_cell_chars} characters; covariance file ≤ {byte_size(limits.max_covariance_bytes)}. "
                   "The data are stored on this server under their content hash and named in the link; they "
                   "are kept until the server's administrator removes them."),
        "demo_label": "load demo data (synthetic)",
        "parameters": [{"name": n, "label": FIT_LABELS[n], "unit": _fit_unit(n), "low": codec.format_number(lo),
                        "high": codec.format_number(hi), "range": _range_text(n)}
                       for n, (lo, hi) in DEFAULT_BOUNDS.items()],
        "default_free": ["omega_m", "w0"],
        "map_default": ("omega_m", "w0"),
        "map_points": MAP_POINTS,
        "levels": tuple(tuple(level) for level in model.CONFIDENCE_LEVELS_2D),
        "catalogue": ("A CSV with a column named z (up to 1 000 000 rows, 64 MiB) comes back with every quantity "
                      "of the table panel added, for the reference model or every model, as columns "
                      "m<slot>:<quantity>[<unit>] (9 significant digits; empty where undefined). The file is "
                      "sent to POST /api/v1/catalogue and the answer streams back."),
    }


def store_upload(state: codec.LinkState, measurements, covariance=None, name: str = "") -> tuple[str, str]:
    """Store an upload and return ``(new search, message)``; raises `data_store.DataError`."""
    stored = data_store.store(measurements, covariance, name)
    what = SYNTHETIC_NOTE if is_synthetic(stored) else (stored.name or "your table")
    separator = model.DELIMITERS.get(stored.measurements.delimiter, "comma")
    read_as = "" if separator == "comma" else f" (read as {separator}-separated, from its header line)"
    message = (f"Stored {counted(len(stored.measurements), 'measurement')} from {what}{read_as} as "
               f"data={stored.hash}; the link now carries it.")
    return "?" + codec.encode(states.with_data(state, stored.hash)), message


def parse_bounds(free: list[str], bounds: dict) -> tuple[tuple[str, float, float], ...]:
    """``((name, low, high), ...)`` from the page's bound inputs ``{(name, "low"|"high"): text}``
    (empty text: the page's default bound); raises `FitRequestError` naming the field."""
    out = []
    for name in free:
        if name not in model.FIT_PARAMETERS:
            raise FitRequestError(f"free parameters: {name!r} is unknown; expected some of "
                                  f"{', '.join(model.FIT_PARAMETERS)}")
        ends = []
        unit, low_ok, high_ok = model.FIT_PARAMETERS[name]
        for i, end in enumerate(("low", "high")):
            text = str(bounds.get((name, end)) or "").strip()
            if not text:
                ends.append(DEFAULT_BOUNDS[name][i])
                continue
            value = fields.parse_number(text)  # the link's own number rule: plain decimals, finite
            label = f"{FIT_LABELS[name]} {'lower' if end == 'low' else 'upper'} bound"
            if isinstance(value, fields.Refusal):
                raise FitRequestError(f"{label}: {value}; expected a number, {_range_text(name)}")
            if not low_ok <= value <= high_ok:
                raise FitRequestError(f"{label}: {codec.format_number(value)} is out of range; expected "
                                      f"{_range_text(name)}")
            ends.append(value)
        if not ends[0] < ends[1]:
            raise FitRequestError(f"{FIT_LABELS[name]} bounds: the lower bound {codec.format_number(ends[0])} "
                                  f"must be below the upper bound {codec.format_number(ends[1])}")
        out.append((name, float(ends[0]), float(ends[1])))
    return tuple(out)


def _slot_for_fit(state: codec.LinkState, slot):
    """The start model and its resolved form; raises `FitRequestError` (no data, no such slot,
    invalid model) or `data_store.DataError` (the set is not on this server)."""
    if state.view.data is None or "data" in dict(state.view.invalid):
        raise FitRequestError("data: no measurements in the link; upload or paste a table, or load the "
                              "synthetic demo data, first")
    m = state.model(slot)
    if m is None:
        raise FitRequestError(f"start model: m{slot} is not in the link; choose one of "
                              f"{', '.join(f'm{s}' for s in state.slots())}")
    resolved = compute.resolve(m)
    if resolved.problem is not None:
        raise FitRequestError(f"start model m{slot} is not valid: {resolved.problem.message}")
    data_store.load(state.view.data)  # a clear message when the set is not on this server
    return m, resolved


def fit_request(state: codec.LinkState, slot, free: list[str], bounds: dict) -> dict:
    """Run a quick fit from the page; returns the stored fit (plain data). Raises
    `FitRequestError` (bad request), `data_store.DataError` (data gone) or `model.FitError`."""
    if not free:
        raise FitRequestError("free parameters: choose at least one to fit")
    if len(free) > len(model.FIT_PARAMETERS):
        raise FitRequestError(f"free parameters: at most the {len(model.FIT_PARAMETERS)} offered")
    m, resolved = _slot_for_fit(state, slot)
    spec = parse_bounds([n for n in model.FIT_PARAMETERS if n in free], bounds)
    result = compute.fit(resolved.key, state.view.data, spec, state.view.r_d)
    return {"slot": m.slot, "name": m.name, "data": state.view.data, "r_d_mode": state.view.r_d,
            "bounds": [list(b) for b in spec], **result}


# What scipy's least_squares says when it stops, in the words of the data tab.
_OPTIMISER_WORDS = {
    "`ftol`": "it stopped because χ² no longer improved (relative change below 1e-12)",
    "`xtol`": "it stopped because the parameters no longer moved (relative step below 1e-12)",
    "`gtol`": "it stopped because the slope of χ² vanished (gradient below 1e-12)",
    "maximum number of function evaluations": "it stopped at its budget of evaluations before converging",
}


def optimiser_text(message: str) -> str:
    """The optimiser's closing message in plain words (unknown ones are passed through)."""
    found = [words for key, words in _OPTIMISER_WORDS.items() if key in message]
    return "; ".join(found) + "." if found else message


def fit_report(fit: dict) -> FitReport:
    """The tables of a fit's best values, 1σ errors and correlations, and its summary."""
    names = fit["names"]
    bounds = {b[0]: b[1:] for b in fit["bounds"]}
    rows = [[_title(name), num(value, 6), num(error, 3), [num(bounds[name][0], 4), " to ", num(bounds[name][1], 4)],
             "yes: error not meaningful" if name in fit["at_bound"] else "no"]
            for name, value, error in zip(names, fit["values"], fit["errors"])]
    symbols = [FIT_LABELS[n].split(" (")[0] for n in names]
    correlation_rows = [[symbols[i]] + [num(v, 3) for v in row] for i, row in enumerate(fit["correlation"])] \
        if len(names) > 1 else []
    how = " (fitted)" if "r_d" in names else " (minimised)" if fit["r_d_mode"] == "free" else " (model's)"
    summary = [
        ["χ²_min = ", num(fit["chi2_min"], 6), f" with {fit['dof']} degrees of freedom (p-value ",
         num(fit["p_value"], 3), f"); k = {fit['n_parameters']} free parameters: AIC = ", num(fit["aic"], 6),
         ", BIC = ", num(fit["bic"], 6), "."],
        ["r_d = ", num(fit["r_d"], 6, "Mpc"), how + "; supernova offset M = ", num(fit["offset"], 4, "mag"), "."],
        f"Optimiser: {counted(fit['n_evaluations'], 'residual evaluation')}; {optimiser_text(fit['message'])}",
    ]
    warnings = [] if fit["success"] else ["The optimiser did not report convergence; treat the numbers with care."]
    if fit["at_bound"]:
        warnings.append("On a bound: " + ", ".join(FIT_LABELS[n] for n in fit["at_bound"])
                        + "; widen the bounds and fit again.")
    return {"title": f"Best fit of {', '.join(symbols)} starting from m{fit['slot']}: {fit['name']}",
            "header": ["parameter [unit]", "best fit", "1σ error", "bounds", "on a bound"], "rows": rows,
            "correlation_header": [""] + symbols, "correlation_rows": correlation_rows,
            "summary": summary, "warnings": warnings}


def _spans_of_fit(fit: dict, spans) -> tuple:
    """The best value ± `MAP_SPAN_SIGMAS` σ of each parameter (within the model's range) where
    the fit gave a usable error, else the bounds given."""
    out = []
    for name, low, high in spans:
        i = fit["names"].index(name)
        centre, sigma = fit["values"][i], fit["errors"][i]
        if math.isfinite(sigma) and sigma > 0:
            _, low_ok, high_ok = model.FIT_PARAMETERS[name]
            low, high = max(low_ok, centre - MAP_SPAN_SIGMAS * sigma), min(high_ok, centre + MAP_SPAN_SIGMAS * sigma)
        out.append((name, low, high))
    return tuple(out)


def map_request(state: codec.LinkState, slot, x_name, y_name, bounds: dict, fit: dict | None) -> MapResult:
    """A Δχ² map spec for `layouts.figures.chi2_map_figure` (plus notes); the grid spans the
    bound inputs, or the last fit's best value ± 5σ when that fit varied both parameters."""
    if x_name == y_name:
        raise FitRequestError(f"map: x and y are both {FIT_LABELS.get(x_name, x_name)}; choose two different "
                              "parameters")
    m, resolved = _slot_for_fit(state, slot)
    xb, yb = parse_bounds([x_name, y_name], bounds)
    notes = []
    if fit and fit.get("slot") == m.slot and fit.get("data") == state.view.data and \
            {x_name, y_name} <= set(fit["names"]):
        xb, yb = _spans_of_fit(fit, (xb, yb))
        notes.append(f"Grid: the last fit's best value ± {MAP_SPAN_SIGMAS}σ in each parameter; the other parameters "
                     f"at the start model m{m.slot}'s values, so the map is a slice through the best fit only where "
                     "those agree.")
    grid = compute.chi2_grid(resolved.key, state.view.data, xb, yb, MAP_POINTS, state.view.r_d)
    best = grid["best"]
    notes.append(["Smallest χ² on the grid: ", num(grid["chi2_min"], 6), " at ",
                  f"{FIT_LABELS[x_name]} = ", num(best[x_name], 5, _fit_unit(x_name)), ", ",
                  f"{FIT_LABELS[y_name]} = ", num(best[y_name], 5, _fit_unit(y_name)), "."])
    return {"spec": {"title": f"Δχ² for m{m.slot}: {m.name}", "x_title": _title(x_name), "y_title": _title(y_name),
                     "x": grid["x"], "y": grid["y"], "delta_chi2": grid["delta_chi2"],
                     "levels": [tuple(level) for level in grid["levels"]],
                     "best": (best[x_name], best[y_name])}, "notes": notes}


def button_states(state: codec.LinkState, fit: dict | None) -> dict:
    """Whether the fit, map and load buttons can act, and the reason shown beside each when not:
    fit and map need measurements in the link; loading needs a fit, a free slot and the fit's
    start model (`state.with_fit` decides). ``{"fit": reason, "map": reason, "load": reason,
    "load_label": text}`` with reason "" when the button can act."""
    no_data = NO_DATA_REASON if state.view.data is None or "data" in dict(state.view.invalid) else ""
    load, label = NO_FIT_REASON, "load the fit into a free slot"
    if fit:
        try:
            slot = states.with_fit(state, fit).view.fit[0]
        except states.TransitionError as err:
            load = str(err).removeprefix("load: ")
        else:
            load, label = "", f"load the fit into m{slot}"
    return {"fit": no_data, "map": no_data, "load": load, "load_label": label}
