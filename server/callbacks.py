"""Dash callbacks. Data flows one way: link -> state -> cached results -> page; the inputs only
ever write the link.

`sync` is the one callback that keeps the link and the inputs in step (../shared/TOOLCHAIN.md):
it has the location's ``search`` as Input and Output, so Back and Forward restore inputs.
Everything drawn from the link (`render`, `summaries`, `tool_buttons`) listens to the
location's ``href`` instead, which the location sets after every change of address
(``refresh="callback-nav"``): Dash holds back a callback whose input another pending callback
may write, so on ``search`` the panel would wait for `sync` on every page load.
"""

from __future__ import annotations

import base64
import binascii
import dataclasses
import json
import logging
import urllib.parse

import plotly.io
from dash import ALL, MATCH, ClientsideFunction, Input, Output, State, ctx, dcc, no_update
from dash.exceptions import PreventUpdate

from layouts.cards import BODY_CLASSES, card_status, chip, model_card
from layouts.data_panel import (SECTIONS_CLASSES, TOOLS_CLASSES, data_tools_body, data_tools_sections, fit_report,
                                map_view, messages)
from layouts.ids import ids
from layouts.page import in_place, notice, panel_body
import model
from server import codec, data_store, state as states
from server.cache import BudgetExceeded
from server.views import data_tools
from server.views.cards import card_status as card_status_spec, cards, chips
from server.views.comparison import Comparison, compare, measurements
from server.views.downloads import panel_csv, parameter_sets
from server.views.page import page_options, panel  # page_options: read by the app factory

__all__ = ["register", "page_options", "upload_bytes"]

logger = logging.getLogger(__name__)


def upload_bytes(contents: str | None, field: str) -> bytes | None:
    """The file bytes of a `dcc.Upload` ``contents`` (``data:<type>;base64,<data>``); raises
    `data_store.DataRejected` naming the field when it is not such a string."""
    if contents is None:
        return None
    head, comma, body = str(contents).partition(",")
    if not comma or not head.startswith("data:") or not head.endswith(";base64"):
        raise data_store.DataRejected(field, f"{field}: the browser sent the file in a form this page cannot "
                                             "read; choose the file again")
    try:
        return base64.b64decode(body, validate=True)
    except (binascii.Error, ValueError):
        raise data_store.DataRejected(field, f"{field}: the upload is damaged (not base64); choose the file "
                                             "again") from None


def _search(href: str | None) -> str:
    """The query string of the page's address (``?…``, or empty)."""
    query = urllib.parse.urlsplit(href or "").query
    return f"?{query}" if query else ""


def _fit_bounds(items: list) -> dict:
    return {(item["id"]["key"], item["id"]["end"]): item.get("value") for item in items}


def _card_specs(state: codec.LinkState) -> dict:
    return {card["slot"]: card for card in cards(state)}


def _card_body(card) -> list:
    return [model_card(card)] if card is not None else []


def _body_class(card) -> str:
    return BODY_CLASSES["filled"] if card is not None else BODY_CLASSES["empty"]


def _shells(state: codec.LinkState, opened: int | None = None) -> dict:
    """What the slot shells show (read by ``fd.shells`` in layouts/assets/page.js): the filled
    slots, and the one to open (a model just added, copied or given a preset)."""
    return {"filled": list(state.slots()), "open": opened}


def _built_slots(bodies: list[dict], classes: list) -> set[int]:
    """The slots whose card has been built (`bodies`: the ``states_list`` entry of the card
    bodies' ``className``, `classes` their values)."""
    return {item["id"]["slot"] for item, name in zip(bodies, classes) if name == BODY_CLASSES["filled"]}


def _same_json(components, shown) -> bool:
    """Whether `components` are what the page shows (`shown`: the same property as Dash sent
    it back), so that sending them again would redraw nothing."""
    return json.loads(plotly.io.json.to_json_plotly(components)) == shown


def _status(state: codec.LinkState, slot: int) -> list:
    """What slot `slot`'s open card says under its inputs (nothing for an empty slot)."""
    return card_status(card_status_spec(state, slot)) if slot in state.slots() else []


def _reference_options(state: codec.LinkState) -> list[dict]:
    return [{"label": f"m{m.slot}: {m.name}", "value": m.slot} for m in state.models]


def _tools_open(comparison: Comparison) -> bool:
    """The data tools block is open while the link has no measurements it can load (`render`
    builds the block so, `tools_view` keeps it so)."""
    return measurements(comparison)[0] is None


def register(app, tool_options: dict) -> None:
    """Attach every callback to `app` (called by the factory); `tool_options` are the data
    tools' texts and defaults (`layouts.data_panel.data_tools_sections`), built the first time
    the tools are shown open."""

    @app.callback(
        Output(ids.url, "search"),
        Output(ids.card_body(ALL), "children"),
        Output(ids.card_body(ALL), "className"),
        Output(ids.shells, "data"),
        Output(ids.tab, "data"),
        Output(ids.reference, "value"),
        Output(ids.reference, "options"),
        Output(ids.zmax, "value"),
        Output(ids.view(ALL), "value"),
        Input(ids.url, "search"),
        Input(ids.param(ALL, ALL), "value"),
        Input(ids.view(ALL), "value"),
        Input(ids.tab, "data"),
        Input(ids.reference, "value"),
        Input(ids.zmax, "value"),
        Input(ids.add, "n_clicks"),
        Input(ids.remove(ALL), "n_clicks"),
        Input(ids.duplicate(ALL), "n_clicks"),
        Input(ids.preset(ALL), "value"),
        Input(ids.panel_views, "data"),
        State(ids.shells, "data"),
        State(ids.card_body(ALL), "className"),
    )
    def sync(search, _params, _views, tab, reference, zmax, _add, _removes, _duplicates, _presets, panel_views,
             shells, body_classes):
        current = codec.decode(search or "")
        trigger = ctx.triggered_id
        if f"{ids.url}.search" in ctx.triggered_prop_ids:
            # the link itself changed, whatever else is listed: on the first load Dash names the
            # panel controls' store beside the location (both set as the page mounts)
            trigger = ids.url
        elif trigger == ids.panel_views and not panel_views:
            trigger = None  # the store's empty start, not a control's change
        slots = [item["id"]["slot"] for item in ctx.states_list[-1]]
        # the cards built so far (a card is built when its chip first opens it: `build_card`)
        built = _built_slots(ctx.states_list[-1], body_classes)
        view_keys = [item["id"]["key"] for item in ctx.outputs_list[-1]]
        unchanged_views = [no_update] * len(view_keys)
        unchanged_cards = [no_update] * len(slots)
        nothing = (no_update, unchanged_cards, unchanged_cards) + (no_update,) * 5 + (unchanged_views,)

        def cards_for(changed):
            """Bodies and classes of the built cards in `changed` ({slot: card or None})."""
            bodies = [_card_body(changed[k]) if k in changed else no_update for k in slots]
            return bodies, [_body_class(changed[k]) if k in changed else no_update for k in slots]

        def from_link(state, refresh):
            # Back, Forward or a link opened: the views and the built cards in `refresh` show the
            # link's values
            specs = _card_specs(state)
            bodies, classes = cards_for({k: specs.get(k) for k in refresh})
            return (no_update, bodies, classes, _shells(state), state.view.tab,
                    codec.reference_slot(state), _reference_options(state), state.view.value_text("zmax"),
                    [state.view.value_text(k) for k in view_keys])

        def write(old, new, opened=None):
            # only the built cards whose content changed are sent again (and the card to open):
            # text typed in another card stays
            before, after = _card_specs(old), _card_specs(new)
            changed = {k: after.get(k) for k in slots
                       if (k in built or k == opened) and (k not in built or before.get(k) != after.get(k))}
            bodies, classes = cards_for(changed)
            return ("?" + codec.encode(new), bodies, classes, _shells(new, opened), no_update,
                    codec.reference_slot(new), _reference_options(new), no_update, unchanged_views)

        if trigger is None:
            if (shells or {}).get("filled"):
                # inputs were just inserted (a card built, a panel's controls drawn): they were
                # built from the link, and everything else already shows it. Answering with the
                # link again re-rendered the view bar and re-ran the shells' and tabs' clientside
                # callbacks after every panel with controls (DEVELOPERS.md, "Keeping the page fast")
                raise PreventUpdate
            # the page loaded (the shells' store still holds the layout's empty value): the view
            # bar and the tab show the link
            return from_link(current, set())
        if trigger == ids.url:
            return from_link(current, built)
        value = ctx.triggered[0]["value"] if ctx.triggered else None
        button = isinstance(trigger, dict) and trigger.get("type") in ("fd-remove", "fd-duplicate", "fd-preset")
        if button or trigger == ids.add:
            if not value:
                return nothing
            action, slot = (trigger["type"].removeprefix("fd-"), trigger["slot"]) if button else ("add", None)
            new = states.apply_action(current, action, slot, value)
            # open the card of a model just added or copied, or the one a preset was applied to
            added = set(new.slots()) - set(current.slots())
            return write(current, new, min(added) if added else (slot if action == "preset" else None))
        params = [(item["id"], item.get("value")) for item in ctx.inputs_list[1]]
        views = [(item["id"]["key"], item.get("value")) for item in ctx.inputs_list[2]]
        if trigger == ids.panel_views:  # (its empty start was set aside above)
            # a panel's own control (`fd.panelViews` passes on all of that panel's)
            views += [(key, value) for key, value in panel_views.get("pairs", [])]
        new = states.apply_inputs(current, params, views + [("tab", tab), ("ref", reference), ("zmax", zmax)])
        if codec.encode(new) == codec.encode(current):
            return nothing
        # the inputs already show what was typed: only the link and the reference list change
        return ("?" + codec.encode(new), unchanged_cards, unchanged_cards, no_update, no_update, no_update,
                _reference_options(new) if trigger != ids.reference else no_update, no_update, unchanged_views)

    @app.callback(
        Output(ids.card_body(ALL), "children", allow_duplicate=True),
        Output(ids.card_body(ALL), "className", allow_duplicate=True),
        Output(ids.status(ALL), "children", allow_duplicate=True),
        Input(ids.build_card, "data"),
        State(ids.url, "search"),
        prevent_initial_call=True,
    )
    def build_card(request, search):
        """Build a card and its status the first time its chip opens it (``fd.shells`` asks,
        with ``{"slot": n}``; `sync` and `summaries` keep them up to date from then on)."""
        slots = [item["id"]["slot"] for item in ctx.outputs_list[0]]
        state = codec.decode(search or "")
        card = _card_specs(state).get((request or {}).get("slot"))
        if card is None:
            return ([no_update] * len(slots),) * 3
        k = card["slot"]
        return ([_card_body(card) if j == k else no_update for j in slots],
                [_body_class(card) if j == k else no_update for j in slots],
                [_status(state, k) if j == k else no_update for j in slots])

    @app.callback(
        Output(ids.chip(ALL), "children"),
        Output(ids.status(ALL), "children"),
        Output(ids.add, "disabled"),
        Output(ids.add_reason, "children"),
        Input(ids.url, "href"),
        State(ids.chip(ALL), "children"),
        State(ids.card_body(ALL), "className"),
    )
    def summaries(href, shown, bodies):
        """Each slot's chip (sent only when it changed), the status of each built card, and
        whether "+ add model" can act (with the reason)."""
        state = codec.decode(_search(href))
        summary = chips(state)
        slots = [item["id"]["slot"] for item in ctx.states_list[0]]
        built = _built_slots(ctx.states_list[1], bodies)
        full = len(state.models) >= codec.MAX_SLOTS
        new_chips = [chip(summary[k]) if k in summary else [] for k in slots]
        return ([no_update if _same_json(new, old) else new for new, old in zip(new_chips, shown)],
                [_status(state, k) if k in built or k not in summary else no_update for k in slots],
                full, f"all {codec.MAX_SLOTS} slots in use" if full else "")

    # browser-side: chips open their cards, tabs, copy link (layouts/assets/page.js)
    app.clientside_callback(
        ClientsideFunction("fd", "shells"),
        Output(ids.slot(ALL), "className"),
        Output(ids.build_card, "data"),
        Input(ids.chip(ALL), "n_clicks"),
        Input(ids.shells, "data"),
        State(ids.slot(ALL), "className"),
        State(ids.slot(ALL), "id"),
        State(ids.card_body(ALL), "className"),
    )
    app.clientside_callback(
        ClientsideFunction("fd", "expanded"),
        Output(ids.chip(MATCH), "aria-expanded"),
        Input(ids.slot(MATCH), "className"),
    )
    app.clientside_callback(
        ClientsideFunction("fd", "panelViews"),
        Output(ids.panel_views, "data"),
        Input(ids.panel_view(ALL), "value"),
        State(ids.panel_view(ALL), "id"),
        State(ids.panel_shown(ALL), "data"),
        prevent_initial_call=True,
    )
    app.clientside_callback(
        ClientsideFunction("fd", "pickTab"),
        Output(ids.tab, "data", allow_duplicate=True),
        Input(ids.tab_button(ALL), "n_clicks"),
        prevent_initial_call=True,
    )
    app.clientside_callback(
        ClientsideFunction("fd", "tabState"),
        Output(ids.tab_button(ALL), "aria-selected"),
        Output(ids.tab_button(ALL), "tabIndex"),
        Output(ids.tab_button(ALL), "className"),
        Input(ids.tab, "data"),
        State(ids.tab_button(ALL), "id"),
    )
    app.clientside_callback(
        ClientsideFunction("fd", "copy"),
        Output(ids.copy_status, "children"),
        Input(ids.copy, "n_clicks"),
        State(ids.link_text, "value"),
        prevent_initial_call=True,
    )

    @app.callback(
        Output(ids.panel, "children"),
        Output(ids.notice, "children"),
        Output(ids.notice_box, "style"),
        Output(ids.link_text, "value"),
        Output(ids.data_tools, "style"),
        Output(ids.data_tools, "children"),
        Output(ids.data_tools, "className"),
        Output(ids.graph(ALL), "figure"),
        Output(ids.table(ALL), "children"),
        Output(ids.table_row(ALL, ALL), "children"),
        Output(ids.panel_key, "data"),
        Input(ids.url, "href"),
        State(ids.data_tools, "className"),
        State(ids.panel_key, "data"),
    )
    def render(href, tools_class, shown):
        search = _search(href)
        state = codec.decode(search)
        comparison = compare(state)
        try:
            body = panel_body(panel(comparison))
        except Exception as err:  # noqa: BLE001 - one panel failing must leave the page working
            logger.exception("panel %s failed for %r", state.view.tab, search)
            body = panel_body({"blocks": [{"kind": "text", "tone": "error",
                                           "text": f"This panel could not be drawn: {err}"}]})
        # a panel that differs from the one shown in its figures and its tables' contents only (an
        # edit, a unit) keeps its elements: only the figures, grids and rows that changed are sent
        # (the panel key store holds a digest of each drawn), and Plotly redraws figures in place
        plan = in_place(body, shown, [item["id"]["name"] for item in ctx.outputs_list[-4]],
                        [item["id"]["name"] for item in ctx.outputs_list[-3]],  # (a short table's box too)
                        [f"{item['id']['table']}:{item['id']['row']}" for item in ctx.outputs_list[-2]])
        children, redrawn, grid_data, cells, stored = (
            plan[part] for part in ("children", "figures", "grids", "rows", "stored"))
        # dropped keys, and view values that could not be used (the default is drawn instead,
        # while the control still shows what was typed)
        dropped = [p.message for p in state.notices] + [
            f"{p.message} (the default is shown instead)" for p in state.view.problems()]
        box = {"display": "block"} if (dropped or state.unknown) else {"display": "none"}
        base = (href or "").split("?")[0]
        on_data = state.view.tab == "data"
        tools = {"display": "block"} if on_data else {"display": "none"}
        # the data tools' frame is built the first time the Data tab opens, and kept; open, with
        # its sections, while the link has no data (later changes: `tools_view`)
        build = on_data and tools_class != TOOLS_CLASSES["built"]
        frame = no_update
        if build:
            tools_open = _tools_open(comparison)
            frame = data_tools_body(tools_open, data_tools_sections(tool_options) if tools_open else None)
        return (children, notice(list(state.unknown), dropped), box, f"{base}?{codec.encode(state)}", tools,
                frame,
                TOOLS_CLASSES["built"] if build else no_update, redrawn, grid_data, cells, stored)

    @app.callback(
        Output(ids.data_tools_details, "open"),
        Output(ids.data_tools_sections, "children"),
        Output(ids.data_tools_sections, "className"),
        Input(ids.url, "href"),
        Input(ids.data_tools_summary, "n_clicks"),
        State(ids.data_tools_sections, "className"),
        prevent_initial_call=True,
    )
    def tools_view(href, _clicks, sections_class):
        """The data tools block follows the link: open while the link has no measurements it
        can load; once a set is in it, the results come first and the block is closed (React
        only touches the element when this value changes, so a block the reader opened or
        closed stays so while the link keeps or keeps lacking its data). Its sections are built
        the first time it is shown open: by that rule, or by the reader opening it (a click on
        the summary, which the browser itself opens). `render` builds the frame in the state
        this would give it, so this is not called when the frame is inserted (its outputs come
        with it: Dash skips a callback with `prevent_initial_call` then), which saved the Data
        tab a round trip after its figures."""
        if ctx.triggered_id == ids.data_tools_summary:
            tools_open, shown = no_update, True
        else:
            tools_open = _tools_open(compare(codec.decode(_search(href))))
            shown = tools_open
        build = shown and sections_class != SECTIONS_CLASSES["built"]
        return (tools_open, data_tools_sections(tool_options) if build else no_update,
                SECTIONS_CLASSES["built"] if build else no_update)

    @app.callback(
        Output(ids.fit_slot, "options"),
        Output(ids.fit_slot, "value"),
        Input(ids.url, "href"),
        State(ids.fit_slot, "value"),
    )
    def fit_choices(href, fit_slot):
        """The fit's starting models follow the link (Dash first calls this when the sections
        are built)."""
        state = codec.decode(_search(href))
        return _reference_options(state), fit_slot if fit_slot in state.slots() else codec.reference_slot(state)

    @app.callback(
        Output(ids.url, "search", allow_duplicate=True),
        Output(ids.data_message, "children"),
        Output(ids.data_upload, "contents"),
        Output(ids.data_upload, "filename"),
        Output(ids.covariance_upload, "contents"),
        Output(ids.covariance_upload, "filename"),
        Input(ids.data_upload, "contents"),
        Input(ids.data_paste, "n_clicks"),
        Input(ids.data_demo, "n_clicks"),
        State(ids.data_upload, "filename"),
        State(ids.data_text, "value"),
        State(ids.covariance_upload, "contents"),
        State(ids.url, "search"),
        prevent_initial_call=True,
    )
    def store_data(upload, _paste, _demo, filename, text, covariance, search):
        """Store an upload, a pasted table or the demo and put it in the link. A chosen file is
        cleared from its input once used (so choosing the same, corrected, file again loads it
        again); the covariance file too once a set is loaded with it."""
        trigger = ctx.triggered_id
        used = (None, None) if trigger == ids.data_upload else (no_update, no_update)
        search_out, message = _store(trigger, upload, filename, text, covariance, search)
        loaded = search_out is not no_update
        with_covariance = loaded and covariance is not None and trigger in (ids.data_upload, ids.data_paste)
        covariance_used = (None, None) if with_covariance else (no_update, no_update)
        return (search_out, message) + used + covariance_used

    def _store(trigger, upload, filename, text, covariance, search):
        state = codec.decode(search or "")
        try:
            if trigger == ids.data_demo:
                new_search, message = data_tools.store_upload(state, data_store.demo_bytes(), None,
                                                          data_store.DEMO_PATH.name)
            elif trigger == ids.data_paste:
                if not (text or "").strip():
                    return no_update, messages([("error", "pasted table: the box is empty; paste a table with "
                                                          "the header z,kind,value,error first")])
                new_search, message = data_tools.store_upload(
                    state, text, upload_bytes(covariance, "covariance"), "pasted table")
            elif trigger == ids.data_upload and upload is not None:
                new_search, message = data_tools.store_upload(
                    state, upload_bytes(upload, "measurements"), upload_bytes(covariance, "covariance"),
                    str(filename or "uploaded file"))
            else:
                return no_update, no_update
        except data_store.DataError as err:
            return no_update, messages([("error", f"Nothing was loaded. {err}")])
        except Exception as err:  # noqa: BLE001 - a failed upload must leave the page working
            logger.exception("storing measurements failed")
            return no_update, messages([("error", f"Nothing was loaded: the server could not store the "
                                                  f"table ({err.__class__.__name__})")])
        return new_search, messages([("ok", message)])

    @app.callback(
        Output(ids.covariance_name, "children"),
        Input(ids.covariance_upload, "filename"),
        prevent_initial_call=True,
    )
    def covariance_name(filename):
        return f"covariance file chosen: {filename}" if filename else ""

    @app.callback(
        Output(ids.fit_out, "children"),
        Output(ids.fit_store, "data"),
        Input(ids.fit_run, "n_clicks"),
        State(ids.fit_slot, "value"),
        State(ids.fit_free, "value"),
        State(ids.fit_bound(ALL, ALL), "value"),
        State(ids.url, "search"),
        prevent_initial_call=True,
    )
    def run_fit(n_clicks, slot, free, _bounds, search):
        if not n_clicks:
            return no_update, no_update
        state = codec.decode(search or "")
        try:
            fit = data_tools.fit_request(state, slot, list(free or []), _fit_bounds(ctx.states_list[2]))
        except (data_tools.FitRequestError, data_store.DataError, model.ModelError, BudgetExceeded) as err:
            return messages([("error", f"No fit: {err}")]), None
        except Exception as err:  # noqa: BLE001
            logger.exception("fit failed for %r", search)
            return messages([("error", f"No fit: the computation failed ({err})")]), None
        return fit_report(data_tools.fit_report(fit)), fit

    @app.callback(
        Output(ids.fit_run, "disabled"),
        Output(ids.fit_reason, "children"),
        Output(ids.map_run, "disabled"),
        Output(ids.map_reason, "children"),
        Output(ids.fit_load, "disabled"),
        Output(ids.fit_load, "children"),
        Output(ids.fit_load_reason, "children"),
        Input(ids.url, "href"),
        Input(ids.fit_store, "data"),
    )
    def tool_buttons(href, fit):
        """The fit, map and load buttons are enabled only when they can act, the reason beside them."""
        s = data_tools.button_states(codec.decode(_search(href)), fit)
        return bool(s["fit"]), s["fit"], bool(s["map"]), s["map"], bool(s["load"]), s["load_label"], s["load"]

    @app.callback(
        Output(ids.url, "search", allow_duplicate=True),
        Output(ids.fit_load_message, "children"),
        Input(ids.fit_load, "n_clicks"),
        State(ids.fit_store, "data"),
        State(ids.url, "search"),
        prevent_initial_call=True,
    )
    def load_fit(n_clicks, fit, search):
        if not n_clicks or not fit:
            return no_update, no_update
        state = codec.decode(search or "")
        try:
            new = states.with_fit(state, fit)
        except states.TransitionError as err:
            return no_update, messages([("error", str(err))])
        slot = new.view.fit[0]
        return "?" + codec.encode(new), messages([("ok", f"loaded into m{slot}; it is part of the link now")])

    @app.callback(
        Output(ids.map_out, "children"),
        Input(ids.map_run, "n_clicks"),
        State(ids.fit_slot, "value"),
        State(ids.map_x, "value"),
        State(ids.map_y, "value"),
        State(ids.fit_bound(ALL, ALL), "value"),
        State(ids.fit_store, "data"),
        State(ids.url, "search"),
        prevent_initial_call=True,
    )
    def run_map(n_clicks, slot, x_name, y_name, _bounds, fit, search):
        if not n_clicks:
            return no_update
        state = codec.decode(search or "")
        try:
            result = data_tools.map_request(state, slot, x_name, y_name, _fit_bounds(ctx.states_list[3]), fit)
        except (data_tools.FitRequestError, data_store.DataError, model.ModelError, BudgetExceeded) as err:
            return messages([("error", f"No map: {err}")])
        except Exception as err:  # noqa: BLE001
            logger.exception("map failed for %r", search)
            return messages([("error", f"No map: the computation failed ({err})")])
        return map_view(result["spec"], result["notes"])

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
        text = panel_csv(compare(state))
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
        return dcc.send_string(parameter_sets(compare(state)), "friedmann-desk-models.json")
