"""Plotly figure dicts from plain figure specs (built by server.panels).

A spec::

    {"title": str, "x_title": str, "y_title": str, "x_log": bool, "y_log": bool,
     "x_hover": "z", "y_hover": "D_L", "unit": "Mpc",
     "series": [{"name", "slot", "x", "y", "colour"?, "dash"?, "group"?}],
     "points": [{"name", "slot"?, "x", "y", "error"?, "text"?, "colour"?, "symbol"?}],  (measurements)
     "strip": {"y_title", "series": [...], "unit"} or None,
     "markers": [{"x", "text", "slot"}]}

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

from layouts.palette import slot_colour, slot_dash
from layouts.text import escape_for_figure

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


def _points_trace(points: dict, spec: dict, yaxis: str, unit: str | None = None) -> dict:
    """Measurements as markers with 1-sigma error bars; `text` (labels from the file) is escaped."""
    unit = spec.get("unit", "") if unit is None else unit
    unit_text = f" {unit}" if unit and unit != "1" else ""
    name = escape_for_figure(points["name"])
    colour = points.get("colour") or (slot_colour(points["slot"]) if "slot" in points else "#333333")
    trace = {
        "type": "scatter", "mode": "markers", "name": name, "xaxis": "x", "yaxis": yaxis,
        "x": np.asarray(points["x"], dtype=float).tolist(), "y": np.asarray(points["y"], dtype=float).tolist(),
        "legendgroup": points.get("group", f"points-{name}"), "showlegend": points.get("showlegend", True),
        "marker": {"color": colour, "size": points.get("size", 5), "symbol": points.get("symbol", "circle"),
                   "opacity": points.get("opacity", 1.0)},
        "hovertemplate": (f"{spec.get('x_hover', 'x')} = %{{x:.5g}}<br>"
                          f"{points.get('y_hover', spec.get('y_hover', 'y'))} = %{{y:.5g}}{unit_text}"
                          + ("<br>%{text}" if points.get("text") is not None else "") + f"<extra>{name}</extra>"),
    }
    if points.get("error") is not None:
        trace["error_y"] = {"type": "data", "array": np.asarray(points["error"], dtype=float).tolist(),
                            "visible": True, "thickness": 1, "width": 0, "color": colour}
    if points.get("text") is not None:
        trace["text"] = [escape_for_figure(t) for t in points["text"]]
    return trace


def _trace(series: dict, spec: dict, yaxis: str, xaxis: str = "x", unit: str | None = None) -> dict:
    if series.get("mode") == "markers":
        return _points_trace(series, spec, yaxis, unit)
    slot = series.get("slot", 1)
    name = escape_for_figure(series["name"])
    unit = spec.get("unit", "") if unit is None else unit
    unit_text = f" {unit}" if unit and unit != "1" else ""
    return {
        "type": "scatter",
        "mode": "lines",
        **_x_of(series["x"]),
        "y": typed_array(series["y"]),
        "name": name,
        "legendgroup": series.get("group", f"slot{slot}"),
        "showlegend": series.get("showlegend", yaxis == "y"),
        "xaxis": xaxis,
        "yaxis": yaxis,
        "line": {"color": series.get("colour") or slot_colour(slot), "dash": series.get("dash") or slot_dash(slot),
                 "width": series.get("width", 2)},
        "hovertemplate": (f"{spec.get('x_hover', 'x')} = %{{x:.5g}}<br>"
                          f"{series.get('y_hover', spec.get('y_hover', 'y'))} = %{{y:.6g}}{unit_text}"
                          f"<extra>{name}</extra>"),
    }


def _axis(title: str, log: bool, **extra) -> dict:
    return {"title": {"text": escape_for_figure(title)}, "type": "log" if log else "linear",
            "showline": True, "mirror": True, "ticks": "outside", "exponentformat": "power",
            "zeroline": False, **extra}


def _annotation_x(x: float, log: bool) -> float:
    # plotly places annotations on a log axis by log10 of the value (shapes take the value itself)
    return float(np.log10(x)) if log and x > 0 else x


def figure(spec: dict) -> dict:
    """One plot over redshift (or another x), with an optional strip against the reference."""
    strip = spec.get("strip")
    data = [_trace(s, spec, "y") for s in spec["series"]]
    data += [_points_trace(p, spec, "y") for p in spec.get("points", [])]
    layout = {
        "title": {"text": escape_for_figure(spec.get("title", "")), "x": 0.01, "font": {"size": 14}},
        "font": FONT,
        "height": spec.get("height", 420 if strip else 340),
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
        for s in strip["series"]:
            trace = _trace(s, spec, "y2", unit=strip.get("unit", ""))
            trace["showlegend"] = False
            data.append(trace)
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

    ``spec["panels"]`` = ``[{"title", "slot", "series": [...]}]``; each series carries its own
    colour and dash (colour = component) and `group` so that the legend lists each component once.
    """
    panels = spec["panels"]
    n = max(len(panels), 1)
    gap = 0.04
    width = (1.0 - gap * (n - 1)) / n
    data, annotations = [], []
    layout = {
        "font": FONT,
        "height": spec.get("height", 360),
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
                                                                  if i else {}),
                                         **({"range": spec["y_range"]} if "y_range" in spec else {}))
        annotations.append({"text": escape_for_figure(panel["title"]), "x": x0 + width / 2, "xref": "paper",
                            "y": 1.0, "yref": "paper", "yanchor": "bottom", "showarrow": False,
                            "font": {"size": 12, "color": slot_colour(panel.get("slot", 1))}})
        for s in panel["series"]:
            trace = _trace({**s, "name": s["name"]}, spec, f"y{suffix}", xaxis=f"x{suffix}")
            trace["showlegend"] = i == 0 and s.get("showlegend", True)
            trace["hovertemplate"] = trace["hovertemplate"].replace(
                "<extra>", "<extra>" + escape_for_figure(panel["title"]) + ": ")
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
