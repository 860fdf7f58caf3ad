"""The page shell and the panel bodies, from plain option lists."""

from __future__ import annotations

from dash import dcc, html

from layouts.data_panel import data_tools
from layouts.figures import figure, small_multiples
from layouts.ids import ids
from layouts.specs import PageOptions, PanelSpec
from layouts.tables import table
from layouts.text import render

__all__ = ["page", "panel_body", "notice"]

TONE_CLASSES = {"note": "fd-note", "caution": "fd-caution", "error": "fd-error"}


def page(options: PageOptions) -> html.Div:
    """`options`: ``{"tabs": [(value, label)], "zmax_range": str, "data_tools": {...}}`` (see
    `layouts.data_panel.data_tools`); cards and panels are filled by callbacks from the link."""
    return html.Div(className="fd-page", children=[
        dcc.Location(id=ids.url, refresh=False),
        html.Header(className="fd-header", children=[
            html.Div([html.H1("Friedmann Desk"),
                      html.Span("compare up to four expansion histories", className="fd-tagline")]),
            html.Div(className="fd-header-actions", children=[
                html.Span("copy link", className="fd-copy-label"),
                dcc.Clipboard(id=ids.copy, content="", title="copy the canonical link to this view",
                              className="fd-copy"),
                html.Button("parameter sets (JSON)", id=ids.download_params, n_clicks=0, className="fd-button"),
                dcc.Download(id=ids.download_params_file),
            ]),
        ]),
        html.Div(id=ids.notice_box, className="fd-notice", style={"display": "none"}, children=[
            html.Div(id=ids.notice),
            html.Button("dismiss", id=ids.notice_close, n_clicks=0, className="fd-button"),
        ]),
        html.Div(className="fd-cards-row", children=[
            html.Div(id=ids.cards, className="fd-cards"),
            html.Button("+ add model", id=ids.add, n_clicks=0, className="fd-button fd-add"),
        ]),
        html.Div(className="fd-viewbar", children=[
            html.Label("reference model", htmlFor=ids.reference),
            dcc.RadioItems(id=ids.reference, options=[], value=None, inline=True, className="fd-ref"),
            html.Label("largest redshift z_max", htmlFor="fd-zmax"),
            dcc.Input(id=ids.zmax, type="text", value="3", debounce=True, className="fd-input fd-short"),
            html.Small(options["zmax_range"], className="fd-range"),
        ]),
        dcc.Tabs(id=ids.tab, value=options["tabs"][0][0], className="fd-tabs",
                 children=[dcc.Tab(label=label, value=value) for value, label in options["tabs"]]),
        data_tools(options["data_tools"]),
        html.Div(className="fd-panel-actions", children=[
            html.Button("this panel's numbers (CSV)", id=ids.download_panel, n_clicks=0, className="fd-button"),
            dcc.Download(id=ids.download_panel_file),
        ]),
        dcc.Loading(html.Div(id=ids.panel, className="fd-panel"), type="dot", delay_show=400),
    ])


def _control(control: dict):
    key = control["key"]
    label = html.Label(control["label"], className="fd-control-label")
    if control["kind"] == "dropdown":
        widget = dcc.Dropdown(id=ids.view(key), options=control["options"], value=control["value"],
                              clearable=False, searchable=False, className="fd-control-dropdown")
    else:
        widget = dcc.Input(id=ids.view(key), type="text", value=control["value"], debounce=True,
                           className="fd-input")
    parts = [label, widget]
    if control.get("range"):
        parts.append(html.Small(control["range"], className="fd-range"))
    if control.get("error"):
        parts.append(html.Div(control["error"], className="fd-error", role="alert"))
    return html.Div(parts, className="fd-control")


def panel_body(body: PanelSpec) -> list:
    """`body`: a `layouts.specs.PanelSpec` (``{"intro", "controls": [...], "blocks": [{"kind":
    "figure"|"multiples"|"table"|"text", ...}]}``, blocks in display order)."""
    out = []
    if body.get("intro"):
        out.append(html.P(body["intro"], className="fd-intro"))
    if body.get("controls"):
        out.append(html.Div([_control(c) for c in body["controls"]], className="fd-controls"))
    for block in body["blocks"]:
        kind = block["kind"]
        if kind == "figure":
            out.append(dcc.Graph(figure=figure(block["spec"]), id=block.get("id"), className="fd-graph",
                                 config={"displaylogo": False, "toImageButtonOptions": {"format": "png"}}))
        elif kind == "multiples":
            out.append(dcc.Graph(figure=small_multiples(block["spec"]), id=block.get("id"), className="fd-graph",
                                 config={"displaylogo": False}))
        elif kind == "table":
            if block.get("title"):
                out.append(html.H3(render(block["title"])))
            out.append(table(block["header"], block.get("rows"), block.get("sections"), block.get("column_slots")))
        elif kind == "text":
            out.append(html.P(render(block["text"]), className=TONE_CLASSES[block.get("tone", "note")]))
    return out


def notice(unknown: list[str], problems: list[str]) -> list:
    out = []
    if unknown:
        out.append(html.P("These link keys are not part of the scheme and were ignored: " + ", ".join(unknown)))
    if problems:
        out.append(html.Ul([html.Li(p) for p in problems]))
    return out
