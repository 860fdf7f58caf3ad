"""Model cards: one per slot, built from plain data (see `model_card`)."""

from __future__ import annotations

from dash import dcc, html

from layouts.ids import ids
from layouts.palette import slot_colour
from layouts.specs import Card, CardStatus
from layouts.text import render


def _field(slot: int, field: dict) -> html.Div:
    unit = f" [{field['unit']}]" if field.get("unit") else ""
    return html.Div(className="fd-field", children=[
        html.Label(f"{field['title']}{unit}", htmlFor=f"fd-in-{slot}-{field['key']}",
                   title=field.get("description", "")),
        dcc.Input(id=ids.param(slot, field["key"]), type="text", value=field["text"], debounce=True,
                  placeholder=field.get("placeholder", ""), spellCheck=False, autoComplete="off",
                  className="fd-input"),
        html.Small(field["range"], className="fd-range"),
    ])


def model_card(card: Card) -> html.Div:
    """`card`: a `layouts.specs.Card`; its colour is its slot's."""
    slot = card["slot"]
    colour = slot_colour(slot)
    return html.Div(id=ids.card(slot), className="fd-card", style={"borderTopColor": colour}, children=[
        html.Div(className="fd-card-head", children=[
            html.Span(className="fd-swatch", style={"backgroundColor": colour}),
            html.Span(f"m{slot}", className="fd-slot"),
            dcc.Input(id=ids.param(slot, "label"), type="text", value=card["label"], debounce=True,
                      placeholder=f"Model {slot}", className="fd-label-input", maxLength=80),
        ]),
        dcc.Dropdown(id=ids.preset(slot), options=card["presets"], value=None, placeholder="start from…",
                     clearable=False, searchable=False, className="fd-preset"),
        html.Div(className="fd-fields", children=[_field(slot, f) for f in card["fields"]]),
        html.Div(id=ids.status(slot), className="fd-status"),
        html.Div(className="fd-card-actions", children=[
            html.Button("duplicate", id=ids.duplicate(slot), n_clicks=0, disabled=not card["can_duplicate"],
                        className="fd-button"),
            html.Button("remove", id=ids.remove(slot), n_clicks=0, disabled=not card["can_remove"],
                        className="fd-button"),
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
