"""The page shell and the panel bodies, from plain option lists."""

from __future__ import annotations

import hashlib
import json
import urllib.parse

import plotly.io
from dash import dcc, html, no_update

from layouts.data_panel import data_tools
from layouts.cards import slot_shell
from layouts.figures import figure, small_multiples
from layouts.ids import dom_id, ids
from layouts.specs import PageOptions, PanelSpec
from layouts.tables import table
from layouts.text import render

__all__ = ["page", "panel_body", "notice"]

TONE_CLASSES = {"note": "fd-note", "caution": "fd-caution", "error": "fd-error"}


def _tabs(tabs: list[tuple[str, str]], value: str) -> html.Div:
    """Real tabs (WAI-ARIA "Tabs" pattern): buttons with role=tab in a tablist, one in the tab
    order at a time; layouts/assets/page.js moves between them with the arrow keys."""
    return html.Div(className="fd-tabs", role="tablist", **{"aria-label": "panels"}, children=[
        html.Button(label, id=ids.tab_button(key), type="button", role="tab", n_clicks=0,
                    className="fd-tab fd-tab-selected" if key == value else "fd-tab",
                    tabIndex=0 if key == value else -1,
                    **{"aria-selected": "true" if key == value else "false", "aria-controls": ids.panel})
        for key, label in tabs])


def page(options: PageOptions) -> html.Div:
    """`options`: ``{"tabs": [(value, label)], "zmax_range": str, "max_models": int, "view_controls": [...],
    "data_tools": {...}}`` (see `layouts.data_panel.data_tools`); chips, cards and panels are filled
    by callbacks from the link.

    Top to bottom: a header line (name, the link with its copy button), one row of model
    chips, one line of view settings, the tabs, then the open panel: at 1280 × 800 the first
    figure starts on the first screen."""
    first = options["tabs"][0][0]
    return html.Div(className="fd-page", children=[
        # "callback-nav": a new address from a callback also updates ``href``, which the
        # panel listens to (server/callbacks.py)
        dcc.Location(id=ids.url, refresh="callback-nav"),
        dcc.Store(id=ids.tab, data=first),
        dcc.Store(id=ids.shells, data={"filled": [], "open": None}),
        dcc.Store(id=ids.build_card, data={"slot": None}),  # a slot whose card is to be built (page.js `shells`)
        html.Header(className="fd-header", children=[
            html.Div([html.H1("Friedmann Desk"),
                      html.Span("compare up to four expansion histories", className="fd-tagline")]),
            html.Div(className="fd-header-actions", children=[
                html.Label("link", htmlFor=ids.link_text, className="fd-viewbar-label",
                           title="the link to this view: every model and setting is in it"),
                dcc.Input(id=ids.link_text, type="text", value="", readOnly=True, className="fd-link-text"),
                html.Button("copy link", id=ids.copy, n_clicks=0, type="button", className="fd-button",
                            title="copy the link to this view (every model and setting is in it)"),
                html.Span(id=ids.copy_status, className="fd-copy-status", role="status"),
                html.Button("parameter sets (JSON)", id=ids.download_params, n_clicks=0, className="fd-button",
                            title="every model's parameters as a JSON file"),
                dcc.Download(id=ids.download_params_file),
            ]),
        ]),
        html.Div(id=ids.notice_box, className="fd-notice", style={"display": "none"}, role="status", children=[
            html.Div(id=ids.notice),
            html.Button("dismiss", id=ids.notice_close, n_clicks=0, className="fd-button"),
        ]),
        html.Div(className="fd-models", id=ids.cards, children=[
            *(slot_shell(slot) for slot in range(1, options["max_models"] + 1)),
            html.Div(className="fd-add-box", children=[
                html.Button("+ add model", id=ids.add, n_clicks=0, className="fd-button fd-add", type="button"),
                html.Small(id=ids.add_reason, className="fd-reason", role="status"),
            ]),
        ]),
        html.Div(className="fd-viewbar", children=[
            html.Span("reference", className="fd-viewbar-label", id="fd-reference-label"),
            html.Div(dcc.RadioItems(id=ids.reference, options=[], value=None, inline=True, className="fd-ref"),
                     role="radiogroup", **{"aria-labelledby": "fd-reference-label"}),
            html.Label(["z", html.Sub("max")], htmlFor=ids.zmax, className="fd-viewbar-label",
                       title="largest redshift drawn: " + options["zmax_range"]),
            dcc.Input(id=ids.zmax, type="text", value="3", debounce=True, className="fd-input fd-short",
                      placeholder="3"),
            *(_view_setting(c) for c in options.get("view_controls", [])),
        ]),
        _tabs(options["tabs"], first),
        html.Div(className="fd-panel-actions", children=[
            html.Button("this panel's numbers (CSV)", id=ids.download_panel, n_clicks=0, className="fd-button"),
            dcc.Download(id=ids.download_panel_file),
        ]),
        dcc.Loading(html.Div(id=ids.panel, className="fd-panel", role="tabpanel"), type="dot", delay_show=400),
        dcc.Store(id=ids.panel_key, data={}),  # what the panel shows, but for its figures and rows (`render`)
        dcc.Store(id=ids.panel_views, data=None),  # a panel control's change, for `sync` (`fd.panelViews`)
        data_tools(),
    ])


def _view_dropdown(control: dict, class_name: str, label_id: str, ident: dict) -> html.Div:
    """The list of view key ``control["key"]`` with id `ident`, named by the element `label_id`
    (a dcc.Dropdown takes no aria-* props, so a group around it carries the name)."""
    return html.Div(dcc.Dropdown(id=ident, options=control["options"], value=control["value"],
                                 clearable=False, searchable=False, className=class_name),
                    role="group", **{"aria-labelledby": label_id})


def _view_setting(control: dict) -> html.Span:
    """A view key the whole page follows (distance unit, axis scale): a small labelled list."""
    label_id = f"fd-view-label-{control['key']}"
    return html.Span(className="fd-view-setting", children=[
        html.Span(control["label"], className="fd-viewbar-label", id=label_id),
        _view_dropdown(control, "fd-view-dropdown", label_id, ids.view(control["key"])),
    ])


def _control(control: dict):
    """A panel's own control of a view key. Its id is `ids.panel_view`, not `ids.view`: Dash
    calls every callback whose pattern inputs are inserted, and `sync` (the view bar's) would
    make a round trip after each panel drawn; `fd.panelViews` passes its changes on instead
    (in the browser, comparing with `ids.panel_shown`)."""
    key = control["key"]
    label = html.Label(control["label"], className="fd-control-label", htmlFor=dom_id(ids.panel_view(key)),
                       id=f"fd-control-label-{key}")
    if control["kind"] == "dropdown":
        widget = _view_dropdown(control, "fd-control-dropdown", f"fd-control-label-{key}", ids.panel_view(key))
    else:
        widget = dcc.Input(id=ids.panel_view(key), type="text", value=control["value"], debounce=True,
                           className="fd-input")
    parts = [label, widget]
    if control.get("range"):
        parts.append(html.Small(control["range"], className="fd-range"))
    if control.get("error"):
        parts.append(html.Div(control["error"], className="fd-error", role="alert"))
    return html.Div(parts, className="fd-control")


def graph_config(name: str, remove: tuple[str, ...] = ()) -> dict:
    """The Plotly toolbar of every figure: the camera saves an SVG named after the figure, and
    nothing can leave the machine (no cloud or editor buttons, no server URL: measurements
    may be unpublished)."""
    return {"displaylogo": False, "showSendToCloud": False, "showEditInChartStudio": False, "showLink": False,
            "plotlyServerURL": "", "modeBarButtonsToRemove": ["sendDataToCloud", "editInChartStudio", *remove],
            "toImageButtonOptions": {"format": "svg", "filename": name, "scale": 1}}


# The export buttons under each figure (layouts/assets/exports.js draws the files in the browser):
# data-fd-export names the kind of file.
EXPORTS = (("svg", "SVG", "vector file of this figure as shown (for papers)"),
           ("png2", "PNG 2×", "bitmap at twice the size on screen"),
           ("png3", "PNG 3×", "bitmap at three times the size on screen"),
           ("slides", "figure for slides", "16:9 bitmap, 1600 × 900 at 2× (3200 × 1800 pixels), large text"))


# A small plot's toolbar fits its width: no selection tools (nothing on these plots is selected)
SMALL_PLOT_REMOVED = ("select2d", "lasso2d")
# Plotly's dash patterns (its dashStyle, for lines up to 3 px wide), for the key's line samples.
_DASH_ARRAYS = {"solid": "", "dot": "3,3", "dash": "9,9", "longdash": "15,15", "dashdot": "9,3,3,3",
                "longdashdot": "15,6,3,6"}
# The marker symbols of the epochs as characters, for the key.
_GLYPHS = {"triangle-down": "▼", "diamond": "◆", "square": "■", "star": "★", "circle": "●", "x": "✕",
           "cross": "✚", "hexagon": "⬢"}


def _line_sample(line: dict) -> str:
    """A CSS background: a short stretch of `line` (colour, dash, width) as an SVG."""
    dash = _DASH_ARRAYS.get(line.get("dash", "solid"), "")
    svg = ("<svg xmlns='http://www.w3.org/2000/svg' width='30' height='10'><line x1='0' y1='5' x2='30' y2='5' "
           f"stroke='{line['color']}' stroke-width='{line.get('width', 2)}'"
           + (f" stroke-dasharray='{dash}'" if dash else "") + "/></svg>")
    return 'url("data:image/svg+xml,' + urllib.parse.quote(svg, safe="=:/' ") + '")'


def _key(items: list[dict]) -> html.Div:
    """The key of a set of small plots: one entry per component, guide and kind of epoch, each a
    single element (its sample drawn by CSS from its style or its ``data-glyph``)."""
    spans = []
    for item in items:
        if item.get("symbol"):
            spans.append(html.Span(item["name"], className="fd-key-item fd-key-symbol", role="listitem",
                                   **{"data-glyph": _GLYPHS.get(item["symbol"], "●")}))
        else:
            spans.append(html.Span(item["name"], className="fd-key-item", role="listitem",
                                   style={"backgroundImage": _line_sample(item["line"])}))
    return html.Div(spans, className="fd-key", role="list", **{"aria-label": "key to the small plots"})


def _exports() -> html.Div:
    return html.Div(className="fd-exports", children=[html.Span("save:", className="fd-exports-label")] + [
        html.Button(label, type="button", title=title, className="fd-button fd-small", **{"data-fd-export": key})
        for key, label, title in EXPORTS])


def _graph(block: dict) -> html.Figure:
    """A figure block: one graph, or (``"multiples"``) one small graph per model in a row, with
    the set's title above and its key below. The figure element keeps the block's id for pages
    and tests to find it; each graph has a pattern-matching id (``ids.graph``: the block's name,
    and ``-<slot>`` for a small plot), so that `render` can redraw the panel's figures in place,
    each only when it changed."""
    name = (block.get("id") or "figure").removeprefix("fd-fig-")
    attributes = {"id": block.get("id") or f"fd-fig-{name}", "data-fd-name": f"friedmann-desk-{name}"}
    if block["kind"] == "figure":
        return html.Figure(className="fd-figure", **attributes, children=[
            dcc.Graph(figure=figure(block["spec"]), id=ids.graph(name), className="fd-graph",
                      config=graph_config(f"friedmann-desk-{name}")), _exports()])
    spec = block["spec"]
    drawn = small_multiples(spec)
    title = render(spec.get("title") or "")
    graphs = [dcc.Graph(figure=fig, id=ids.graph(f"{name}-{panel['slot']}"), className="fd-graph",
                        config=graph_config(f"friedmann-desk-{name}-m{panel['slot']}", SMALL_PLOT_REMOVED))
              for fig, panel in zip(drawn["figures"], spec["panels"])]
    return html.Figure(className="fd-figure fd-multiples", **attributes, **{"data-fd-title": title}, children=[
        html.Figcaption(title, className="fd-multiples-title"),
        html.Div(graphs, className=f"fd-multiples-row fd-n{min(max(len(graphs), 1), 4)}"),
        _key(drawn["key"]), _exports()])


def panel_figures(children: list) -> tuple[str, dict[str, object], dict[str, object], dict[str, object]]:
    """What a drawn panel (`panel_body`'s answer) shows apart from its figures and its tables'
    contents, as a digest; its figures by graph name; its long tables' contents (a grid) by
    table name; and its short tables' body rows (their cells) by ``"table:row"``. Two panels with
    the same digest differ in those only, so the page can redraw them in place (Plotly.react for
    a figure, new data for a grid, new cells for a row whose cells changed) instead of building
    the panel again."""
    held = []  # (component, the property sent on its own, its name)

    def walk(node):
        ident = getattr(node, "id", None)
        if isinstance(node, dcc.Graph) and isinstance(ident, dict):
            held.append((node, "figure", ident["name"], "figure"))
            return
        if isinstance(node, html.Div) and isinstance(ident, dict) and ident == ids.table(str(ident.get("name"))) \
                and not isinstance(node.children, html.Table):
            held.append((node, "children", ident["name"], "grid"))
            return
        if isinstance(node, html.Tr) and isinstance(ident, dict) \
                and ident == ids.table_row(str(ident.get("table")), ident.get("row")):
            held.append((node, "children", f"{ident['table']}:{ident['row']}", "row"))
            return
        kids = getattr(node, "children", None)
        for child in kids if isinstance(kids, (list, tuple)) else [kids]:
            if child is not None and not isinstance(child, (str, int, float)):
                walk(child)

    for node in children:
        walk(node)
    values = [getattr(node, prop) for node, prop, _, _ in held]
    try:
        for node, prop, _, _ in held:
            setattr(node, prop, None)
        text = plotly.io.json.to_json_plotly(children)
    finally:
        for (node, prop, _, _), value in zip(held, values):
            setattr(node, prop, value)
    parts = {"figure": {}, "grid": {}, "row": {}}
    for (_, _, name, kind), value in zip(held, values):
        parts[kind][name] = value
    return hashlib.sha256(text.encode()).hexdigest()[:32], parts["figure"], parts["grid"], parts["row"]


def _numpy_plain(value):
    if hasattr(value, "tolist"):  # numpy arrays and scalars, in full (never a shortened repr)
        return value.tolist()
    raise TypeError(type(value).__name__)


def _digest(value) -> str:
    """A short digest of a figure or of a table row's cells, for the page to tell which ones an
    update changed."""
    # the standard encoder is a third faster than Plotly's on these (mostly strings: the curves
    # are base64 already); Plotly's takes what it cannot write (components, in a row's cells)
    try:
        text = json.dumps(value, separators=(",", ":"), default=_numpy_plain)
    except TypeError:
        text = plotly.io.json.to_json_plotly(value)
    return hashlib.sha256(text.encode()).hexdigest()[:16]


def in_place(body: list, shown, figure_names: list[str], grid_names: list[str], row_names: list[str]) -> dict:
    """How to bring the panel the page shows (`shown`: the panel key store, ``{"key", "rows",
    "figures"}``; the figures, grids and rows it holds, by name) to `body`. When only figures and
    tables' contents differ, the panel is kept and only the figures, grids and rows that changed
    are sent (``children`` is ``no_update``); otherwise ``children`` is `body`. The answer's lists
    follow the names given, ``no_update`` for what stays; ``stored`` is the store's new value (or
    ``no_update``)."""
    key, figures, grids, rows = panel_figures(body)
    digests = {"rows": {n: _digest(c) for n, c in rows.items()},
               "figures": {n: _digest(f) for n, f in figures.items()}}
    shown = shown if isinstance(shown, dict) else {}
    if key == shown.get("key") and figure_names == list(figures) and row_names == list(rows) \
            and [n for n in grid_names if n in grids] == list(grids):
        kept = {part: shown.get(part) or {} for part in ("rows", "figures")}
        return {"children": no_update,
                "figures": [figures[n] if digests["figures"][n] != kept["figures"].get(n) else no_update
                            for n in figure_names],
                "grids": [grids.get(n, no_update) for n in grid_names],
                "rows": [rows[n] if digests["rows"][n] != kept["rows"].get(n) else no_update for n in row_names],
                "stored": no_update if digests == kept else {"key": key, **digests}}
    return {"children": body, "figures": [no_update] * len(figure_names), "grids": [no_update] * len(grid_names),
            "rows": [no_update] * len(row_names), "stored": {"key": key, **digests}}


def panel_body(body: PanelSpec) -> list:
    """`body`: a `layouts.specs.PanelSpec` (``{"intro", "controls": [...], "blocks": [{"kind":
    "figure"|"multiples"|"table"|"text", ...}]}``, blocks in display order)."""
    out = []
    if body.get("intro"):
        out.append(html.P(body["intro"], className="fd-intro"))
    if body.get("controls"):
        # the values the controls are built with (the link's), for `fd.panelViews` to tell a
        # reader's change from the call Dash makes as the controls come in
        shown = dcc.Store(id=ids.panel_shown("controls"), data={c["key"]: c["value"] for c in body["controls"]})
        out.append(html.Div([_control(c) for c in body["controls"]] + [shown], className="fd-controls"))
    tables = 0
    for block in body["blocks"]:
        kind = block["kind"]
        if kind in ("figure", "multiples"):
            out.append(_graph(block))
        elif kind == "table":
            if block.get("title"):
                out.append(html.H3(render(block["title"])))
            out.append(table(block["header"], block.get("rows"), block.get("sections"), block.get("column_slots"),
                             ident=ids.table(f"t{tables}")))
            tables += 1
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
