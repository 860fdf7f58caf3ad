"""The open panel's spec (through the tab registry, `server.tabs`) and the page's options."""

from __future__ import annotations

from layouts.specs import Control, PageOptions, PanelSpec
from server import codec, fields, tabs
from server.views.comparison import Comparison
from server.views.data_tools import data_tool_options
from server.views.parts import failures_note

__all__ = ["panel", "page_options", "view_controls", "VIEW_BAR"]


def panel(c: Comparison, tab: str | None = None) -> PanelSpec:
    """The spec of panel `tab` (the link's open panel by default)."""
    if not c.entries:
        return {"blocks": [{"kind": "text", "text": "No model can be drawn: fix the errors on the cards."}]
                + failures_note(c)}
    return tabs.tab(tab or c.state.view.tab).builder(c)


def page_options() -> PageOptions:
    return {"tabs": list(tabs.TAB_TITLES.items()), "zmax_range": f"0.01 ≤ z_max ≤ {codec.Z_MAX:g}",
            "max_models": codec.MAX_SLOTS, "view_controls": view_controls(), "data_tools": data_tool_options()}


# the view bar's settings, which every panel follows: (key, label, {link value: text})
_SCALE_TEXT = {"auto": "auto", "lin": "linear", "log": "log"}
_SCALES = {choice: _SCALE_TEXT[choice] for choice in fields.AXIS_SCALES}
VIEW_BAR = (
    ("du", "distances in", {k: unit for k, (unit, _) in fields.DISTANCE_UNITS.items()}),
    ("xs", "z axis", _SCALES),
    ("ys", "y axis", _SCALES),
)


def view_controls(state: codec.LinkState | None = None) -> list[Control]:
    """The view bar's dropdowns, showing `state`'s values (the defaults without one)."""
    view = state.view if state is not None else codec.ViewState()
    return [{"key": key, "kind": "dropdown", "label": label, "value": view.value_text(key),
             "options": [{"label": text, "value": value} for value, text in choices.items()]}
            for key, label, choices in VIEW_BAR]
