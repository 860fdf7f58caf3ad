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

from layouts.palette import COMPONENT_COLOURS, DATA_COLOUR, GUIDE_COLOUR, slot_colour, slot_dash
from layouts.text import escape_for_figure, render

__all__ = ["figure", "small_multiples", "typed_array", "uniform_step", "chi2_map_figure"]

FONT = {"family": "system-ui, -apple-system, 'Segoe UI', sans-serif", "size": 12}
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


POINT_ROLES = frozenset({"data", "residual", "pull"})
MARKER_SIZE = 5
# residuals of several models share each redshift: past this many points, let the ones below show through
CROWDED_POINTS, CROWDED_OPACITY = 50, 0.55


def _line(series: dict) -> dict:
    """Colour, dash and width of a curve from its role: a model's slot, an energy component, or
    a grey dotted guide."""
    role, slot = series.get("role", "model"), series.get("slot", 1)
    if role == "component":
        key = series["component"]
        return {"color": COMPONENT_COLOURS[key], "dash": "dash" if key == "critical" else "solid", "width": 2}
    if role == "guide":
        return {"color": GUIDE_COLOUR, "dash": "dot", "width": 1}
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


def _unit_text(unit: str) -> str:
    return f" {unit}" if unit else ""


# User text (labels) never goes into a hover template itself, where Plotly would read "%{...}" in
# it as a placeholder: the template refers to the trace's own name, substituted as plain text.
_EXTRA = "<extra>%{fullData.name}</extra>"


def _points_trace(points: dict, spec: dict, yaxis: str, unit: str | None = None, crowded: bool = False) -> dict:
    """Measurements (role data), or one model's residuals or pulls, as markers with 1-sigma error
    bars; `text` (labels from the file) is escaped."""
    unit = spec.get("unit", "") if unit is None else unit
    name = escape_for_figure(render(points["name"]))
    colour = DATA_COLOUR if points.get("role") == "data" else slot_colour(points.get("slot", 1))
    opacity = CROWDED_OPACITY if crowded and len(points["x"]) > CROWDED_POINTS else 1.0
    trace = {
        "type": "scatter", "mode": "markers", "name": name, "xaxis": "x", "yaxis": yaxis,
        "x": np.asarray(points["x"], dtype=float).tolist(), "y": np.asarray(points["y"], dtype=float).tolist(),
        "legendgroup": _legend_group(points, name), "showlegend": points.get("role") != "pull",
        "marker": {"color": colour, "size": MARKER_SIZE, "symbol": "circle", "opacity": opacity},
        "hovertemplate": (f"{spec.get('x_hover', 'x')} = %{{x:.5g}}<br>"
                          f"{points.get('y_hover', spec.get('y_hover', 'y'))} = %{{y:.5g}}{_unit_text(unit)}"
                          + ("<br>%{text}" if points.get("text") is not None else "") + _EXTRA),
    }
    if points.get("error") is not None:
        trace["error_y"] = {"type": "data", "array": np.asarray(points["error"], dtype=float).tolist(),
                            "visible": True, "thickness": 1, "width": 0, "color": colour}
    if points.get("text") is not None:
        trace["text"] = [escape_for_figure(t) for t in points["text"]]
    return trace


def _crowded(series: list[dict]) -> bool:
    """More than one model's residuals (or pulls) on one plot."""
    return len({s.get("slot") for s in series if s.get("role") in ("residual", "pull")}) > 1


def _trace(series: dict, spec: dict, yaxis: str, xaxis: str = "x", unit: str | None = None,
           crowded: bool = False) -> dict:
    if series.get("role") in POINT_ROLES:
        return _points_trace(series, spec, yaxis, unit, crowded)
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
    return {"title": {"text": escape_for_figure(title)}, "type": "log" if log else "linear",
            "showline": True, "mirror": True, "ticks": "outside", "exponentformat": "power",
            "zeroline": False, **extra}


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


def figure(spec: dict) -> dict:
    """One plot over redshift (or another x), with an optional strip against the reference."""
    strip = spec.get("strip")
    data = [_trace(s, spec, "y") for s in spec["series"]]
    points = spec.get("points", [])
    crowded = _crowded(points)
    data += [_points_trace(p, spec, "y", crowded=crowded) for p in points]
    layout = {
        "title": {"text": escape_for_figure(render(spec.get("title", ""))), "x": 0.01, "font": {"size": 14}},
        "font": FONT,
        "height": 420 if strip else 340,
        "margin": {"l": 70, "r": 20, "t": 40, "b": 50},
        "hovermode": "closest",
        "legend": {"orientation": "h", "y": -0.28 if not strip else -0.2, "x": 0},
        "plot_bgcolor": "white",
        "xaxis": _axis(spec.get("x_title", ""), spec.get("x_log", False), anchor="y2" if strip else "y"),
        "yaxis": _axis(spec.get("y_title", ""), spec.get("y_log", False),
                       domain=[STRIP_SHARE + 0.06, 1.0] if strip else [0.0, 1.0]),
    }
    if strip:
        layout["yaxis2"] = _axis(strip["y_title"], False, domain=[0.0, STRIP_SHARE], anchor="x")
        layout["xaxis"]["title"] = {"text": escape_for_figure(spec.get("x_title", ""))}
        crowded = _crowded(strip["series"])
        for s in strip["series"]:
            trace = _trace(s, spec, "y2", unit=strip.get("unit", ""), crowded=crowded)
            trace["showlegend"] = False
            data.append(trace)
        data += _strip_points(strip)
    shapes, annotations = [], []
    for marker in spec.get("markers", []):
        shapes.append({"type": "line", "xref": "x", "yref": "paper", "x0": marker["x"], "x1": marker["x"],
                       "y0": 0, "y1": 1, "line": {"color": slot_colour(marker.get("slot", 1)), "width": 1,
                                                   "dash": "dot"}})
        annotations.append({"x": _annotation_x(marker["x"], spec.get("x_log")), "xref": "x", "y": 1.0, "yref": "paper", "showarrow": False,
                            "text": escape_for_figure(marker["text"]), "textangle": -90, "xanchor": "right",
                            "yanchor": "top", "font": {"size": 10, "color": slot_colour(marker.get("slot", 1))}})
    layout["shapes"] = shapes
    layout["annotations"] = annotations
    return {"data": data, "layout": layout}


def small_multiples(spec: dict) -> dict:
    """One small plot per model on shared axes (used for the energy budget).

    ``spec["panels"]`` = ``[{"title", "slot", "series": [...], "markers"?}]``; the series are
    components (colour = component) and guides; the legend lists each once (from the first plot).
    """
    panels = spec["panels"]
    n = max(len(panels), 1)
    gap = 0.04
    width = (1.0 - gap * (n - 1)) / n
    data, annotations = [], []
    layout = {
        "font": FONT,
        "height": 360,
        "margin": {"l": 70, "r": 20, "t": 50, "b": 80},
        "plot_bgcolor": "white",
        "hovermode": "closest",
        "legend": {"orientation": "h", "y": -0.32, "x": 0},
        "title": {"text": escape_for_figure(spec.get("title", "")), "x": 0.01, "font": {"size": 14}},
    }
    for i, panel in enumerate(panels):
        suffix = "" if i == 0 else str(i + 1)
        x0 = i * (width + gap)
        layout[f"xaxis{suffix}"] = _axis(spec.get("x_title", ""), spec.get("x_log", False),
                                         domain=[x0, x0 + width], anchor=f"y{suffix}",
                                         **({"matches": "x"} if i else {}))
        layout[f"yaxis{suffix}"] = _axis(spec.get("y_title", "") if i == 0 else "", spec.get("y_log", False),
                                         anchor=f"x{suffix}", **({"matches": "y", "showticklabels": False}
                                                                  if i else {}))
        annotations.append({"text": escape_for_figure(panel["title"]), "x": x0 + width / 2, "xref": "paper",
                            "y": 1.0, "yref": "paper", "yanchor": "bottom", "showarrow": False,
                            "font": {"size": 12, "color": slot_colour(panel.get("slot", 1))}})
        for s in panel["series"]:
            trace = _trace(s, spec, f"y{suffix}", xaxis=f"x{suffix}")
            trace["showlegend"] = i == 0
            trace["meta"] = escape_for_figure(panel["title"])  # the model's label, as typed
            trace["hovertemplate"] = trace["hovertemplate"].replace("<extra>", "<extra>%{meta}: ")
            data.append(trace)
        for marker in panel.get("markers", []):
            annotations.append({"x": _annotation_x(marker["x"], spec.get("x_log")), "y": 1.0,
                                "xref": f"x{suffix}", "yref": "paper", "textangle": -90, "yanchor": "top",
                                "text": escape_for_figure(marker["text"]), "showarrow": False,
                                "xanchor": "right", "font": {"size": 9}})
            layout.setdefault("shapes", []).append({
                "type": "line", "xref": f"x{suffix}", "yref": "paper", "x0": marker["x"], "x1": marker["x"],
                "y0": 0, "y1": 1, "line": {"color": "#888888", "width": 1, "dash": "dot"}})
    layout["annotations"] = annotations
    return {"data": data, "layout": layout}


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
             "reversescale": True, "colorbar": {"title": {"text": "Δχ² [dimensionless]"}},
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
    layout = {"title": {"text": escape_for_figure(spec.get("title", "")), "x": 0.01, "font": {"size": 14}},
              "font": FONT, "height": 480, "margin": {"l": 70, "r": 20, "t": 40, "b": 50},
              "plot_bgcolor": "white", "legend": {"orientation": "h", "y": -0.18, "x": 0},
              "xaxis": _axis(spec.get("x_title", ""), False), "yaxis": _axis(spec.get("y_title", ""), False)}
    return {"data": data, "layout": layout}
