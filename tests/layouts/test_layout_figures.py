"""How layouts draws the view specs: the look of each role (slot colours and dashes, component
colours of Okabe & Ito 2008, dotted guides, data markers), crowded residuals, user text kept as
text, and the data tools' texts built from the constants they describe."""

from __future__ import annotations

import json

import numpy as np

import model
from dash import html

from layouts.data_panel import data_tools_sections
from layouts.figures import figure, small_multiples
from layouts.palette import OKABE_ITO, slot_colour
from server.views.data_tools import MAP_POINTS, data_tool_options


def test_layouts_choose_the_look_from_the_roles():
    x = np.array([1.0, 2.0, 3.0])
    spec = {"title": "t", "x_title": "z", "y_title": "y", "x_hover": "z", "y_hover": "y", "unit": "Mpc",
            "x_log": False, "strip": None,
            "series": [{"name": "A", "role": "model", "slot": 2, "x": x, "y": x}],
            "points": [{"name": ["data (offset ", {"value": 0.1234567, "digits": 3, "unit": "mag"}, ")"],
                        "role": "data", "x": x, "y": x, "error": x, "text": ["<b>"] * 3}]}
    curve, points = figure(spec)["data"]
    assert curve["mode"] == "lines" and curve["line"]["color"] == slot_colour(2) and curve["line"]["dash"] == "dash"
    assert points["mode"] == "markers" and points["name"] == "data (offset 0.123 mag)"
    assert points["text"] == ["&lt;b&gt;"] * 3  # labels from a file stay text
    budget = {"title": "t", "x_title": "a", "y_title": "Ω", "x_hover": "a", "x_log": True, "unit": "",
              "panels": [{"title": "A", "slot": 1, "series": [
                  {"name": "photons", "role": "component", "component": "photons", "slot": 1, "x": x, "y": x},
                  {"name": "critical density", "role": "component", "component": "critical", "slot": 1, "x": x,
                   "y": x},
                  {"name": "slope", "role": "guide", "component": "photons", "slot": 1, "x": x, "y": x}]}]}
    (drawn,) = small_multiples(budget)["figures"]  # one small figure per model
    photons, critical, guide = drawn["data"]
    # component colours from Okabe & Ito (2008), "Color Universal Design"
    assert photons["line"]["color"] == OKABE_ITO["orange"] == "#E69F00"
    assert critical["line"]["dash"] == "dash" and guide["line"]["dash"] == "dot"
    assert guide["line"]["width"] < photons["line"]["width"]


def _panel(slot, y, markers=()):
    a = np.geomspace(1e-7, 10.0, 50)
    return {"title": f"M{slot}", "slot": slot, "markers": list(markers), "series": [
        {"name": "photons", "role": "component", "component": "photons", "slot": slot, "x": a, "y": y(a)},
        {"name": "dark energy", "role": "component", "component": "dark_energy", "slot": slot, "x": a, "y": 1 - y(a)}]}


def test_small_multiples_are_one_figure_a_model_on_scales_an_edit_of_another_leaves_alone():
    spec = {"title": "t", "x_title": "a", "y_title": "Ω", "x_hover": "a", "x_log": True, "unit": "",
            "panels": [_panel(1, lambda a: 1 / (1 + a), [{"x": 1.0, "text": "today"}]),
                       _panel(2, lambda a: 0.98 / (1 + a), [{"x": 1.0, "text": "today"},
                                                           {"x": 0.6, "text": "acceleration begins"}])]}
    drawn = small_multiples(spec)
    first, second = drawn["figures"]
    # shared scales: whole decades of a (log10 of 1e-7 and 10) and Ω rounded out to 0.05, padded
    assert first["layout"]["xaxis"]["range"] == second["layout"]["xaxis"]["range"] == [-7.0, 1.0]
    low, high = first["layout"]["yaxis"]["range"]
    assert first["layout"]["yaxis"]["range"] == second["layout"]["yaxis"]["range"]
    assert low < 0 < 1 < high and abs(low / 0.02 + 1) < 1e-6  # the 0..1 range, 2 % on either side
    assert not first["layout"]["showlegend"] and first["layout"]["title"]["text"] == "M1"
    # the key names each component and each kind of epoch once, a kind with one symbol everywhere
    assert [k["name"] for k in drawn["key"]] == ["photons", "dark energy", "today", "acceleration begins"]
    symbols = {k["name"]: k["symbol"] for k in drawn["key"] if k["symbol"]}
    for fig in drawn["figures"]:
        for trace in fig["data"]:
            if trace["legendgroup"].startswith("epoch-"):
                assert trace["marker"]["symbol"][0] == symbols[trace["name"]] and trace["yaxis"] == "y2"
    # m2 edited within the rounding of the shared range: m1's figure is what it was, to the byte
    edited = {**spec, "panels": [spec["panels"][0], _panel(2, lambda a: 0.97 / (1 + a))]}
    again = small_multiples(edited)["figures"]
    assert json.dumps(again[0], sort_keys=True) == json.dumps(first, sort_keys=True)
    assert json.dumps(again[1], sort_keys=True) != json.dumps(second, sort_keys=True)


def test_crowded_residuals_are_lighter_and_pulls_stay_out_of_the_legend():
    x = np.linspace(0.1, 1.0, 60)
    residual = [{"name": f"m{s}", "role": "residual", "slot": s, "x": x, "y": x, "error": x} for s in (1, 2)]
    pulls = [{"name": f"m{s}", "role": "pull", "slot": s, "x": x, "y": x} for s in (1, 2)]
    spec = {"title": "r", "x_title": "z", "y_title": "d", "x_hover": "z", "y_hover": "d", "unit": "mag",
            "x_log": False, "series": [], "points": residual, "strip": {"y_title": "pull", "series": pulls,
                                                                        "unit": "σ"}}
    traces = figure(spec)["data"]
    assert [t["marker"]["opacity"] for t in traces] == [0.55] * 4
    assert [t["showlegend"] for t in traces] == [True, True, False, False]
    alone = figure({**spec, "points": residual[:1], "strip": None})["data"][0]
    assert alone["marker"]["opacity"] == 1.0


def test_map_note_reads_the_grid_size_and_levels_from_one_place():
    options = data_tool_options()
    assert options["map_points"] == MAP_POINTS
    assert options["levels"] == tuple(tuple(level) for level in model.CONFIDENCE_LEVELS_2D)
    texts = [str(n.children) for _, n in _walk_components(html.Div(data_tools_sections(options))) if hasattr(n, "children")]
    # 68 % and 95 % joint regions of two parameters (common practice, no source)
    assert any(f"{MAP_POINTS} × {MAP_POINTS} grid" in t and "Δχ² = 2.30 and 6.18" in t for t in texts)


def _walk_components(node, path=()):
    yield path, node
    children = getattr(node, "children", None)
    for i, child in enumerate(children if isinstance(children, list) else [children] if children is not None else []):
        if hasattr(child, "children") or hasattr(child, "id"):
            yield from _walk_components(child, path + (i,))


def test_epoch_markers_are_one_trace_each_and_four_models_at_one_epoch_stay_apart():
    x = np.array([0.0, 10.0, 20.0])
    ages = [13.8, 13.79, 13.81, 13.8]  # four "today"s within 0.02 Gyr of each other
    spec = {"title": "t", "x_title": "t [Gyr]", "y_title": "a", "x_hover": "t", "y_hover": "a", "unit": "",
            "x_log": False, "strip": None,
            "series": [{"name": f"m{s}", "role": "model", "slot": s, "x": x, "y": x} for s in range(1, 5)],
            "markers": [{"x": age, "text": "today", "slot": s, "model": f"m{s}"} for s, age in enumerate(ages, 1)]}
    drawn = figure(spec)
    assert not drawn["layout"].get("shapes")
    epochs = [t for t in drawn["data"] if t.get("legendgroup") == "epoch-today"]
    assert [t["x"] for t in epochs] == [[age, age] for age in ages]
    tops = [t["y"][0] for t in epochs]
    assert len(set(tops)) == 4 and all(0 < top <= 1 for top in tops) and all(t["y"][1] == 0 for t in epochs)
    assert [t["showlegend"] for t in epochs] == [True, False, False, False]
    assert [t["line"]["color"] for t in epochs] == [slot_colour(s) for s in range(1, 5)]
    assert drawn["layout"][epochs[0]["yaxis"].replace("y", "yaxis")]["range"] == [0, 1]


def test_a_guide_label_stays_inside_its_small_plot():
    # a guide starting at the top of the plot is labelled below its start, one lower down above it:
    # neither rises into the plot's title
    a = np.geomspace(1e-7, 10.0, 2)
    spec = {"title": "t", "x_title": "a", "y_title": "ρ", "x_hover": "a", "x_log": True, "y_log": True, "unit": "",
            "panels": [{"title": "M1", "slot": 1, "series": [
                {"name": "photons", "role": "component", "component": "photons", "slot": 1, "x": a,
                 "y": 1e-30 * a ** -4},
                {"name": "slope ∝ a⁻⁴", "role": "guide", "component": "photons", "slot": 1, "x": a,
                 "y": 1e-30 * a ** -4},
                {"name": "slope constant", "role": "guide", "component": "dark_energy", "slot": 1, "x": a,
                 "y": np.full(2, 1e-26)}]}]}
    (drawn,) = small_multiples(spec)["figures"]
    labels = {n["text"]: n for n in drawn["layout"]["annotations"]}
    assert labels["slope ∝ a⁻⁴"]["yanchor"] == "top" and labels["slope constant"]["yanchor"] == "bottom"
    low, high = drawn["layout"]["yaxis"]["range"]
    assert low <= labels["slope constant"]["y"] < labels["slope ∝ a⁻⁴"]["y"] <= high
