"""From a LinkState to plain panel data: card contents, figure specs, tables, CSV and JSON.

This module decides *what* is compared (series, ratio strips, table rows); `layouts` decides
how it looks. Everything returned is plain data (str, float, lists, numpy arrays).
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import dataclass

import numpy as np

import model
from layouts.palette import COMPONENT_COLOURS, slot_colour
from layouts.text import number, with_unit
from server import codec, compute
from server.cache import fetch_many
from server.presets import PRESETS

__all__ = ["Comparison", "compare", "cards", "card_status", "panel", "panel_csv", "parameter_sets",
           "page_options", "TAB_TITLES", "SYMBOLS", "unit_of"]

TAB_TITLES = {
    "budget": "Energy budget",
    "distances": "Distances",
    "time": "Time",
    "volume": "Volume",
    "acoustic": "Acoustic scales",
    "table": "Table",
}

# Short symbols for evaluate() keys (column headers, hover text).
SYMBOLS = {
    "scale_factor": "a", "hubble_parameter": "H", "hubble_distance_at_z": "D_H",
    "comoving_distance": "D_C", "transverse_comoving_distance": "D_M",
    "angular_diameter_distance": "D_A", "luminosity_distance": "D_L", "distance_modulus": "μ",
    "lookback_time": "t_L", "age": "t", "comoving_volume": "V_C",
    "comoving_volume_element": "dV_C/dz/dΩ", "angular_scale": "kpc per arcsec",
    "volume_averaged_distance": "D_V", "particle_horizon": "χ_particle", "event_horizon": "χ_event",
    "deceleration_parameter": "q",
}
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
    unit = model.QUANTITIES.get(key, ("", ""))[0] if hasattr(model, "QUANTITIES") else ""
    return "" if unit in ("", "1") else unit


def _axis_title(key: str) -> str:
    description = model.QUANTITIES.get(key, ("", key))[1] if hasattr(model, "QUANTITIES") else key
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
    spec = {"title": title or model.QUANTITIES.get(key, ("", key))[1], **_z_axis(c),
            "y_title": _axis_title(key), "y_hover": SYMBOLS.get(key, key), "unit": unit_of(key), "y_log": y_log,
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
                 "options": [{"label": model.QUANTITIES.get(v, ("", v))[1], "value": k}
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
    return {"controls": controls, "blocks": blocks + _failures_note(c)}


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
            "strip": _strip(c, lambda cv, k=key: cv["bao"][k])}})
    return {"blocks": blocks + _failures_note(c)}


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
            name = f"{SYMBOLS.get(key, key)} [{unit or 'dimensionless'}]"
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
         "options": [{"label": f"{model.QUANTITIES.get(q, ('', q))[1]} [{unit_of(q) or 'dimensionless'}]",
                      "value": q} for q in codec.invertible()]},
        _view_control(c, "iv", f"value [{unit or 'dimensionless'}]", codec.format_number(view.inverse_value),
                      "0 ≤ value"),
    ]
    header, rows = table_rows(c) if c.entries else ([], [])
    found = fetch_many(compute.inverse_lookup, [(_key_of(c, e.slot), quantity, view.inverse_value)
                                                 for e in c.entries])
    inverse_rows = [[e.name, number(z, 6)] for e, z in zip(c.entries, found)]
    blocks = [
        {"kind": "table", "title": (f"Redshift where {model.QUANTITIES.get(quantity, ('', quantity))[1]} = "
                                    f"{with_unit(view.inverse_value, unit)}"),
         "header": ["model", "z [dimensionless] (– where none)"], "rows": inverse_rows},
        {"kind": "table", "title": "Every quantity at the link's redshifts", "header": header, "rows": rows,
         "colours": [None, None] + [c2 for e in c.entries for c2 in
                                    ([slot_colour(e.slot)] + ([] if e is c.reference else [None]))]},
    ]
    return {"controls": controls, "blocks": blocks + _failures_note(c)}


_BUILDERS = {"budget": _budget, "distances": _distances, "time": _time, "volume": _volume,
             "acoustic": _acoustic, "table": _table}


def panel(c: Comparison, tab: str | None = None) -> dict:
    tab = tab or c.state.view.tab
    if not c.entries:
        return {"blocks": [{"kind": "text", "text": "No model can be drawn: fix the errors on the cards."}]
                + _failures_note(c)}
    return _BUILDERS[tab](c)


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
            "zmax_range": f"0.01 ≤ z_max ≤ {codec.Z_MAX:g}"}
