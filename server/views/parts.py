"""Spec pieces several panels share: model curves, the strip against the reference, the
redshift axis, one quantity's figure, the panel controls and the notes on failed models."""

from __future__ import annotations

import numpy as np

import model
from layouts.specs import Control, FigureBlock, Series, Strip, TextBlock
from server import compute, fields
from server.views.comparison import Comparison, measurements

__all__ = ["curve_series", "strip", "scale", "distance_factor", "z_axis", "axis_title", "with_unit", "quantity_figure",
           "failures_note", "measurement_note", "view_control"]


def axis_title(key: str) -> str:
    """The axis title of a registered quantity: its symbol and unit (``"D_L [Mpc]"``; a
    dimensionless quantity has no bracket). The long name goes into the figure's title."""
    q = model.QUANTITIES[key]
    return with_unit(q.symbol, q.unit)


def with_unit(symbol: str, unit: str) -> str:
    """``"symbol [unit]"``, or the symbol alone for a dimensionless quantity."""
    return f"{symbol} [{unit}]" if unit else symbol


def curve_series(c: Comparison, pick, x_pick=lambda cv: cv["z"]) -> list[Series]:
    """One model curve per valid model: ``pick(curves)`` against ``x_pick(curves)``."""
    return [{"name": e.name, "role": "model", "slot": e.slot, "x": x_pick(e.curves), "y": pick(e.curves)}
            for e in c.entries]


def strip(c: Comparison, pick, kind: str = "ratio", x_pick=lambda cv: cv["z"], unit: str = "") -> Strip | None:
    """Each other model's ``pick(curves)`` divided by (``kind="ratio"``) or minus
    (``"difference"``) the reference's; None with fewer than two models."""
    if c.reference is None or len(c.entries) < 2:
        return None
    ref = np.asarray(pick(c.reference.curves), dtype=float)
    series = []
    with np.errstate(all="ignore"):
        for e in c.entries:
            if e is c.reference:
                continue
            y = np.asarray(pick(e.curves), dtype=float)
            series.append({"name": e.name, "role": "model", "slot": e.slot, "x": x_pick(e.curves),
                           "y": compute.round_significant(y / ref if kind == "ratio" else y - ref)})
    word = "ratio to" if kind == "ratio" else "minus"
    return {"y_title": "ratio" if kind == "ratio" else with_unit("difference", unit), "series": series,
            "unit": unit, "reference": f"{word} m{c.reference.slot} {c.reference.name}"}


def scale(choice: str, auto: bool) -> bool:
    """Whether an axis is logarithmic: the link's ``xs``/``ys`` choice, or `auto` for ``auto``."""
    return auto if choice == "auto" else choice == "log"


def z_axis(c: Comparison) -> dict:
    return {"x_title": "redshift z", "x_hover": "z",
            "x_log": scale(c.state.view.x_scale, c.state.view.zmax > compute.LINEAR_GRID_ZMAX)}


def distance_factor(c: Comparison, curves: dict) -> float:
    """What turns a distance in Mpc into the link's distance unit (view key ``du``), for the
    model whose `curves` these are (h⁻¹ Mpc takes that model's own h)."""
    factor = fields.DISTANCE_UNITS[c.state.view.distance_unit][1]
    return curves["params"]["h0"] / 100.0 if factor is None else factor


def quantity_figure(c: Comparison, key: str, title: str | None = None, kind: str = "ratio",
                    y_log: bool = False) -> FigureBlock:
    """One registered quantity (`model.QUANTITIES`) against redshift, with its strip. A
    distance in Mpc is drawn in the link's distance unit (``du``); the value axis follows ``ys``."""
    q = model.QUANTITIES[key]
    unit = q.unit
    if unit == "Mpc":
        unit = fields.DISTANCE_UNITS[c.state.view.distance_unit][0]

        def pick(cv):
            return compute.round_significant(np.asarray(cv["at"][key], dtype=float) * distance_factor(c, cv))
    else:
        def pick(cv):
            return cv["at"][key]
    spec = {"title": title or q.description, **z_axis(c), "y_title": with_unit(q.symbol, unit), "y_hover": q.symbol,
            "unit": unit, "y_log": scale(c.state.view.y_scale, y_log), "series": curve_series(c, pick),
            "strip": strip(c, pick, kind=kind, unit=unit if kind == "difference" else "")}
    return {"kind": "figure", "spec": spec, "id": f"fd-fig-{key}"}


def failures_note(c: Comparison) -> list[TextBlock]:
    return [{"kind": "text", "text": f"not shown: {p.message}", "tone": "error"} for p in c.failures.values()]


def measurement_note(c: Comparison) -> list[TextBlock]:
    """Why the link's measurements are not drawn, when they cannot be loaded."""
    problem = measurements(c)[1]
    return [{"kind": "text", "text": f"Measurements: {problem}", "tone": "error"}] if problem else []


def view_control(c: Comparison, key: str, label: str, range_text: str) -> Control:
    """A text control for view key `key`: the link's value (or what was typed, when refused)
    and the problem naming the key."""
    error = next((p.message for p in c.state.view.problems() if p.key == key), None)
    return {"key": key, "kind": "text", "label": label, "value": c.state.view.value_text(key),
            "range": range_text, "error": error}
