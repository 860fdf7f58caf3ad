"""Plotly figure dicts from the figure specs of `layouts.specs` (built by `server.views`).

The specs say what is drawn (series with a role, a slot, a component); this module decides how
it looks: a model's curves take its slot's colour and dash, an energy component its colour,
guides are thin grey dots, measurements dark markers with error bars, residuals and pulls the
model's colour (lighter where many models' points crowd one plot).

Curves travel as little-endian float32 typed arrays (``{"dtype": "f4", "bdata": ...}``, which
plotly.js reads natively): values are already rounded to 6 significant digits, which float32
keeps, at 4 bytes a number instead of about 10 characters of JSON. Every piece of text that
came from a user goes through `escape_for_figure` first. An evenly spaced x (the redshift grid
on a linear axis) travels as ``x0`` and ``dx`` instead.
"""

from __future__ import annotations

import base64
import weakref

import numpy as np

from layouts.palette import (COMPONENT_COLOURS, COMPONENT_DASHES, DATA_COLOUR, EPOCH_SYMBOLS, GUIDE_COLOUR,
                             GUIDE_DASHES, slot_colour, slot_dash, slot_symbol)
from layouts.text import escape_for_figure, render

__all__ = ["figure", "small_multiples", "typed_array", "uniform_step", "chi2_map_figure", "slot_offsets",
           "FONT_SIZE", "ANNOTATION_SIZE", "TITLE_SIZE", "SLOT_SPREAD"]

# Sizes that read on a meeting-room projector: 14 px text (ticks, axis titles, legend, hover),
# 12 px annotations, 16 px figure titles.
FONT_SIZE, ANNOTATION_SIZE, TITLE_SIZE = 14, 12, 16
FONT = {"family": "system-ui, -apple-system, 'Segoe UI', sans-serif", "size": FONT_SIZE, "color": "#1b1b1b"}
HOVER = {"font": {"size": FONT_SIZE}}
STRIP_SHARE = 0.28


# Encodings of read-only arrays that own their data (the cached model results, frozen by
# server.cache), remembered while the array lives: a cached update re-draws the same curves.
_ENCODED: dict[tuple[str, int], tuple[weakref.ref, object]] = {}


def _once_per_array(kind: str, values, make):
    if not (isinstance(values, np.ndarray) and not values.flags.writeable and values.flags.owndata):
        return make(values)
    key = (kind, id(values))
    hit = _ENCODED.get(key)
    if hit is not None and hit[0]() is values:
        return hit[1]
    out = make(values)
    _ENCODED[key] = (weakref.ref(values, lambda _ref, key=key: _ENCODED.pop(key, None)), out)
    return out


def _encode_f4(values) -> dict:
    data = np.ascontiguousarray(np.asarray(values, dtype="<f4"))
    return {"dtype": "f4", "bdata": base64.b64encode(data.tobytes()).decode("ascii")}


def typed_array(values) -> dict:
    return dict(_once_per_array("f4", values, _encode_f4))


def uniform_step(values) -> tuple[float, float] | None:
    """``(start, step)`` when `values` are evenly spaced to within their 6-digit rounding, so a
    trace can send ``x0``/``dx`` instead of repeating the same grid in every curve."""
    x = np.asarray(values, dtype=float)
    if x.ndim != 1 or len(x) < 3 or not np.isfinite(x).all():
        return None
    step = (x[-1] - x[0]) / (len(x) - 1)
    if step <= 0:
        return None
    expected = x[0] + step * np.arange(len(x))
    if np.max(np.abs(x - expected)) > 1e-5 * np.max(np.abs(x)):
        return None
    return float(x[0]), float(step)


def _x_of(values) -> dict:
    grid = _once_per_array("step", values, uniform_step)
    if grid is None:
        return {"x": typed_array(values)}
    return {"x0": grid[0], "dx": grid[1]}


POINT_ROLES = frozenset({"data", "residual", "pull", "binned"})
MODEL_POINT_ROLES = frozenset({"residual", "pull", "binned"})
MARKER_SIZE, BINNED_SIZE = 5, 11
# residuals of several models share each redshift: past this many points, let the ones below show through
CROWDED_POINTS, CROWDED_OPACITY = 50, 0.55
# several models' residuals at one redshift are drawn side by side, spread over ± this share of
# the z axis span (the hover still names the true z); common practice, no source
SLOT_SPREAD = 0.015


def _line(series: dict) -> dict:
    """Colour, dash and width of a curve from its role: a model's slot, an energy component, or
    a grey dotted guide."""
    role, slot = series.get("role", "model"), series.get("slot", 1)
    if role == "component":
        key = series["component"]
        return {"color": COMPONENT_COLOURS[key], "dash": COMPONENT_DASHES.get(key, "solid"), "width": 2}
    if role == "guide":
        return {"color": GUIDE_COLOUR, "dash": GUIDE_DASHES.get(series.get("component"), "dot"), "width": 1.5}
    return {"color": slot_colour(slot), "dash": slot_dash(slot), "width": 2}


def _legend_group(series: dict, name: str) -> str:
    """Curves of one model (or component, or guide) toggle together; a model's residuals with its pulls."""
    role = series.get("role", "model")
    if role == "component":
        return series["component"]
    if role == "guide":
        return f"guide-{series['component']}"
    if role == "data":
        return f"points-{name}"
    return f"slot{series.get('slot', 1)}"


def _model_points(spec: dict) -> list[dict]:
    strip = spec.get("strip") or {}
    return [p for p in list(spec.get("points", [])) + list(strip.get("series", []))
            if p.get("role") in MODEL_POINT_ROLES]


def slot_offsets(spec: dict) -> dict[int, float]:
    """slot -> the shift of its residuals, pulls and binned means along z (in log10 z on a log
    axis): the models present spread evenly over ± `SLOT_SPREAD` of the points' z span, in slot
    order; nothing when one model is drawn."""
    points = _model_points(spec)
    slots = sorted({p.get("slot", 1) for p in points})
    if len(slots) < 2:
        return {}
    log = spec.get("x_log", False)
    xs = np.concatenate([np.asarray(p.get(k), dtype=float) for p in points for k in ("x", "x_low", "x_high")
                         if p.get(k) is not None] or [np.zeros(0)])
    xs = xs[np.isfinite(xs) & ((xs > 0) if log else True)]
    if xs.size == 0:
        return {}
    xs = np.log10(xs) if log else xs
    span = float(xs.max() - xs.min()) or 1.0
    n = len(slots)
    return {slot: SLOT_SPREAD * span * (2.0 * i / (n - 1) - 1.0) for i, slot in enumerate(slots)}


def _shifted(x, offset: float, log: bool) -> np.ndarray:
    x = np.asarray(x, dtype=float)
    return x * 10.0 ** offset if log else x + offset


def _unit_text(unit: str) -> str:
    return f" {unit}" if unit else ""


# User text (labels) never goes into a hover template itself, where Plotly would read "%{...}" in
# it as a placeholder: the template refers to the trace's own name, substituted as plain text.
_EXTRA = "<extra>%{fullData.name}</extra>"


def _points_trace(points: dict, spec: dict, yaxis: str, unit: str | None = None, crowded: bool = False,
                  offsets: dict | None = None) -> dict:
    """Measurements (role data) as dark circles, or one model's residuals, pulls or binned means
    in its slot's colour and marker shape (shifted a little along z by `offsets`, the hover
    naming the true z), with 1-sigma error bars; a bin's mean carries a bar spanning the bin.
    `text` (labels from the file) is escaped."""
    unit = spec.get("unit", "") if unit is None else unit
    name = escape_for_figure(render(points["name"]))
    role, slot = points.get("role"), points.get("slot", 1)
    colour = DATA_COLOUR if role == "data" else slot_colour(slot)
    opacity = CROWDED_OPACITY if crowded and role != "binned" and len(points["x"]) > CROWDED_POINTS else 1.0
    x = np.asarray(points["x"], dtype=float)
    offset = (offsets or {}).get(slot, 0.0) if role in MODEL_POINT_ROLES else 0.0
    drawn = _shifted(x, offset, spec.get("x_log", False)) if offset else x
    marker = {"color": colour, "size": BINNED_SIZE if role == "binned" else MARKER_SIZE,
              "symbol": "circle" if role == "data" else slot_symbol(slot), "opacity": opacity}
    if role == "binned":
        marker["line"] = {"color": "white", "width": 1}
    trace = {
        "type": "scatter", "mode": "markers", "name": name, "xaxis": "x", "yaxis": yaxis,
        "x": drawn.tolist(), "y": np.asarray(points["y"], dtype=float).tolist(),
        "legendgroup": _legend_group(points, name), "showlegend": role != "pull", "marker": marker,
        "hovertemplate": (f"{spec.get('x_hover', 'x')} = %{{{'customdata' if offset else 'x'}:.5g}}<br>"
                          f"{points.get('y_hover', spec.get('y_hover', 'y'))} = %{{y:.5g}}{_unit_text(unit)}"
                          + ("<br>%{text}" if points.get("text") is not None else "") + _EXTRA),
    }
    if offset:
        trace["customdata"] = x.tolist()
    if points.get("error") is not None:
        trace["error_y"] = {"type": "data", "array": np.asarray(points["error"], dtype=float).tolist(),
                            "visible": True, "thickness": 2 if role == "binned" else 1, "width": 0,
                            "color": colour}
    if role == "binned":
        low, high = _shifted(points["x_low"], offset, spec.get("x_log", False)), _shifted(
            points["x_high"], offset, spec.get("x_log", False))
        trace["error_x"] = {"type": "data", "symmetric": False, "array": (high - drawn).tolist(),
                            "arrayminus": (drawn - low).tolist(), "visible": True, "thickness": 2,
                            "width": 4, "color": colour}
    if points.get("text") is not None:
        trace["text"] = [escape_for_figure(t) for t in points["text"]]
    return trace


def _crowded(series: list[dict]) -> bool:
    """More than one model's residuals (or pulls) on one plot."""
    return len({s.get("slot") for s in series if s.get("role") in ("residual", "pull")}) > 1


def _trace(series: dict, spec: dict, yaxis: str, xaxis: str = "x", unit: str | None = None,
           crowded: bool = False, offsets: dict | None = None) -> dict:
    if series.get("role") in POINT_ROLES:
        return _points_trace(series, spec, yaxis, unit, crowded, offsets)
    name = escape_for_figure(render(series["name"]))
    unit = spec.get("unit", "") if unit is None else unit
    return {
        "type": "scatter",
        "mode": "lines",
        **_x_of(series["x"]),
        "y": typed_array(series["y"]),
        "name": name,
        "legendgroup": _legend_group(series, name),
        "showlegend": yaxis == "y",
        "xaxis": xaxis,
        "yaxis": yaxis,
        "line": _line(series),
        "hovertemplate": (f"{spec.get('x_hover', 'x')} = %{{x:.5g}}<br>"
                          f"{series.get('y_hover', spec.get('y_hover', 'y'))} = %{{y:.6g}}{_unit_text(unit)}"
                          + _EXTRA),
    }


def _axis(title: str, log: bool, **extra) -> dict:
    """A plot's axis. Its tick labels are never hidden for passing the figure's edge
    (``ticklabeloverflow``): the margins fit them (``automargin``), and Plotly's default,
    which measures every label at every drawing to find the ones to hide, cost the Energy
    budget's redraw about 6 % (DEVELOPERS.md, "Keeping the page fast")."""
    return {"title": {"text": escape_for_figure(title), "standoff": 6}, "type": "log" if log else "linear",
            "showline": True, "mirror": True, "ticks": "outside", "exponentformat": "power",
            "zeroline": False, "automargin": True, "ticklabeloverflow": "allow", **extra}


def _annotation_x(x: float, log: bool) -> float:
    # plotly places annotations on a log axis by log10 of the value (shapes take the value itself)
    return float(np.log10(x)) if log and x > 0 else x


def _strip_points(strip: dict) -> list[dict]:
    """The measurements divided by the reference's prediction, drawn on the strip (``y2``) as the
    main plot draws its data; their legend entry is the main plot's."""
    traces = []
    for p in strip.get("points", []):
        trace = _points_trace(p, {"x_hover": "z", "y_hover": strip["y_title"]}, "y2", unit=strip.get("unit", ""))
        trace["showlegend"] = False
        traces.append(trace)
    return traces


def _title(text) -> dict:
    return {"text": escape_for_figure(render(text or "")), "x": 0.01, "xanchor": "left",
            "font": {"size": TITLE_SIZE}}


def _epoch_markers(markers: list[dict], xaxis: str, overlay: str, kinds: dict, grey: bool = False) -> list[dict]:
    """Epoch markers (equality, acceleration, today…) as a dotted vertical line ending in one
    symbol near the top of the plot, never as text on the plot: labels of nearby epochs would
    pile on each other. Each kind of epoch has its own symbol and one legend entry (`kinds`:
    text -> symbol, filled in order of appearance); the
    hover names the epoch, its position and the model. Models' symbols are stacked a little
    apart so four "today"s at nearly the same x stay four.

    Line and symbol are one two-point trace on the invisible `overlay` axis (0 at the bottom of
    the plot, 1 at the top): the symbol first, so the legend shows it, then the foot, an
    ``line-ns`` point drawn in the white outline colour, which does not show. A layout shape per
    line would be drawn by Plotly one by one after the traces: removing the Energy budget's 16
    drew its panel about 40 ms sooner (DEVELOPERS.md, "Keeping the page fast")."""
    shown: set[str] = set()  # kinds already in the legend
    traces = []
    for marker in markers:
        kind = marker["text"]
        symbol = kinds.setdefault(kind, EPOCH_SYMBOLS[len(kinds) % len(EPOCH_SYMBOLS)])
        slot = marker.get("slot")
        colour = "#444444" if grey or slot is None else slot_colour(slot)
        height = 0.95 - 0.06 * ((slot or 1) - 1)
        name = escape_for_figure(kind)
        traces.append({
            "type": "scatter", "mode": "lines+markers", "x": [marker["x"], marker["x"]], "y": [height, 0.0],
            "xaxis": xaxis, "yaxis": overlay, "name": name, "legendgroup": f"epoch-{kind}",
            "showlegend": kind not in shown, "cliponaxis": False,
            "line": {"color": colour, "width": 1, "dash": "dot"},
            "marker": {"symbol": [symbol, "line-ns"], "size": 11, "color": colour, "line": {"color": "white", "width": 1}},
            "meta": escape_for_figure(marker.get("model", "")),
            "hovertemplate": f"{name}<br>{escape_for_figure(marker.get('x_hover', 'x'))} = %{{x:.5g}}"
                             + ("<extra>%{meta}</extra>" if marker.get("model") else "<extra></extra>"),
        })
        shown.add(kind)
    return traces


def _overlay_axis(over: str, domain: list[float]) -> dict:
    """An invisible y axis from 0 to 1 over the plot `over`, where the epoch symbols sit."""
    return {"overlaying": over, "range": [0, 1], "visible": False, "fixedrange": True, "domain": domain}


def _strip_reference(strip: dict) -> dict:
    """The strip's own label: which model every curve on it is compared with."""
    return {"text": escape_for_figure(render(strip["reference"])), "xref": "paper", "yref": "paper",
            "x": 0.0, "y": STRIP_SHARE, "xanchor": "left", "yanchor": "top", "showarrow": False,
            "bgcolor": "rgba(255,255,255,0.85)", "font": {"size": ANNOTATION_SIZE}}


# The margins the axes' labels and the legend below take at 1280 px with the usual tick labels:
# Plotly widens a margin its labels do not fit in (automargin), but each widening is a second
# drawing of the figure; starting from what they usually need, most figures are drawn once.
MARGIN = {"l": 100, "r": 20, "t": 48, "b": 105}


def _base_layout(spec: dict, height: int) -> dict:
    return {
        "title": _title(spec.get("title")),
        "font": FONT,
        "hoverlabel": HOVER,
        "height": height,
        "margin": dict(MARGIN),
        "hovermode": "closest",
        "plot_bgcolor": "white",
        "legend": {"orientation": "h", "x": 0, "y": -0.2, "yanchor": "top", "font": {"size": FONT_SIZE}},
    }


def figure(spec: dict) -> dict:
    """One plot over redshift (or another x), with an optional strip against the reference."""
    strip = spec.get("strip")
    data = [_trace(s, spec, "y") for s in spec["series"]]
    points = spec.get("points", [])
    crowded = _crowded(points)
    offsets = slot_offsets(spec)
    data += [_points_trace(p, spec, "y", crowded=crowded, offsets=offsets) for p in points]
    layout = _base_layout(spec, 460 if strip else 380)
    main_domain = [STRIP_SHARE + 0.08, 1.0] if strip else [0.0, 1.0]
    layout["xaxis"] = _axis(spec.get("x_title", ""), spec.get("x_log", False), anchor="y2" if strip else "y")
    layout["yaxis"] = _axis(spec.get("y_title", ""), spec.get("y_log", False), domain=main_domain)
    annotations = []
    if strip:
        layout["yaxis2"] = _axis(strip["y_title"], False, domain=[0.0, STRIP_SHARE], anchor="x")
        crowded = _crowded(strip["series"])
        for s in strip["series"]:
            trace = _trace(s, spec, "y2", unit=strip.get("unit", ""), crowded=crowded, offsets=offsets)
            trace["showlegend"] = False
            data.append(trace)
        data += _strip_points(strip)
        if strip.get("reference"):
            annotations.append(_strip_reference(strip))
    markers = [{**m, "x_hover": spec.get("x_hover", "x")} for m in spec.get("markers", [])]
    if markers:
        data += _epoch_markers(markers, "x", "y9", {})
        layout["yaxis9"] = _overlay_axis("y", main_domain)
    layout["annotations"] = annotations
    return {"data": data, "layout": layout}


def _guide_label(trace: dict, series: dict, x_log: bool, y_log: bool, xaxis: str, yaxis: str,
                 y_range: list[float] | None = None) -> dict | None:
    """A slope guide's name written at its left end, so the three guides are told apart on the
    plot itself and not only by dash: above the guide, or below it when the guide starts in the
    upper half of `y_range` (the plot's range, log10 on a log axis), so that no label rises out
    of the plot into its title."""
    x, y = np.asarray(series["x"], dtype=float), np.asarray(series["y"], dtype=float)
    ok = np.isfinite(x) & np.isfinite(y) & ((y > 0) if y_log else True)
    if not ok.any():
        return None
    i = int(np.argmax(ok))
    at = _annotation_x(float(y[i]), y_log)
    high = y_range is not None and at > 0.5 * (y_range[0] + y_range[1])
    return {"text": trace["name"], "x": _annotation_x(float(x[i]), x_log), "y": at,
            "xref": xaxis, "yref": yaxis, "xanchor": "left", "yanchor": "top" if high else "bottom",
            "xshift": 4 if high else 0, "showarrow": False, "font": {"size": ANNOTATION_SIZE, "color": GUIDE_COLOUR}}


# Small multiples: one figure per model, so that an edit of one model redraws its own small
# figures only (Plotly redraws a whole figure for any change: one panel of a four-panel figure
# cost as much as the four). Their scales are shared by explicit ranges, rounded so that an edit
# leaves the other models' figures as they were (DEVELOPERS.md, "Keeping the page fast").
MULTIPLES_HEIGHT = 330
# what their labels take (automargin widens a margin that is too small, at the cost of a second
# drawing of each small figure): a log y axis's labels (10⁻³⁰) need more room on the left; the
# top holds the toolbar, then the model's name
MULTIPLES_MARGIN = {"l": 66, "r": 14, "t": 56, "b": 62}
MULTIPLES_LOG_Y_LEFT = 90
_LINEAR_STEP = 0.05  # a linear shared range is rounded out to this (Ω_i: to 0.05)


def _shared_range(panels: list[dict], axis: str, log: bool) -> list[float] | None:
    """The range every small plot of a set shows on `axis` (``"x"`` or ``"y"``): all curves'
    finite values (positive ones on a log axis), rounded out to whole decades on a log axis
    (Plotly's log ranges are in log10) or to `_LINEAR_STEP` on a linear one."""
    values = []
    for panel in panels:
        for series in panel["series"]:
            v = np.asarray(series[axis], dtype=float)
            v = v[np.isfinite(v) & (v > 0)] if log else v[np.isfinite(v)]
            if v.size:
                values += [float(v.min()), float(v.max())]
    if not values:
        return None
    low, high = min(values), max(values)
    if log:
        low, high = np.log10(low), np.log10(high)
        return [float(np.floor(low + 1e-9)), float(np.ceil(high - 1e-9))] if high > low else [low - 1, high + 1]
    low = float(np.floor(low / _LINEAR_STEP + 1e-9) * _LINEAR_STEP)
    high = float(np.ceil(high / _LINEAR_STEP - 1e-9) * _LINEAR_STEP)
    pad = 0.02 * (high - low or 1.0)
    return [round(low - pad, 6), round(high + pad, 6)]


def _key_item(name: str, line: dict | None = None, symbol: str | None = None) -> dict:
    return {"name": name, "line": line, "symbol": symbol}


def small_multiples(spec: dict) -> dict:
    """One small figure per model (used for the energy budget), on shared scales.

    ``spec["panels"]`` = ``[{"title", "slot", "series": [...], "markers"?}]``; the series are
    components (colour = component) and guides. Answers ``{"figures": [figure per panel],
    "key": [{"name", "line" (colour, dash, width) or None, "symbol" or None}]}``: the figures
    have no legend of their own; the key (drawn once under them by `layouts.page`) names each
    component, guide and kind of epoch once. Titles are black: colour on these plots means a
    component, never a model."""
    panels = spec["panels"]
    x_log, y_log = spec.get("x_log", False), spec.get("y_log", False)
    x_range, y_range = _shared_range(panels, "x", x_log), _shared_range(panels, "y", y_log)
    kinds: dict[str, str] = {}  # epoch text -> symbol, the same on every small plot
    for panel in panels:
        for marker in panel.get("markers", []):
            kinds.setdefault(marker["text"], EPOCH_SYMBOLS[len(kinds) % len(EPOCH_SYMBOLS)])
    figures, key, named = [], [], set()
    for i, panel in enumerate(panels):
        data, annotations = [], []
        layout = _base_layout(spec, MULTIPLES_HEIGHT)
        layout.update(title={"text": escape_for_figure(panel["title"]), "x": 0.5, "xanchor": "center",
                             "y": 1.0, "yref": "paper", "yanchor": "bottom", "pad": {"b": 6},
                             "font": {"size": FONT_SIZE}},
                      margin=dict(MULTIPLES_MARGIN, **({"l": MULTIPLES_LOG_Y_LEFT} if y_log else {})),
                      showlegend=False)
        layout["xaxis"] = _axis(spec.get("x_title", ""), x_log, **({"range": x_range} if x_range else {}))
        layout["yaxis"] = _axis(spec.get("y_title", ""), y_log, **({"range": y_range} if y_range else {}))
        for s in panel["series"]:
            trace = _trace(s, spec, "y")
            trace["showlegend"] = False
            trace["meta"] = escape_for_figure(panel["title"])  # the model's label, as typed
            trace["hovertemplate"] = trace["hovertemplate"].replace("<extra>", "<extra>%{meta}: ")
            data.append(trace)
            if trace["legendgroup"] not in named:
                named.add(trace["legendgroup"])
                key.append(_key_item(render(s["name"]), line=trace["line"]))
            if i == 0 and s.get("role") == "guide":
                label = _guide_label(trace, s, x_log, y_log, "x", "y", y_range)
                if label:
                    annotations.append(label)
        if panel.get("markers"):
            markers = [{**m, "x_hover": spec.get("x_hover", "x"), "model": panel["title"]} for m in panel["markers"]]
            data += _epoch_markers(markers, "x", "y2", kinds, grey=True)
            layout["yaxis2"] = _overlay_axis("y", [0.0, 1.0])
        layout["annotations"] = annotations
        figures.append({"data": data, "layout": layout})
    key += [_key_item(text, symbol=symbol) for text, symbol in kinds.items()]
    return {"figures": figures, "key": key}


def chi2_map_figure(spec: dict) -> dict:
    """Δχ² on a grid with the joint confidence contours.

    `spec`: ``{"title", "x_title", "y_title", "x", "y", "delta_chi2" (len(y) x len(x), NaN where no
    valid model), "levels": [(probability, Δχ²)], "best": (x, y) or None, "best_name"}``. The
    shading is capped at the largest level times 3 so the contours stay readable."""
    levels = list(spec.get("levels", []))
    z = np.asarray(spec["delta_chi2"], dtype=float)
    cap = 3.0 * max((lv for _, lv in levels), default=10.0)
    shown = np.where(np.isfinite(z), np.minimum(z, cap), np.nan)
    grid = [[None if not np.isfinite(v) else round(float(v), 4) for v in row] for row in shown]
    x = np.asarray(spec["x"], dtype=float).tolist()
    y = np.asarray(spec["y"], dtype=float).tolist()
    data = [{"type": "heatmap", "x": x, "y": y, "z": grid, "zmin": 0.0, "zmax": cap, "colorscale": "Greys",
             "reversescale": True, "colorbar": {"title": {"text": "Δχ²"}},
             "hovertemplate": "%{x:.5g}, %{y:.5g}: Δχ² = %{z:.4g}<extra></extra>", "name": "Δχ²"}]
    dashes = ("solid", "dash", "dot")
    raw = [[None if not np.isfinite(v) else round(float(v), 4) for v in row] for row in z]
    for i, (probability, level) in enumerate(levels):
        data.append({"type": "contour", "x": x, "y": y, "z": raw, "showscale": False, "hoverinfo": "skip",
                     "contours": {"start": level, "end": level, "size": 1.0, "coloring": "none",
                                  "showlabels": False},
                     "line": {"color": "#0072B2" if i == 0 else "#D55E00", "width": 2, "dash": dashes[i % 3]},
                     "name": f"{100 * probability:.1f} % (Δχ² = {level:.2f})", "showlegend": True})
    if spec.get("best") is not None:
        data.append({"type": "scatter", "mode": "markers", "x": [spec["best"][0]], "y": [spec["best"][1]],
                     "marker": {"symbol": "x", "size": 10, "color": "#000000"},
                     "name": escape_for_figure(spec.get("best_name", "smallest χ² on the grid")),
                     "hovertemplate": "%{x:.5g}, %{y:.5g}<extra>smallest χ² on the grid</extra>"})
    layout = {"title": _title(spec.get("title", "")), "hoverlabel": HOVER,
              "font": FONT, "height": 480, "margin": {"l": 70, "r": 20, "t": 40, "b": 50},
              "plot_bgcolor": "white", "legend": {"orientation": "h", "y": -0.18, "x": 0},
              "xaxis": _axis(spec.get("x_title", ""), False), "yaxis": _axis(spec.get("y_title", ""), False)}
    return {"data": data, "layout": layout}
