"""The time panel: the age and the lookback time against redshift, and a(t) into the future."""

from __future__ import annotations

from layouts.specs import PanelSpec
from server.views.comparison import Comparison
from server.views.parts import curve_series, failures_note, quantity_figure

__all__ = ["build"]


def build(c: Comparison) -> PanelSpec:
    history = {"kind": "figure", "id": "fd-fig-history", "spec": {
        "title": "Scale factor against cosmic time, into the future", "x_title": "cosmic time t [Gyr]",
        "x_hover": "t [Gyr]", "y_title": "a", "y_hover": "a", "unit": "",
        "x_log": False, "series": curve_series(c, lambda cv: cv["history"]["a"], x_pick=lambda cv: cv["history"]["t"]),
        "strip": None,
        "markers": [{"x": e.curves["epochs"]["age_today"], "text": "today", "slot": e.slot, "model": e.name}
                    for e in c.entries if e.curves["epochs"].get("age_today") is not None]}}
    return {"blocks": [quantity_figure(c, "age"), quantity_figure(c, "lookback_time"), history] + failures_note(c)}
