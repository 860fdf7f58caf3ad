"""The volume panel: a survey box's comoving volume per model, V_C(z) and dV_C/dz/dΩ."""

from __future__ import annotations

from layouts.specs import PanelSpec
from server import codec, compute
from server.cache import fetch_many
from server.views.comparison import Comparison, key_of, num
from server.views.parts import failures_note, quantity_figure, view_control

__all__ = ["build", "survey_rows"]


def survey_rows(c: Comparison) -> list[list]:
    """Per model: its name, the survey box's comoving volume [Gpc³] and its ratio to the reference's."""
    view = c.state.view
    volumes = dict(zip((e.slot for e in c.entries), fetch_many(compute.survey_volume, [
        (key_of(c, e.slot), view.sky_area, *view.survey) for e in c.entries])))
    ref = volumes.get(c.reference.slot) if c.reference else None
    return [[e.name, num(volumes[e.slot], 6, "Gpc³"), num(volumes[e.slot] / ref if ref else None, 5)]
            for e in c.entries]


def build(c: Comparison) -> PanelSpec:
    view = c.state.view
    controls = [
        view_control(c, "sky", "survey sky area [deg²]", f"0 < area ≤ {codec.FULL_SKY_DEG2:.2f} deg²"),
        view_control(c, "zs", "survey redshift range z_low, z_high", "0 ≤ z_low < z_high"),
    ]
    ref_name = c.reference.name if c.reference else "reference"
    blocks = [
        {"kind": "table", "title": ["Survey box: ", num(view.sky_area, 10, "deg²"), ", ", num(view.survey[0]),
                                    " < z < ", num(view.survey[1])],
         "header": ["model", "comoving volume [Gpc³]", f"ratio to {ref_name}"],
         "rows": survey_rows(c)},
        quantity_figure(c, "comoving_volume", y_log=view.zmax > compute.LINEAR_GRID_ZMAX),
        quantity_figure(c, "comoving_volume_element"),
    ]
    return {"controls": controls, "blocks": blocks + failures_note(c)}
