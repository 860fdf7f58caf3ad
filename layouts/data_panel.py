"""The data panel's tools (upload, paste, demo, quick fit, Δχ² map) and their reports, from plain data.

The tools stay in the page (shown on the data tab only), so a fit's report survives the link
changes it causes; the χ² table and residual plots are panel blocks built by `server.views.data`.
Everything a user typed or uploaded is shown as text (components), never as markup.
"""

from __future__ import annotations

from dash import dcc, html

from layouts.figures import chi2_map_figure
from layouts.ids import dom_id, ids
from layouts.specs import DataToolOptions, FitReport
from layouts.tables import table
from layouts.text import render

__all__ = ["data_tools", "data_tools_body", "data_tools_sections", "TOOLS_CLASSES", "SECTIONS_CLASSES", "fit_report",
           "map_view", "messages"]


def _bound_inputs(p: dict) -> html.Div:
    unit = f" [{p['unit']}]" if p.get("unit") else ""
    return html.Div(className="fd-fit-param", children=[
        html.Label([f"{p['label']}{unit}", html.Span(" from", className="fd-sr-only")], className="fd-fit-name",
                   htmlFor=dom_id(ids.fit_bound(p["name"], "low"))),
        dcc.Input(id=ids.fit_bound(p["name"], "low"), type="text", value=p["low"], debounce=False,
                  className="fd-input fd-short", placeholder="low"),
        html.Label(["to", html.Span(f" (upper bound of {p['label']})", className="fd-sr-only")],
                   htmlFor=dom_id(ids.fit_bound(p["name"], "high"))),
        dcc.Input(id=ids.fit_bound(p["name"], "high"), type="text", value=p["high"], debounce=False,
                  className="fd-input fd-short", placeholder="high"),
        html.Small(p["range"], className="fd-range"),
    ])


def _map_note(points: int, levels) -> str:
    regions = " and ".join(f"{probability:.0%}".replace("%", " %") for probability, _ in levels)
    values = " and ".join(f"{level:.2f}" for _, level in levels)
    return (f"On a {points} × {points} grid spanning the two parameters' bounds above; every other parameter "
            f"keeps the chosen model's value (not minimised over). Contours: {regions} joint regions of two "
            f"parameters, Δχ² = {values}.")


# className of the tools' box: empty, or holding the tools (built the first time the Data tab opens)
TOOLS_CLASSES = {"empty": "fd-tools", "built": "fd-tools fd-built"}
# className of the block's sections: empty until the block is first shown open
SECTIONS_CLASSES = {"empty": "fd-data-tools", "built": "fd-data-tools fd-built"}


def data_tools() -> html.Div:
    """The box of the data tools, empty until the Data tab first opens: `data_tools_body` then
    fills it, and it is kept from then on (shown on the Data tab only), so the file inputs and a
    fit's report survive panel redraws and tab changes. Until then the page carries none of
    its hundred-odd components, each of which costs the renderer time on every update."""
    return html.Div(id=ids.data_tools, className=TOOLS_CLASSES["empty"], style={"display": "none"}, children=[])


def data_tools_body(open_: bool = False, sections: list | None = None) -> list:
    """The frame of the data tools: the message of the last load, and a collapsible block after
    the panel's results, open (`open_`) while the link has no data; its summary and its
    `sections` (`data_tools_sections`: uploads, the fit's and the map's controls; None: not
    built yet). The sections are built the first time the block is shown open: with the frame
    (`render`, a link with no data) or when the reader opens it (`tools_view`, on `n_clicks`
    of the summary). A link with data opens on its results: building the tools it does not show
    cost the Data tab about 0.2 s (1.07 against 0.85 s, back to back)."""
    return [
        html.Div(id=ids.data_message, className="fd-data-message", role="status"),
        html.Details(id=ids.data_tools_details, className="fd-data-details", open=open_, children=[
            html.Summary("data tools: load, fit, map, catalogue", id=ids.data_tools_summary, n_clicks=0,
                         className="fd-data-summary"),
            html.Div(id=ids.data_tools_sections, className=SECTIONS_CLASSES["empty" if sections is None else "built"],
                     children=sections or [])]),
    ]


def data_tools_sections(options: DataToolOptions) -> list:
    """The data tools' sections; `options`: a `layouts.specs.DataToolOptions` (texts, the fit
    parameters with their default bounds, the map's grid size and contour levels)."""
    params = options["parameters"]
    choices = [{"label": f"{p['label']}" + (f" [{p['unit']}]" if p.get("unit") else ""), "value": p["name"]}
               for p in params]
    return _sections(options, params, choices)


def _sections(options: DataToolOptions, params: list, choices: list) -> list:
    return [
        html.Section(className="fd-data-box", children=[
            html.H3("Measurements"),
            html.P([options["format"] + " ", html.A(options["format_link"], href=options["format_url"],
                                                    id=ids.format_link, target="_blank", rel="noopener")],
                   className="fd-note"),
            html.Div(className="fd-data-row", children=[
                dcc.Upload(id=ids.data_upload, className="fd-upload", multiple=False,
                           children=html.Div("measurement file (CSV): drop it here or click to choose")),
                dcc.Upload(id=ids.covariance_upload, className="fd-upload fd-upload-small", multiple=False,
                           children=html.Div("optional covariance file: drop or click (choose it first)")),
                html.Span(id=ids.covariance_name, className="fd-note"),
            ]),
            html.Label("or paste a table here", htmlFor=ids.data_text, className="fd-control-label"),
            dcc.Textarea(id=ids.data_text, className="fd-data-text", placeholder=options["placeholder"],
                         spellCheck=False),
            html.Div(className="fd-data-row", children=[
                html.Button("use the pasted table", id=ids.data_paste, n_clicks=0, className="fd-button"),
                html.Button(options["demo_label"], id=ids.data_demo, n_clicks=0, className="fd-button"),
            ]),
            html.Small(options["limits"], className="fd-range"),
        ]),
        html.Section(className="fd-data-box", children=[
            html.H3("Quick fit"),
            html.Div(className="fd-data-row", children=[
                html.Label("start from model", htmlFor=ids.fit_slot),
                dcc.Dropdown(id=ids.fit_slot, options=[], value=None, clearable=False, searchable=False,
                             className="fd-fit-slot"),
            ]),
            html.Label("free parameters (the others keep the model's values) and their bounds",
                       className="fd-control-label"),
            dcc.Checklist(id=ids.fit_free, options=choices, value=list(options["default_free"]), inline=True,
                          className="fd-fit-free"),
            html.Div([_bound_inputs(p) for p in params], className="fd-fit-bounds"),
            html.Div(className="fd-data-row", children=[
                html.Button("fit", id=ids.fit_run, n_clicks=0, disabled=True, className="fd-button"),
                html.Small(options["no_data_reason"], id=ids.fit_reason, className="fd-reason", role="status"),
                html.Button("load the fit into a free slot", id=ids.fit_load, n_clicks=0, disabled=True,
                            className="fd-button"),
                html.Small(options["no_fit_reason"], id=ids.fit_load_reason, className="fd-reason", role="status"),
                html.Span(id=ids.fit_load_message, className="fd-note"),
            ]),
            dcc.Store(id=ids.fit_store, data=None),
            dcc.Loading(html.Div(id=ids.fit_out, className="fd-fit-out"), type="dot", delay_show=300),
        ]),
        html.Section(className="fd-data-box", children=[
            html.H3("Δχ² map of two parameters"),
            html.P(_map_note(options["map_points"], options["levels"]), className="fd-note"),
            html.Div(className="fd-data-row", children=[
                html.Label("x", htmlFor=ids.map_x),
                dcc.Dropdown(id=ids.map_x, options=choices, value=options["map_default"][0], clearable=False,
                             searchable=False, className="fd-fit-slot"),
                html.Label("y", htmlFor=ids.map_y),
                dcc.Dropdown(id=ids.map_y, options=choices, value=options["map_default"][1], clearable=False,
                             searchable=False, className="fd-fit-slot"),
                html.Button("draw the map", id=ids.map_run, n_clicks=0, disabled=True, className="fd-button"),
                html.Small(options["no_data_reason"], id=ids.map_reason, className="fd-reason", role="status"),
            ]),
            dcc.Loading(html.Div(id=ids.map_out), type="dot", delay_show=300),
        ]),
        html.Section(className="fd-data-box fd-data-wide", children=[
            html.H3("Catalogue columns"),
            html.P(options["catalogue"], className="fd-note"),
            # layouts/assets/catalogue.js sends the file to POST /api/v1/catalogue and saves the streamed answer
            html.Div(className="fd-data-row", children=[
                html.Label("columns for"),
                dcc.RadioItems(id=ids.catalogue_models, inline=True, value="ref", options=[
                    {"label": "the reference model", "value": "ref"}, {"label": "every model", "value": "all"}]),
                html.Button("choose a redshift file and download it with the columns added (CSV)",
                            id=ids.catalogue_run, n_clicks=0, className="fd-button"),
            ]),
            html.Div(id=ids.catalogue_message, className="fd-note", role="status"),
        ]),
    ]


def messages(items: list[tuple[str, str]]) -> list:
    """``[(kind, text)]`` with kind ``"error"`` or ``"ok"`` as text paragraphs."""
    return [html.Div(text, className="fd-error" if kind == "error" else "fd-ok",
                     role="alert" if kind == "error" else None) for kind, text in items]


def fit_report(report: FitReport) -> list:
    """`report`: a `layouts.specs.FitReport` (cells and summary lines as `Text`)."""
    out = [html.H4(report["title"], className="fd-fit-title"),
           table(report["header"], report["rows"])]
    for line in report["summary"]:
        out.append(html.P(render(line), className="fd-fit-summary"))
    if report.get("correlation_rows"):
        out.append(html.H4("Correlations (from the Jacobian at the best fit)"))
        out.append(table(report["correlation_header"], report["correlation_rows"]))
    out.extend(html.Div(w, className="fd-error", role="alert") for w in report.get("warnings", []))
    return out


def map_view(spec: dict, notes: list) -> list:
    return [dcc.Graph(id="fd-fig-chi2-map", figure=chi2_map_figure(spec), className="fd-graph",
                      config={"displaylogo": False, "toImageButtonOptions": {"format": "png"}})] + [
        html.P(render(n), className="fd-fit-summary") for n in notes]
