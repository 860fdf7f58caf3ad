"""Model slots: a one-line chip per model that opens its full card, built from plain data.

The page holds four slot shells (`slot_shell`) from the start; callbacks fill a shell's card
(`model_card`), its chip (`chip`) and its status (`card_status`) separately, so an edit, a
preset or a new model redraws that slot only and text typed in another card is never touched.
A chip is a button: it opens and closes its card in the browser (layouts/assets/page.js).

A card is built the first time its chip opens it, and kept from then on (its body's class
becomes ``BODY_CLASSES["filled"]``): the page starts with chips only, because every component
in the layout costs the renderer time on each update."""

from __future__ import annotations

from dash import dcc, html

from layouts.ids import dom_id, ids
from layouts.palette import slot_colour, slot_dash
from layouts.specs import Card, CardStatus, Chip
from layouts.text import render

__all__ = ["slot_shell", "model_card", "chip", "card_status", "line_sample", "SHELL_CLASSES", "BODY_CLASSES"]

# className of a slot shell: no model in it, a closed chip, or a chip with its card open
SHELL_CLASSES = {"empty": "fd-slot fd-empty", "closed": "fd-slot", "open": "fd-slot fd-open"}
# className of a card body: not built yet, or holding its card
BODY_CLASSES = {"empty": "fd-card-body", "filled": "fd-card-body fd-filled"}

# CSS line patterns for the chip's line sample, matching Plotly's dashes (layouts.palette)
_PATTERNS = {"solid": None, "dash": (9, 5), "dot": (3, 4), "dashdot": (9, 4, 3, 4)}


def line_sample(slot: int) -> html.Span:
    """A short stroke in the slot's colour and dash, as its curves are drawn."""
    colour, pattern = slot_colour(slot), _PATTERNS.get(slot_dash(slot))
    if pattern is None:
        background = colour
    else:
        stops, at, on = [], 0, True
        for length in pattern:
            stops.append(f"{colour if on else 'transparent'} {at}px {at + length}px")
            at, on = at + length, not on
        background = f"repeating-linear-gradient(90deg, {', '.join(stops)})"
    return html.Span(className="fd-line-sample", style={"background": background}, **{"aria-hidden": "true"})


def slot_shell(slot: int) -> html.Div:
    """The static shell of slot `slot`, empty until the link fills it: its chip (a toggle
    button) and the popover that holds its card and status."""
    card_id = f"fd-card-box-{slot}"
    return html.Div(id=ids.slot(slot), className=SHELL_CLASSES["empty"], children=[
        html.Button(id=ids.chip(slot), className="fd-chip", type="button", n_clicks=0,
                    **{"aria-expanded": "false", "aria-controls": card_id}),
        html.Div(id=card_id, className="fd-card-box", role="group", **{"aria-label": f"model m{slot}"}, children=[
            html.Div(id=ids.card_body(slot), className=BODY_CLASSES["empty"]),
            html.Div(id=ids.status(slot), className="fd-status", **{"aria-live": "polite"}),
        ]),
    ])


def chip(summary: Chip) -> list:
    """The chip's content: line sample, slot, label, what differs from the defaults, badges."""
    slot = summary["slot"]
    out = [line_sample(slot), html.Span(f"m{slot}", className="fd-slot-name"),
           html.Span(summary["label"], className="fd-chip-label")]
    if summary.get("changes"):
        out.append(html.Span(summary["changes"], className="fd-chip-changes"))
    if summary.get("reference"):
        out.append(html.Span("ref", className="fd-ref-badge",
                             title="the reference model: strips and Δ are against it"))
    if summary.get("problem"):
        out.append(html.Span("fix me", className="fd-chip-problem", title=summary["problem"]))
    out.append(html.Span("▾", className="fd-chip-caret", **{"aria-hidden": "true"}))
    return out


def _field(slot: int, field: dict) -> html.Div:
    unit = f" [{field['unit']}]" if field.get("unit") else ""
    input_id = ids.param(slot, field["key"])
    return html.Div(className="fd-field", children=[
        html.Label(className="fd-field-title", htmlFor=dom_id(input_id), title=field.get("description", ""),
                   children=[html.Span(f"m{slot} ", className="fd-sr-only"), f"{field['title']}{unit}"]),
        dcc.Input(id=input_id, type="text", value=field["text"], debounce=True,
                  placeholder=field.get("placeholder", ""), spellCheck=False, autoComplete="off",
                  className="fd-input"),
        html.Small(field["range"], className="fd-range"),
    ])


def model_card(card: Card) -> html.Div:
    """`card`: a `layouts.specs.Card`; its colour is its slot's."""
    slot = card["slot"]
    colour = slot_colour(slot)
    return html.Div(className="fd-card", style={"borderTopColor": colour}, children=[
        html.Div(className="fd-card-head", children=[
            line_sample(slot),
            html.Label([f"m{slot}", html.Span(" label", className="fd-sr-only")], className="fd-slot-name",
                       htmlFor=dom_id(ids.param(slot, "label"))),
            dcc.Input(id=ids.param(slot, "label"), type="text", value=card["label"], debounce=True,
                      placeholder=f"Model {slot}", className="fd-label-input", maxLength=80),
        ]),
        dcc.Dropdown(id=ids.preset(slot), options=card["presets"], value=None, placeholder="start from…",
                     clearable=False, searchable=False, className="fd-preset"),
        html.Div(className="fd-fields", children=[_field(slot, f) for f in card["fields"]]),
        html.Div(className="fd-card-actions", children=[
            html.Button("duplicate", id=ids.duplicate(slot), n_clicks=0, disabled=not card["can_duplicate"],
                        title=card.get("duplicate_reason") or f"copy m{slot} into a free slot",
                        className="fd-button"),
            html.Button("remove", id=ids.remove(slot), n_clicks=0, disabled=not card["can_remove"],
                        title=card.get("remove_reason") or f"remove m{slot} from the comparison",
                        className="fd-button"),
            html.Small(card.get("duplicate_reason") or card.get("remove_reason") or "", className="fd-reason"),
        ]),
    ])


def card_status(status: CardStatus) -> list:
    """`status`: ``{"derived": [(name, Text)], "cautions": [text], "errors": [message], "reference": bool}``."""
    out = []
    if status.get("reference"):
        out.append(html.Div("reference model", className="fd-ref-badge"))
    if status.get("derived"):
        out.append(html.Dl(className="fd-derived", children=[
            part for name, text in status["derived"] for part in (html.Dt(name), html.Dd(render(text)))]))
    for message in status.get("cautions", []):
        out.append(html.Div(message, className="fd-caution", role="note"))
    for message in status.get("errors", []):
        out.append(html.Div(message, className="fd-error", role="alert"))
    return out
