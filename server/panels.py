"""From a LinkState to plain panel data: card contents, figure specs, tables, CSV and JSON.

This module decides *what* is compared (series, ratio strips, table rows); `layouts` decides
how it looks. Everything returned is plain data (str, float, lists, numpy arrays).
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
import math
from dataclasses import dataclass, field

import numpy as np

import model
from layouts.palette import COMPONENT_COLOURS, slot_colour
from layouts.text import number, with_unit
from server import codec, compute, fields, state as states, tabs
from server.cache import fetch_many
from server.presets import PRESETS

__all__ = ["Comparison", "compare", "cards", "card_status", "panel", "panel_csv", "parameter_sets",
           "page_options", "TAB_TITLES", "unit_of", "measurements", "scores", "FIT_LABELS",
           "DEFAULT_BOUNDS", "MAP_POINTS", "FitRequestError", "fit_request", "fit_report",
           "map_request", "store_upload"]

TAB_TITLES = tabs.TAB_TITLES

COMPONENT_NAMES = {
    "photons": "photons", "neutrinos": "neutrinos", "baryons": "baryons",
    "cold_dark_matter": "cold dark matter", "dark_energy": "dark energy", "curvature": "curvature",
    "critical": "critical density",
}
FIELD_HINTS = {
    "omega_b": "empty: 0.157 of the cold matter",
    "omega_k": "empty: flat, or derived from Ω_de",
    "omega_de": "empty: derived (closes the budget)",
}


def unit_of(key: str) -> str:
    return model.QUANTITIES[key].unit


def _axis_title(key: str) -> str:
    description = model.QUANTITIES[key].description
    unit = unit_of(key)
    return f"{description} [{unit}]" if unit else f"{description} [dimensionless]"


# ----------------------------------------------------------------------------- comparison


@dataclass
class Entry:
    slot: int
    name: str
    curves: dict


@dataclass
class Comparison:
    state: codec.LinkState
    resolved: list
    entries: list  # valid models, in slot order
    reference: Entry | None
    failures: dict  # slot -> Problem
    extras: dict = field(default_factory=dict)  # the stored measurements and scores, looked up once

    def problem(self, slot: int):
        return self.failures.get(slot)


def compare(state: codec.LinkState) -> Comparison:
    """Resolve every slot and fetch its (memoized) curves; a model that fails is reported, the
    others still render."""
    resolved = compute.resolve_all(state)
    entries, failures = [], {}
    valid = [r for r in resolved if r.problem is None]
    # one shared-cache round trip for every model; one model failing must not take the page down
    fetched = dict(zip((id(r) for r in valid), fetch_many(
        compute.model_curves, [(r.key, state.view.zmax) for r in valid], return_exceptions=True)))
    for r in resolved:
        if r.problem is not None:
            failures[r.state.slot] = r.problem
            continue
        curves = fetched[id(r)]
        if isinstance(curves, Exception):
            failures[r.state.slot] = codec.Problem(f"m{r.state.slot}",
                                                   f"m{r.state.slot}: could not be computed: {curves}")
            continue
        entries.append(Entry(r.state.slot, r.state.name, curves))
    wanted = codec.reference_slot(state)
    reference = next((e for e in entries if e.slot == wanted), entries[0] if entries else None)
    return Comparison(state, resolved, entries, reference, failures)


# ----------------------------------------------------------------------------- cards


def _value_text(m: codec.ModelState, key: str, name: str) -> str:
    invalid = dict(m.invalid)
    if key in invalid:
        return invalid[key]
    value = getattr(m, name)
    if name == "m_nu":
        return ",".join(codec.format_number(v) for v in value)
    if value is None:
        return ""
    if name == "omega_k" and m.omega_de is None and value == 0.0:
        return ""  # flat by default; typing Ω_de instead must not clash with a visible 0
    return codec.format_number(value)


def cards(state: codec.LinkState) -> list[dict]:
    presets = [{"label": p.name, "value": p.key} for p in PRESETS.values()]
    full = len(state.models) >= codec.MAX_SLOTS
    out = []
    for m in state.models:
        fields = []
        for key, name in codec.MODEL_KEYS:
            if name == "label":
                continue
            spec = codec.parameter_spec(name)
            fields.append({
                "key": key, "title": spec.symbol, "unit": spec.unit, "text": _value_text(m, key, name),
                "placeholder": FIELD_HINTS.get(name, "comma-separated eV" if name == "m_nu" else ""),
                "range": codec.range_text(spec) if name != "m_nu" else
                f"≤ {codec.MAX_MASSES} values, each {codec.range_text(spec)}",
                "description": spec.description,
            })
        out.append({"slot": m.slot, "colour": slot_colour(m.slot), "label": m.label, "fields": fields,
                    "presets": presets, "can_remove": len(state.models) > 1, "can_duplicate": not full})
    return out


def card_status(state: codec.LinkState, slot: int) -> dict:
    m = next((x for x in state.models if x.slot == slot), None)
    if m is None:
        return {}
    r = compute.resolve(m)
    status = {"reference": codec.reference_slot(state) == slot, "errors": [], "derived": []}
    if r.problem is not None:
        status["errors"].append(r.problem.message)
        for extra in m.problems()[1:]:
            status["errors"].append(extra.message)
        return status
    try:
        curves = compute.model_curves(r.key, state.view.zmax)
    except Exception as err:  # noqa: BLE001
        status["errors"].append(f"m{slot}: could not be computed: {err}")
        return status
    p, e = curves["params"], curves["epochs"]
    status["derived"] = [
        ("Ω_de", number(p["omega_de"], 5)), ("Ω_k", number(p["omega_k"], 5)),
        ("Ω_r", number(p["omega_r"], 4)), ("Ω_b", number(p["omega_b"], 5)),
        ("age today", with_unit(e.get("age_today"), "Gyr", 5)), ("fate", str(e.get("fate", "–"))),
    ]
    return status


# ----------------------------------------------------------------------------- figure helpers


def _curve_series(c: Comparison, pick, x_pick=lambda cv: cv["z"]) -> list[dict]:
    return [{"name": e.name, "slot": e.slot, "x": x_pick(e.curves), "y": pick(e.curves)} for e in c.entries]


def _strip(c: Comparison, pick, kind: str = "ratio", x_pick=lambda cv: cv["z"], unit: str = "") -> dict | None:
    if c.reference is None or len(c.entries) < 2:
        return None
    ref = np.asarray(pick(c.reference.curves), dtype=float)
    series = []
    with np.errstate(all="ignore"):
        for e in c.entries:
            if e is c.reference:
                continue
            y = np.asarray(pick(e.curves), dtype=float)
            series.append({"name": e.name, "slot": e.slot, "x": x_pick(e.curves),
                           "y": compute.round_significant(y / ref if kind == "ratio" else y - ref)})
    return {"y_title": "ratio to ref." if kind == "ratio" else "minus ref.",
            "series": series, "unit": unit}


def _z_axis(c: Comparison) -> dict:
    return {"x_title": "redshift z [dimensionless]", "x_hover": "z",
            "x_log": c.state.view.zmax > compute.LINEAR_GRID_ZMAX}


def _quantity_figure(c: Comparison, key: str, title: str | None = None, kind: str = "ratio",
                     y_log: bool = False) -> dict:
    spec = {"title": title or model.QUANTITIES[key].description, **_z_axis(c),
            "y_title": _axis_title(key), "y_hover": model.QUANTITIES[key].symbol, "unit": unit_of(key), "y_log": y_log,
            "series": _curve_series(c, lambda cv: cv["at"][key]),
            "strip": _strip(c, lambda cv: cv["at"][key], kind=kind,
                            unit=unit_of(key) if kind == "difference" else "")}
    return {"kind": "figure", "spec": spec, "id": f"fd-fig-{key}"}


def _failures_note(c: Comparison) -> list[dict]:
    return [{"kind": "text", "text": f"not shown: {p.message}", "class": "fd-error"} for p in c.failures.values()]


def _a_of_z(z):
    return None if z is None or not math.isfinite(z) or z <= -1 else 1.0 / (1.0 + z)


# ----------------------------------------------------------------------------- panels


def _budget(c: Comparison) -> dict:
    comps = ["photons", "neutrinos", "baryons", "cold_dark_matter", "dark_energy", "curvature"]
    fraction_panels, density_panels = [], []
    for e in c.entries:
        cv, ep = e.curves, e.curves["epochs"]
        markers = [{"x": a, "text": text} for a, text in (
            (_a_of_z(ep.get("z_equality")), "matter–radiation equality"),
            (_a_of_z(ep.get("z_dark_energy_equality")), "matter–dark energy equality"),
            (_a_of_z(ep.get("z_acceleration")), "acceleration begins"),
            (1.0, "today")) if a is not None and compute.A_MIN <= a <= compute.A_MAX]
        fraction_panels.append({"title": e.name, "slot": e.slot, "markers": markers, "series": [
            {"name": COMPONENT_NAMES[k], "slot": e.slot, "x": cv["a"], "y": cv["omega"][k],
             "colour": COMPONENT_COLOURS[k], "dash": "solid", "group": k, "y_hover": f"Ω ({COMPONENT_NAMES[k]})"}
            for k in comps if k in cv["omega"]]})
        rho = cv["rho"]
        a = np.asarray(cv["a"], dtype=float)
        ends = np.array([a[0], a[-1]])
        guides = []
        for comp, power, text in (("photons", -4, "∝ a⁻⁴"), ("cold_dark_matter", -3, "∝ a⁻³"),
                                  ("dark_energy", 0, "constant")):
            today = float(np.interp(0.0, np.log(a), np.asarray(rho.get(comp, np.full_like(a, np.nan)))))
            if math.isfinite(today) and today > 0:
                guides.append({"name": f"slope {text}", "slot": e.slot, "x": ends, "y": today * ends ** power,
                               "colour": "#999999", "dash": "dot", "width": 1, "group": f"guide{power}",
                               "y_hover": f"guide {text}"})
        density_panels.append({"title": e.name, "slot": e.slot, "series": [
            {"name": COMPONENT_NAMES[k], "slot": e.slot, "x": cv["a"],
             "y": cv["rho_positive"][k],
             "colour": COMPONENT_COLOURS[k], "dash": "solid" if k != "critical" else "dash", "group": k,
             "y_hover": f"ρ ({COMPONENT_NAMES[k]})"}
            for k in comps + ["critical"] if k in rho] + guides})
    a_axis = {"x_title": "scale factor a [dimensionless]", "x_hover": "a", "x_log": True}
    blocks = [
        {"kind": "multiples", "id": "fd-fig-fractions", "spec": {
            "title": "Density parameters Ω_i(a), from a = 1e-7 to a = 10", **a_axis,
            "y_title": "Ω_i [dimensionless]", "unit": "", "panels": fraction_panels}},
        {"kind": "multiples", "id": "fd-fig-densities", "spec": {
            "title": "Densities ρ_i(a) (negative values not drawn)", **a_axis, "y_log": True,
            "y_title": "ρ_i [kg m⁻³]", "unit": "kg m⁻³", "panels": density_panels}},
        {"kind": "figure", "id": "fd-fig-w", "spec": {
            "title": "Dark-energy equation of state w(z)", **_z_axis(c), "y_title": "w [dimensionless]",
            "y_hover": "w", "unit": "", "series": _curve_series(c, lambda cv: cv["w"]),
            "strip": _strip(c, lambda cv: cv["w"], kind="difference")}},
        {"kind": "figure", "id": "fd-fig-q", "spec": {
            "title": "Deceleration parameter q(z)", **_z_axis(c), "y_title": "q [dimensionless]", "y_hover": "q",
            "unit": "", "series": _curve_series(c, lambda cv: cv["at"]["deceleration_parameter"]),
            "strip": _strip(c, lambda cv: cv["at"]["deceleration_parameter"], kind="difference")}},
    ]
    rows = []
    for e in c.entries:
        ep = e.curves["epochs"]
        rows.append([e.name, number(ep.get("z_equality"), 5), with_unit(ep.get("age_equality"), "Gyr", 4),
                     number(ep.get("z_dark_energy_equality"), 4),
                     with_unit(ep.get("age_dark_energy_equality"), "Gyr", 4),
                     number(ep.get("z_acceleration"), 4), with_unit(ep.get("age_acceleration"), "Gyr", 4),
                     with_unit(ep.get("age_today"), "Gyr", 5), str(ep.get("fate", "–")),
                     with_unit(ep.get("t_recollapse") or ep.get("t_big_rip"), "Gyr", 4)])
    blocks.append({"kind": "table", "title": "Epochs (ages since the big bang)", "header": [
        "model", "z equality [dimensionless]", "age at equality", "z matter = dark energy", "age then",
        "z acceleration begins", "age then", "age today", "fate", "recollapse / big rip at"],
        "rows": rows, "colours": [None] * 10})
    return {"intro": "Each small plot is one model; colour marks the component. Radiation falls as a⁻⁴, "
                     "matter as a⁻³ and a cosmological constant stays constant (dotted guides).",
            "blocks": blocks + _failures_note(c)}


def _distances(c: Comparison) -> dict:
    choice = c.state.view.distance
    key = codec.DISTANCE_CHOICES[choice]
    controls = [{"key": "dist", "kind": "dropdown", "label": "distance", "value": choice,
                 "options": [{"label": model.QUANTITIES[v].description, "value": k}
                             for k, v in codec.DISTANCE_CHOICES.items()]}]
    blocks = [
        _quantity_figure(c, key),
        {"kind": "figure", "id": "fd-fig-dmu", "spec": {
            "title": f"Distance-modulus difference Δμ against {c.reference.name if c.reference else 'reference'}",
            **_z_axis(c), "y_title": "Δμ [mag]", "y_hover": "Δμ", "unit": "mag",
            "series": (_strip(c, lambda cv: cv["at"]["distance_modulus"], kind="difference") or
                       {"series": []})["series"], "strip": None}},
        _quantity_figure(c, "angular_scale", title="Angular scale (proper kpc per arcsec)"),
        {"kind": "figure", "id": "fd-fig-hz", "spec": {
            "title": "Expansion rate H(z)/(1+z)", **_z_axis(c), "y_title": "H/(1+z) [km s⁻¹ Mpc⁻¹]",
            "y_hover": "H/(1+z)", "unit": "km s⁻¹ Mpc⁻¹",
            "series": _curve_series(c, lambda cv: compute.round_significant(
                np.asarray(cv["at"]["hubble_parameter"]) / (1 + np.asarray(cv["z"])))),
            "strip": _strip(c, lambda cv: np.asarray(cv["at"]["hubble_parameter"]) / (1 + np.asarray(cv["z"])))}},
    ]
    # the link's measurements on the matching plots (nothing when the link names none)
    if choice in DISTANCE_KIND:
        blocks[0]["spec"]["points"] = _data_points(c, DISTANCE_KIND[choice])
    blocks[1]["spec"]["points"] = _residual_points(c, "distance_modulus")
    blocks[3]["spec"]["points"] = _data_points(c, "hubble_parameter", lambda z, v, err: (v / (1 + z), err / (1 + z)))
    notes = [{"kind": "text", "text": f"Measurements: {problem}", "class": "fd-error"}
             for problem in [measurements(c)[1]] if problem]
    if blocks[1]["spec"]["points"]:
        blocks.insert(2, {"kind": "text", "text": (
            "The supernova offset M is free: the points are the moduli minus the reference model with its best "
            "M; another model's curve is shown without its own M, so a constant shift between them does not "
            "change its χ² (see the data panel).")})
    return {"controls": controls, "blocks": blocks + notes + _failures_note(c)}


def _time(c: Comparison) -> dict:
    history = {"kind": "figure", "id": "fd-fig-history", "spec": {
        "title": "Scale factor against cosmic time, into the future", "x_title": "time since the big bang t [Gyr]",
        "x_hover": "t [Gyr]", "y_title": "scale factor a [dimensionless]", "y_hover": "a", "unit": "",
        "series": _curve_series(c, lambda cv: cv["history"]["a"], x_pick=lambda cv: cv["history"]["t"]),
        "strip": None,
        "markers": [{"x": e.curves["epochs"]["age_today"], "text": f"today ({e.name})", "slot": e.slot}
                    for e in c.entries if e.curves["epochs"].get("age_today") is not None]}}
    return {"blocks": [_quantity_figure(c, "age"), _quantity_figure(c, "lookback_time"), history]
            + _failures_note(c)}


def survey_rows(c: Comparison) -> list[list[str]]:
    view = c.state.view
    volumes = dict(zip((e.slot for e in c.entries), fetch_many(compute.survey_volume, [
        (_key_of(c, e.slot), view.sky_area, *view.survey) for e in c.entries])))
    ref = volumes.get(c.reference.slot) if c.reference else None
    return [[e.name, with_unit(volumes[e.slot], "Gpc³"),
             number(volumes[e.slot] / ref if ref else None, 5)] for e in c.entries]


def _state_of(c: Comparison, slot: int) -> codec.ModelState:
    return next(m for m in c.state.models if m.slot == slot)


def _key_of(c: Comparison, slot: int) -> str:
    return next(r.key for r in c.resolved if r.state.slot == slot)


def _view_control(c: Comparison, key: str, label: str, value: str, range_text: str) -> dict:
    invalid = dict(c.state.view.invalid)
    error = next((p.message for p in c.state.view.problems() if p.key == key), None)
    return {"key": key, "kind": "text", "label": label, "value": invalid.get(key, value),
            "range": range_text, "error": error}


def _volume(c: Comparison) -> dict:
    view = c.state.view
    controls = [
        _view_control(c, "sky", "survey sky area [deg²]", codec.format_number(view.sky_area),
                      f"0 < area ≤ {codec.FULL_SKY_DEG2:.2f} deg²"),
        _view_control(c, "zs", "survey redshift range z_low, z_high", ",".join(map(codec.format_number,
                                                                                  view.survey)),
                      "0 ≤ z_low < z_high"),
    ]
    ref_name = c.reference.name if c.reference else "reference"
    blocks = [
        {"kind": "table", "title": (f"Survey box: {codec.format_number(view.sky_area)} deg², "
                                    f"{view.survey[0]:g} < z < {view.survey[1]:g}"),
         "header": ["model", "comoving volume [Gpc³]", f"ratio to {ref_name} [dimensionless]"],
         "rows": survey_rows(c) if c.entries else []},
        _quantity_figure(c, "comoving_volume", y_log=view.zmax > 20),
        _quantity_figure(c, "comoving_volume_element"),
    ]
    return {"controls": controls, "blocks": blocks + _failures_note(c)}


def _acoustic(c: Comparison) -> dict:
    rows = []
    for e in c.entries:
        ac = e.curves["acoustic"]
        theta = ac.get("theta_star")
        rows.append([e.name, number(ac.get("z_star"), 6), with_unit(ac.get("r_star"), "Mpc", 6),
                     with_unit(math.degrees(theta) if theta is not None else None, "deg", 6),
                     number(100 * theta if theta is not None else None, 6),
                     number(ac.get("z_drag"), 6), with_unit(ac.get("r_drag"), "Mpc", 6)])
    blocks = [{"kind": "table", "title": "Acoustic scales", "header": [
        "model", "z* [dimensionless]", "r* = r_s(z*) [Mpc]", "θ* [deg]", "100 θ* [rad × 100]",
        "z_drag [dimensionless]", "r_drag [Mpc]"], "rows": rows},
        {"kind": "text", "text": "z* from the fit of Hu & Sugiyama (1996); z_drag from Eisenstein & Hu (1998), "
                                 "about 4 % below Boltzmann-code values; r_drag from the calibrated formula of "
                                 "Aubourg et al. (2015), eq. 16."}]
    for key, title, sym in (("dm_rd", "D_M / r_drag", "D_M/r_d"), ("dh_rd", "D_H / r_drag with D_H = c/H(z)",
                                                                   "D_H/r_d"),
                            ("dv_rd", "D_V / r_drag", "D_V/r_d")):
        blocks.append({"kind": "figure", "id": f"fd-fig-{key}", "spec": {
            "title": title, **_z_axis(c), "y_title": f"{sym} [dimensionless]", "y_hover": sym, "unit": "",
            "series": _curve_series(c, lambda cv, k=key: cv["bao"][k]),
            "strip": _strip(c, lambda cv, k=key: cv["bao"][k]),
            "points": _data_points(c, {"dm_rd": "dm_over_rd", "dh_rd": "dh_over_rd", "dv_rd": "dv_over_rd"}[key])}})
    notes = [{"kind": "text", "text": f"Measurements: {problem}", "class": "fd-error"}
             for problem in [measurements(c)[1]] if problem]
    return {"blocks": blocks + notes + _failures_note(c)}


def table_rows(c: Comparison) -> tuple[list[str], list[list[str]]]:
    view = c.state.view
    ref_name = c.reference.name if c.reference else "reference"
    header = ["quantity [unit]", "z"]
    for e in c.entries:
        header.append(e.name)
        if e is not c.reference:
            header.append(f"{e.name} / {ref_name}")
    values = dict(zip((e.slot for e in c.entries), fetch_many(
        compute.values_at, [(_key_of(c, e.slot), view.redshifts) for e in c.entries])))
    z_texts = [number(z, 6) for z in view.redshifts]
    rows = []
    with np.errstate(all="ignore"):
        for key in model.QUANTITIES:
            unit = unit_of(key)
            ref = np.asarray(values[c.reference.slot][key], dtype=float) if c.reference else None
            columns = []  # per model: its values, then (except the reference) the ratio, as text
            for e in c.entries:
                v = np.asarray(values[e.slot][key], dtype=float)
                columns.append([number(x, 6) for x in v.tolist()])
                if e is not c.reference:
                    ratio = np.where(ref != 0, v / np.where(ref != 0, ref, 1.0), np.nan)
                    columns.append([number(x, 6) for x in ratio.tolist()])
            name = f"{model.QUANTITIES[key].symbol} [{unit or 'dimensionless'}]"
            rows.extend([name, z_texts[i], *(col[i] for col in columns)] for i in range(len(z_texts)))
    return header, rows


def _table(c: Comparison) -> dict:
    view = c.state.view
    quantity = view.inverse_quantity
    unit = unit_of(quantity)
    controls = [
        _view_control(c, "z", "redshifts (comma-separated)", ",".join(map(codec.format_number, view.redshifts)),
                      f"up to {codec.MAX_TABLE_REDSHIFTS} values, {codec.Z_MIN:g} ≤ z ≤ {codec.Z_MAX:g}"),
        {"key": "iq", "kind": "dropdown", "label": "inverse look-up: quantity", "value": quantity,
         "options": [{"label": f"{model.QUANTITIES[q].description} [{unit_of(q) or 'dimensionless'}]",
                      "value": q} for q in codec.invertible()]},
        _view_control(c, "iv", f"value [{unit or 'dimensionless'}]", codec.format_number(view.inverse_value),
                      "0 ≤ value"),
    ]
    header, rows = table_rows(c) if c.entries else ([], [])
    found = fetch_many(compute.inverse_lookup, [(_key_of(c, e.slot), quantity, view.inverse_value)
                                                 for e in c.entries])
    inverse_rows = [[e.name, number(z, 6)] for e, z in zip(c.entries, found)]
    blocks = [
        {"kind": "table", "title": (f"Redshift where {model.QUANTITIES[quantity].description} = "
                                    f"{with_unit(view.inverse_value, unit)}"),
         "header": ["model", "z [dimensionless] (– where none)"], "rows": inverse_rows},
        {"kind": "table", "title": "Every quantity at the link's redshifts", "header": header, "rows": rows,
         "colours": [None, None] + [c2 for e in c.entries for c2 in
                                    ([slot_colour(e.slot)] + ([] if e is c.reference else [None]))]},
    ]
    return {"controls": controls, "blocks": blocks + _failures_note(c)}


# ----------------------------------------------------------------------------- measurements

# How each measurement kind is named on screen, and its unit as shown (model's kind registry).
KIND_TITLES = {key: (kind.title, kind.unit) for key, kind in model.MEASUREMENT_KINDS.items()}
# The distances panel's distance choice -> the measurement kind drawn on it (D_M has none).
DISTANCE_KIND = {"dl": "luminosity_distance", "da": "angular_diameter_distance", "dc": "comoving_distance"}
DATA_COLOUR = "#222222"
SYNTHETIC_NOTE = "synthetic demo data (made by scripts/make_demo_data.py from an invented model; not real measurements)"


def _synthetic(stored) -> bool:
    return stored.name == "demo_synthetic.csv" or bool(stored.measurements.label) and all(
        t.lower().startswith("synthetic") for t in stored.measurements.label)


def measurements(c: Comparison):
    """``(StoredData, None)``, ``(None, message)`` when the link's set cannot be loaded, or
    ``(None, None)`` when the link names none. Looked up once per comparison."""
    if "stored" not in c.extras:
        digest = c.state.view.data
        if digest is None or "data" in dict(c.state.view.invalid):
            problem = next((p.message for p in c.state.view.problems() if p.key == "data"), None)
            c.extras["stored"] = (None, problem)
        else:
            from server import data_store
            try:
                c.extras["stored"] = (data_store.load(digest), None)
            except data_store.DataError as err:
                c.extras["stored"] = (None, str(err))
    return c.extras["stored"]


def scores(c: Comparison) -> dict:
    """slot -> `compute.goodness` result plus ``delta_chi2`` against the reference; models that
    cannot be scored get ``{"error": message}``."""
    if "scores" in c.extras:
        return c.extras["scores"]
    stored, _ = measurements(c)
    out = {}
    if stored is not None and c.entries:
        view = c.state.view
        results = fetch_many(compute.goodness, [(_key_of(c, e.slot), stored.hash, view.r_d,
                                                 compute.fitted_count(view, e.slot)) for e in c.entries],
                             return_exceptions=True)
        for e, result in zip(c.entries, results):
            out[e.slot] = {"error": f"m{e.slot}: could not be scored: {result}"} if isinstance(
                result, Exception) else dict(result)
        ref = out.get(c.reference.slot, {}) if c.reference else {}
        for result in out.values():
            if "chi2" in result:
                result["delta_chi2"] = result["chi2"] - ref.get("chi2", math.nan)
    c.extras["scores"] = out
    return out


def _kind_rows(stored, kind):
    return np.flatnonzero(stored.measurements.kind == kind)


def _data_points(c: Comparison, kind: str, transform=None, name: str | None = None) -> list[dict]:
    """The measurements of one kind as a points spec (value and error, optionally transformed as
    ``transform(z, value, error) -> (value, error)``), limited to the drawn redshift range."""
    stored, _ = measurements(c)
    if stored is None:
        return []
    rows = _kind_rows(stored, kind)
    rows = rows[stored.measurements.z[rows] <= c.state.view.zmax]
    if rows.size == 0:
        return []
    d = stored.measurements
    z, value, error = d.z[rows], d.value[rows], d.error[rows]
    if transform is not None:
        value, error = transform(z, value, error)
    title = KIND_TITLES[kind][0]
    prefix = "synthetic data" if _synthetic(stored) else "data"
    return [{"name": name or f"{prefix}: {title} ({rows.size})", "x": z, "y": value, "error": error,
             "text": [d.label[i] for i in rows], "colour": DATA_COLOUR, "size": 5}]


def _residual_points(c: Comparison, kind: str) -> list[dict]:
    """Δμ plot: the supernova moduli minus the reference model's prediction (its best offset)."""
    stored, _ = measurements(c)
    if stored is None or c.reference is None:
        return []
    ref = scores(c).get(c.reference.slot, {})
    if "residual" not in ref:
        return []
    rows = _kind_rows(stored, kind)
    rows = rows[stored.measurements.z[rows] <= c.state.view.zmax]
    if rows.size == 0:
        return []
    d = stored.measurements
    prefix = "synthetic data" if _synthetic(stored) else "data"
    return [{"name": f"{prefix} − {c.reference.name} (offset M = {number(ref['offset'], 4)} mag)",
             "x": d.z[rows], "y": np.asarray(ref["residual"])[rows], "error": d.error[rows],
             "text": [d.label[i] for i in rows], "colour": DATA_COLOUR, "size": 5}]


def _score_table(c: Comparison) -> dict:
    results = scores(c)
    with_ic = c.state.view.fit is not None
    ref_name = c.reference.name if c.reference else "reference"
    header = ["model", "χ² [dimensionless]", "degrees of freedom [count]", "p-value [probability]",
              f"Δχ² vs {ref_name} [dimensionless]", "free parameters k [count]"] + (["AIC [dimensionless]", "BIC [dimensionless]"] if with_ic else []) + [
              "r_d used [Mpc]", "supernova offset M [mag]"]
    rows = []
    for e in c.entries:
        r = results.get(e.slot, {})
        if "chi2" not in r:
            rows.append([e.name, r.get("error", "–")] + ["–"] * (len(header) - 2))
            continue
        row = [e.name, number(r["chi2"], 6), str(r["dof"]), number(r["p_value"], 3),
               number(r["delta_chi2"], 5), str(r["n_parameters"])]
        if with_ic:
            row += [number(r["aic"], 6), number(r["bic"], 6)]
        row += [with_unit(r["r_d"], "Mpc", 6), with_unit(r["offset"], "mag", 4)]
        rows.append(row)
    return {"kind": "table", "title": "Goodness of fit", "header": header, "rows": rows,
            "colours": [None] * len(header)}


def _residual_figures(c: Comparison) -> list[dict]:
    stored, _ = measurements(c)
    results = scores(c)
    d = stored.measurements
    blocks = []
    for kind in d.kinds_present:
        rows = _kind_rows(stored, kind)
        title, unit = KIND_TITLES[kind]
        unit_text = unit or "dimensionless"
        points, pulls = [], []
        for e in c.entries:
            r = results.get(e.slot, {})
            if "residual" not in r:
                continue
            labels = [d.label[i] for i in rows]
            # many models' points share each redshift: let the ones below show through
            opacity = 0.55 if len(c.entries) > 1 and rows.size > 50 else 1.0
            points.append({"name": e.name, "slot": e.slot, "x": d.z[rows], "y": np.asarray(r["residual"])[rows],
                           "error": d.error[rows], "text": labels, "group": f"slot{e.slot}", "opacity": opacity})
            pulls.append({"mode": "markers", "name": e.name, "slot": e.slot, "x": d.z[rows],
                          "y": np.asarray(r["pull"])[rows], "text": labels, "showlegend": False,
                          "group": f"slot{e.slot}", "y_hover": "pull", "opacity": opacity})
        z = d.z[rows]
        blocks.append({"kind": "figure", "id": f"fd-fig-residual-{kind}", "spec": {
            "title": f"Residuals of {title} ({rows.size} measurements): data − model, and pulls",
            "x_title": "redshift z [dimensionless]", "x_hover": "z",
            "x_log": bool(z.size and z.min() > 0 and z.max() / z.min() > 20),
            "y_title": f"data − model [{unit_text}]", "y_hover": "data − model", "unit": unit,
            "series": [], "points": points,
            "strip": {"y_title": "pull [σ]", "series": pulls, "unit": "σ"}}})
    return blocks


def _data(c: Comparison) -> dict:
    stored, problem = measurements(c)
    controls = [{"key": "rd", "kind": "dropdown", "label": "sound horizon r_d for the D/r_d measurements",
                 "value": c.state.view.r_d, "options": [
                     {"label": "each model's own r_drag", "value": "model"},
                     {"label": "free (minimised for each model)", "value": "free"}]}]
    if stored is None:
        text = problem or ("No measurements in this link yet: upload or paste a table above, or load the "
                           "synthetic demo data.")
        return {"controls": controls, "blocks": [{"kind": "text", "text": text,
                                                  "class": "fd-error" if problem else "fd-note"}]}
    d = stored.measurements
    counts = ", ".join(f"{int(np.sum(d.kind == k))} {KIND_TITLES[k][0]}" for k in d.kinds_present)
    source = {"file": "covariance file", "pairs": "errors and correlated pairs", "diagonal": "errors only"}
    about = (f"Measurement set data={stored.hash}" + (f" ({stored.name})" if stored.name else "") +
             f": {len(d)} rows ({counts}); covariance from {source[d.covariance_source]}.")
    blocks = []
    if _synthetic(stored):
        blocks.append({"kind": "text", "text": "These are " + SYNTHETIC_NOTE + ".", "class": "fd-error"})
    blocks += [
        {"kind": "text", "text": about},
        {"kind": "text", "text": (
            "χ² = rᵀC⁻¹r with the full covariance; the supernova offset M is marginalised analytically "
            "(Goliath et al. 2001; Conley et al. 2011), r_d is each model's own or minimised. The p-value is "
            "P(χ²_dof ≥ χ²); Δχ² is against the reference model. AIC = χ² + 2k and BIC = χ² + k ln N are "
            "shown once a fit with free parameters is in the link.")},
        _score_table(c),
    ]
    blocks += _residual_figures(c)
    return {"controls": controls, "blocks": blocks + _failures_note(c)}


def panel(c: Comparison, tab: str | None = None) -> dict:
    tab = tab or c.state.view.tab
    if not c.entries:
        return {"blocks": [{"kind": "text", "text": "No model can be drawn: fix the errors on the cards."}]
                + _failures_note(c)}
    return tabs.tab(tab).builder(c)


# ----------------------------------------------------------------------------- downloads


def panel_csv(c: Comparison, tab: str | None = None) -> str:
    """Long-format CSV of everything a panel shows: figure curves and tables."""
    body = panel(c, tab)
    out = io.StringIO()
    writer = csv.writer(out)
    writer.writerow(["# Friedmann Desk", f"panel={tab or c.state.view.tab}", f"link=?{codec.encode(c.state)}"])
    for block in body["blocks"]:
        if block["kind"] == "table":
            writer.writerow([f"# table: {block.get('title', '')}"])
            writer.writerow(block["header"])
            writer.writerows(block["rows"])
        elif block["kind"] in ("figure", "multiples"):
            spec = block["spec"]
            x_title, y_title = spec.get("x_title", "x"), spec.get("y_title", "y")
            groups = [(spec["title"], spec["series"])] if block["kind"] == "figure" else [
                (f"{spec['title']} / {p['title']}", p["series"]) for p in spec["panels"]]
            if block["kind"] == "figure" and spec.get("strip"):
                groups.append((f"{spec['title']} / {spec['strip']['y_title']}", spec["strip"]["series"]))
            if block["kind"] == "figure" and spec.get("points"):
                groups.append((f"{spec['title']} / measurements", spec["points"]))
            writer.writerow([f"# figure: {spec['title']}"])
            writer.writerow(["curve", "series", x_title, y_title])
            for title, series in groups:
                for s in series:
                    for x, y in zip(np.asarray(s["x"], dtype=float), np.asarray(s["y"], dtype=float)):
                        writer.writerow([title, s["name"], f"{x:.6g}", "" if not math.isfinite(y) else f"{y:.6g}"])
    return out.getvalue()


def parameter_sets(c: Comparison) -> str:
    """JSON of every model's inputs and resolved parameters, with the canonical link."""
    models = []
    for m in c.state.models:
        entry = next((e for e in c.entries if e.slot == m.slot), None)
        models.append({
            "slot": m.slot, "label": m.label, "link_inputs": {k: v for k, v in m.physical().items()},
            "resolved": entry.curves["params"] if entry else None,
            "error": c.failures[m.slot].message if m.slot in c.failures else None,
        })
    return json.dumps(compute.json_ready({"version": codec.SCHEME_VERSION, "query": codec.encode(c.state),
                                          "reference": codec.reference_slot(c.state), "models": models}),
                      indent=2, ensure_ascii=False)


def page_options() -> dict:
    return {"tabs": list(TAB_TITLES.items()),
            "zmax_range": f"0.01 ≤ z_max ≤ {codec.Z_MAX:g}",
            "data_tools": data_tool_options()}


# ----------------------------------------------------------------------------- data tools

FIT_LABELS = {"h0": "H₀", "omega_m": "Ω_m", "omega_k": "Ω_k", "w0": "w₀", "wa": "w_a",
              "r_d": "r_d (nuisance)", "offset": "supernova offset M (nuisance)"}
# Bounds the page proposes: wide enough for any model people compare here, narrow enough for a
# readable 60 x 60 map (judgement, no source). The model accepts any within FIT_PARAMETERS.
DEFAULT_BOUNDS = {"h0": (50.0, 90.0), "omega_m": (0.05, 0.7), "omega_k": (-0.3, 0.3), "w0": (-2.0, -0.3),
                  "wa": (-3.0, 2.0), "r_d": (120.0, 180.0), "offset": (-2.0, 2.0)}
MAP_POINTS = 60


class FitRequestError(ValueError):
    """A fit or map request from the page cannot be run; the message names the field."""


def _fit_unit(name: str) -> str:
    return model.FIT_PARAMETERS[name][0]


def _range_text(name: str) -> str:
    unit, low, high = model.FIT_PARAMETERS[name]
    return f"accepted {low:g} to {high:g}" + (f" {unit}" if unit else "")


def data_tool_options() -> dict:
    from server import data_store

    limits = data_store.LIMITS
    return {
        "format": ("One row per measurement: a header line naming the columns z, kind, value, error (required) "
                   "and label, z_helio, group, correlation (optional), then comma-separated rows; kinds: "
                   + ", ".join(model.MEASUREMENT_KINDS) + ". Full description: docs/measurements-format.md."),
        "placeholder": "z,kind,value,error,label\n0.51,dm_over_rd,13.6,0.25,my survey z=0.51\n"
                       "0.8,hubble_parameter,95,9,my H(z) point",
        "limits": (f"Limits: measurement file ≤ {limits.max_bytes} bytes, ≤ {limits.max_rows} rows, cells ≤ "
                   f"{limits.max_cell_chars} characters; covariance file ≤ {limits.max_covariance_bytes} bytes. "
                   "The data are stored on this server under their content hash and named in the link; stored "
                   "sets expire."),
        "demo_label": "load demo data (synthetic)",
        "parameters": [{"name": n, "label": FIT_LABELS[n], "unit": _fit_unit(n), "low": codec.format_number(lo),
                        "high": codec.format_number(hi), "range": _range_text(n)}
                       for n, (lo, hi) in DEFAULT_BOUNDS.items()],
        "default_free": ["omega_m", "w0"],
        "map_default": ("omega_m", "w0"),
        "catalogue": ("A CSV with a column named z (up to 1 000 000 rows, 64 MiB) comes back with every quantity "
                      "of the table panel added, for the reference model or every model, as columns "
                      "m<slot>:<quantity>[<unit>] (9 significant digits; empty where undefined). The file is "
                      "sent to POST /api/v1/catalogue and the answer streams back."),
    }


def store_upload(state: codec.LinkState, measurements, covariance=None, name: str = "") -> tuple[str, str]:
    """Store an upload and return ``(new search, message)``; raises `data_store.DataError`."""
    from server import data_store

    stored = data_store.store(measurements, covariance, name)
    d = stored.measurements
    what = SYNTHETIC_NOTE if _synthetic(stored) else (stored.name or "your table")
    message = (f"Stored {len(d)} measurements from {what} as data={stored.hash}; the link now carries it.")
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
    stored_hash = state.view.data
    if stored_hash is None or "data" in dict(state.view.invalid):
        raise FitRequestError("data: no measurements in the link; upload or paste a table, or load the "
                              "synthetic demo data, first")
    m = next((x for x in state.models if x.slot == slot), None)
    if m is None:
        raise FitRequestError(f"start model: m{slot} is not in the link; choose one of "
                              f"{', '.join(f'm{s}' for s in state.slots())}")
    resolved = compute.resolve(m)
    if resolved.problem is not None:
        raise FitRequestError(f"start model m{slot} is not valid: {resolved.problem.message}")
    return m, resolved


def fit_request(state: codec.LinkState, slot, free: list[str], bounds: dict) -> dict:
    """Run a quick fit from the page; returns the stored fit (plain data). Raises
    `FitRequestError` (bad request), `data_store.DataError` (data gone) or `model.FitError`."""
    if not free:
        raise FitRequestError("free parameters: choose at least one to fit")
    if len(free) > 7:
        raise FitRequestError("free parameters: at most the seven offered")
    m, resolved = _slot_for_fit(state, slot)
    from server import data_store

    data_store.load(state.view.data)  # a clear message when the set has expired
    ordered = [n for n in model.FIT_PARAMETERS if n in free]
    spec = parse_bounds(ordered, bounds)
    result = compute.fit(resolved.key, state.view.data, spec, state.view.r_d)
    return {"slot": m.slot, "name": m.name, "data": state.view.data, "r_d_mode": state.view.r_d,
            "bounds": [list(b) for b in spec], **result}


def fit_report(fit: dict) -> dict:
    """Text tables of a fit's best values, 1σ errors and correlations."""
    names = fit["names"]
    rows = []
    bounds = {b[0]: b[1:] for b in fit["bounds"]}
    for name, value, error in zip(names, fit["values"], fit["errors"]):
        unit = _fit_unit(name)
        rows.append([FIT_LABELS[name] + (f" [{unit}]" if unit else " [dimensionless]"), number(value, 6),
                     number(error, 3), f"{number(bounds[name][0], 4)} to {number(bounds[name][1], 4)}",
                     "yes: error not meaningful" if name in fit["at_bound"] else "no"])
    symbols = [FIT_LABELS[n].split(" (")[0] for n in names]
    correlation_rows = [[symbols[i]] + [number(v, 3) for v in row] for i, row in enumerate(fit["correlation"])] \
        if len(names) > 1 else []
    r_d_text = with_unit(fit["r_d"], "Mpc", 6) + (" (fitted)" if "r_d" in names else
                                                  " (minimised)" if fit["r_d_mode"] == "free" else " (model's)")
    summary = [
        f"χ²_min = {number(fit['chi2_min'], 6)} [dimensionless] with {fit['dof']} degrees of freedom "
        f"(p-value {number(fit['p_value'], 3)}); k = {fit['n_parameters']} free parameters: "
        f"AIC = {number(fit['aic'], 6)}, BIC = {number(fit['bic'], 6)}.",
        f"r_d = {r_d_text}; supernova offset M = {with_unit(fit['offset'], 'mag', 4)}.",
        f"Optimiser: {fit['n_evaluations']} residual evaluations; {fit['message']}",
    ]
    warnings = [] if fit["success"] else ["The optimiser did not report convergence; treat the numbers with care."]
    if fit["at_bound"]:
        warnings.append("On a bound: " + ", ".join(FIT_LABELS[n] for n in fit["at_bound"])
                        + "; widen the bounds and fit again.")
    return {"title": f"Best fit of {', '.join(symbols)} starting from m{fit['slot']}: {fit['name']}",
            "header": ["parameter [unit]", "best fit", "1σ error", "bounds", "on a bound"], "rows": rows,
            "correlation_header": [""] + symbols, "correlation_rows": correlation_rows,
            "summary": summary, "warnings": warnings}


def map_request(state: codec.LinkState, slot, x_name, y_name, bounds: dict, fit: dict | None) -> dict:
    """A Δχ² map spec for `layouts.figures.chi2_map_figure` (plus notes); the grid spans the
    bound inputs, or the last fit's best value ± 5σ when that fit varied both parameters."""
    if x_name == y_name:
        raise FitRequestError(f"map: x and y are both {FIT_LABELS.get(x_name, x_name)}; choose two different "
                              "parameters")
    m, resolved = _slot_for_fit(state, slot)
    from server import data_store

    data_store.load(state.view.data)
    (xb, yb) = parse_bounds([x_name, y_name], bounds)
    notes = []
    if fit and fit.get("slot") == m.slot and fit.get("data") == state.view.data and \
            {x_name, y_name} <= set(fit["names"]):
        spans = []
        for name, (_, low, high) in ((x_name, xb), (y_name, yb)):
            i = fit["names"].index(name)
            centre, sigma = fit["values"][i], fit["errors"][i]
            if math.isfinite(sigma) and sigma > 0:
                _, low_ok, high_ok = model.FIT_PARAMETERS[name]
                low, high = max(low_ok, centre - 5 * sigma), min(high_ok, centre + 5 * sigma)
            spans.append((name, low, high))
        xb, yb = spans
        notes.append("Grid: the last fit's best value ± 5σ in each parameter; the other parameters at the start "
                     f"model m{m.slot}'s values, so the map is a slice through the best fit only where those agree.")
    grid = compute.chi2_grid(resolved.key, state.view.data, xb, yb, MAP_POINTS, state.view.r_d)

    def title(name):
        unit = _fit_unit(name)
        return f"{FIT_LABELS[name]} [{unit or 'dimensionless'}]"
    best = grid["best"]
    notes.append(f"Smallest χ² on the grid: {number(grid['chi2_min'], 6)} [dimensionless] at "
                 f"{FIT_LABELS[x_name]} = {with_unit(best[x_name], _fit_unit(x_name), 5)}, "
                 f"{FIT_LABELS[y_name]} = {with_unit(best[y_name], _fit_unit(y_name), 5)}.")
    return {"spec": {"title": f"Δχ² for m{m.slot}: {m.name}", "x_title": title(x_name), "y_title": title(y_name),
                     "x": grid["x"], "y": grid["y"], "delta_chi2": grid["delta_chi2"],
                     "levels": [tuple(level) for level in grid["levels"]],
                     "best": (best[x_name], best[y_name])}, "notes": notes}
