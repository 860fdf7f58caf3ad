"""Dash callbacks. Data flows one way: link -> state -> cached results -> page; the inputs only
ever write the link.

`sync` is the one callback that keeps the link and the inputs in step (../shared/TOOLCHAIN.md):
it has the location's ``search`` as Input and Output, so Back and Forward restore inputs.
"""

from __future__ import annotations

import dataclasses
import urllib.parse

from dash import ALL, MATCH, Input, Output, State, ctx, dcc, no_update

from layouts.cards import card_status, model_card
from layouts.ids import ids
from layouts.page import notice, panel_body
from server import codec, panels
from server.presets import apply_preset

__all__ = ["register", "page_options", "state_from_inputs", "apply_action"]


def page_options() -> dict:
    return panels.page_options()


def _lowest_free_slot(state: codec.LinkState) -> int | None:
    free = [n for n in range(1, codec.MAX_SLOTS + 1) if n not in state.slots()]
    return free[0] if free else None


def apply_action(state: codec.LinkState, action: str, slot: int | None = None, value=None) -> codec.LinkState:
    """A card button or preset applied to a state (returns a new state)."""
    models = list(state.models)
    if action == "add":
        new = _lowest_free_slot(state)
        if new is None:
            return state
        models.append(codec.ModelState(slot=new))
    elif action == "duplicate":
        new = _lowest_free_slot(state)
        source = next((m for m in models if m.slot == slot), None)
        if new is None or source is None:
            return state
        label = (source.label or source.name) + " (copy)"
        models.append(dataclasses.replace(source, slot=new, label=label[:codec.MAX_LABEL_LENGTH]))
    elif action == "remove":
        if len(models) <= 1:
            return state
        models = [m for m in models if m.slot != slot]
    elif action == "preset":
        models = [apply_preset(m, value) if m.slot == slot else m for m in models]
    models.sort(key=lambda m: m.slot)
    view = state.view
    if view.reference not in [m.slot for m in models] or view.reference == models[0].slot:
        view = dataclasses.replace(view, reference=None)
    return codec.LinkState(models=tuple(models), view=view)


def state_from_inputs(current: codec.LinkState, params: list[tuple[dict, str]], views: list[tuple[str, str]],
                      tab, reference, zmax) -> codec.LinkState:
    """The state the inputs on screen describe. `params` are ``(id, value)`` pairs of the card
    inputs; the view inputs override the current link's keys; everything else is kept."""
    pairs = dict(urllib.parse.parse_qsl(codec.encode(current), keep_blank_values=True))
    slots_on_screen = sorted({pid["slot"] for pid, _ in params})
    for slot in slots_on_screen:
        for key in [k for k in pairs if k.startswith(f"m{slot}.")]:
            del pairs[key]
    for pid, value in params:
        text = "" if value is None else str(value)
        if text or pid["key"] == "mnu":
            pairs[f"m{pid['slot']}.{pid['key']}"] = text
        elif not any(k.startswith(f"m{pid['slot']}.") for k in pairs):
            pairs[f"m{pid['slot']}.label"] = ""
    for key, value in views + [("tab", tab), ("ref", reference), ("zmax", zmax)]:
        if value is None or str(value) == "":
            pairs.pop(key, None)
        else:
            pairs[key] = str(value)
    return codec.decode(urllib.parse.urlencode(pairs, quote_via=urllib.parse.quote))


def _cards(state: codec.LinkState) -> list:
    return [model_card(card) for card in panels.cards(state)]


def _reference_options(state: codec.LinkState) -> list[dict]:
    return [{"label": f"m{m.slot}: {m.name}", "value": m.slot} for m in state.models]


def register(app) -> None:
    """Attach every callback to `app` (called by the factory)."""

    @app.callback(
        Output(ids.url, "search"),
        Output(ids.cards, "children"),
        Output(ids.tab, "value"),
        Output(ids.reference, "value"),
        Output(ids.reference, "options"),
        Output(ids.zmax, "value"),
        Input(ids.url, "search"),
        Input(ids.param(ALL, ALL), "value"),
        Input(ids.view(ALL), "value"),
        Input(ids.tab, "value"),
        Input(ids.reference, "value"),
        Input(ids.zmax, "value"),
        Input(ids.add, "n_clicks"),
        Input(ids.remove(ALL), "n_clicks"),
        Input(ids.duplicate(ALL), "n_clicks"),
        Input(ids.preset(ALL), "value"),
    )
    def sync(search, _params, _views, tab, reference, zmax, *_buttons):
        current = codec.decode(search or "")
        trigger = ctx.triggered_id
        nothing = (no_update,) * 6

        def from_link(state):
            return (no_update, _cards(state), state.view.tab, codec.reference_slot(state),
                    _reference_options(state), codec.format_number(state.view.zmax)
                    if "zmax" not in dict(state.view.invalid) else dict(state.view.invalid)["zmax"])

        def write(state):
            return ("?" + codec.encode(state),) + from_link(state)[1:]

        if trigger is None or trigger == ids.url:
            return from_link(current)
        value = ctx.triggered[0]["value"] if ctx.triggered else None
        if isinstance(trigger, dict) and trigger.get("type") in ("fd-remove", "fd-duplicate", "fd-preset"):
            if not value:
                return nothing
            action = trigger["type"].removeprefix("fd-")
            return write(apply_action(current, action, trigger["slot"], value))
        if trigger == ids.add:
            return write(apply_action(current, "add")) if value else nothing
        params = [(item["id"], item.get("value")) for item in ctx.inputs_list[1]]
        views = [(item["id"]["key"], item.get("value")) for item in ctx.inputs_list[2]]
        new = state_from_inputs(current, params, views, tab, reference, zmax)
        if codec.encode(new) == codec.encode(current):
            return nothing
        reference_changed = trigger == ids.reference
        search_out = "?" + codec.encode(new)
        # the inputs already show what was typed: only the link and the reference list change
        return (search_out, no_update, no_update, no_update,
                _reference_options(new) if not reference_changed else no_update, no_update)

    @app.callback(
        Output(ids.panel, "children"),
        Output(ids.notice, "children"),
        Output(ids.notice_box, "style"),
        Output(ids.copy, "content"),
        Input(ids.url, "search"),
        State(ids.url, "href"),
    )
    def render(search, href):
        state = codec.decode(search or "")
        comparison = panels.compare(state)
        body = panel_body(panels.panel(comparison))
        dropped = [p.message for p in state.notices]
        box = {"display": "block"} if (dropped or state.unknown) else {"display": "none"}
        base = (href or "").split("?")[0]
        return body, notice(list(state.unknown), dropped), box, f"{base}?{codec.encode(state)}"

    @app.callback(
        Output(ids.status(MATCH), "children"),
        Input(ids.url, "search"),
        Input(ids.status(MATCH), "id"),
    )
    def status(search, status_id):
        state = codec.decode(search or "")
        return card_status(panels.card_status(state, status_id["slot"]))

    @app.callback(
        Output(ids.notice_box, "style", allow_duplicate=True),
        Input(ids.notice_close, "n_clicks"),
        prevent_initial_call=True,
    )
    def dismiss(n_clicks):
        return {"display": "none"} if n_clicks else no_update

    @app.callback(
        Output(ids.download_panel_file, "data"),
        Input(ids.download_panel, "n_clicks"),
        State(ids.url, "search"),
        prevent_initial_call=True,
    )
    def download_panel(n_clicks, search):
        if not n_clicks:
            return no_update
        state = codec.decode(search or "")
        text = panels.panel_csv(panels.compare(state))
        return dcc.send_string(text, f"friedmann-desk-{state.view.tab}.csv")

    @app.callback(
        Output(ids.download_params_file, "data"),
        Input(ids.download_params, "n_clicks"),
        State(ids.url, "search"),
        prevent_initial_call=True,
    )
    def download_params(n_clicks, search):
        if not n_clicks:
            return no_update
        state = codec.decode(search or "")
        return dcc.send_string(panels.parameter_sets(panels.compare(state)), "friedmann-desk-models.json")
