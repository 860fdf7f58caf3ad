"""The growth panel: the linear growth factor D(z)/D(0), the growth rate f, fσ₈ (with the link's
fσ₈ measurements) and the growth index γ(z), each against the reference on a strip."""

from __future__ import annotations

from layouts.specs import FigureBlock, PanelSpec
from server.views.comparison import Comparison, data_points, strip_points
from server.views.data import F_SIGMA8_CAVEAT
from server.views.parts import curve_series, failures_note, measurement_note, quantity_figure, strip, z_axis

__all__ = ["build", "GROWTH_NOTE"]

GROWTH_NOTE = ("Linear growth of cold dark matter plus baryons on large scales: massive neutrinos add to the "
               "expansion rate but are taken not to cluster, and growth starts in the growing mode of matter "
               "and radiation. fσ₈ and σ₈(z) scale with each model's σ₈ (the card's σ₈ field).")


def _growth_index(c: Comparison) -> FigureBlock:
    return {"kind": "figure", "id": "fd-fig-growth-index", "spec": {
        "title": "Growth index γ(z) = ln f / ln Ω_m(z), Ω_m(z) of the clustering matter",
        **z_axis(c), "y_title": "growth index γ", "y_hover": "γ", "unit": "",
        "series": curve_series(c, lambda cv: cv["growth_index"]),
        "strip": strip(c, lambda cv: cv["growth_index"], kind="difference")}}


def build(c: Comparison) -> PanelSpec:
    f_sigma8 = quantity_figure(c, "f_sigma8")
    f_sigma8["spec"]["points"] = data_points(c, "f_sigma8")
    if f_sigma8["spec"]["strip"]:
        f_sigma8["spec"]["strip"]["points"] = strip_points(c, "f_sigma8")
    blocks = [{"kind": "text", "text": GROWTH_NOTE}, quantity_figure(c, "growth_factor"),
              quantity_figure(c, "growth_rate"), f_sigma8, _growth_index(c)]
    if f_sigma8["spec"]["points"]:
        blocks.insert(blocks.index(f_sigma8), {"kind": "text", "text": F_SIGMA8_CAVEAT, "tone": "note"})
    return {"blocks": blocks + measurement_note(c) + failures_note(c)}
