"""Every component id on the page comes from here (pattern-matching ids for per-slot parts)."""

import json


def dom_id(value) -> str:
    """The id a component has in the page's DOM: a dict id is written as JSON with sorted keys
    and no spaces (how Dash stringifies it), which is what a label's ``for=`` must name."""
    if isinstance(value, dict):
        return json.dumps(value, sort_keys=True, separators=(",", ":"))
    return str(value)


class _Ids:
    url = "fd-url"
    cards = "fd-cards"
    shells = "fd-shells"
    build_card = "fd-build-card"
    add = "fd-add"
    add_reason = "fd-add-reason"
    copy_status = "fd-copy-status"
    tab = "fd-tab"
    zmax = "fd-zmax"
    panel = "fd-panel"
    panel_key = "fd-panel-key"
    panel_views = "fd-panel-views"  # what a panel's own control was set to (`fd.panelViews`)
    notice = "fd-notice"
    notice_close = "fd-notice-close"
    notice_box = "fd-notice-box"
    copy = "fd-copy"
    link_text = "fd-link-text"
    reference = "fd-reference"
    download_params = "fd-download-params"
    download_params_file = "fd-download-params-file"
    download_panel = "fd-download-panel"
    download_panel_file = "fd-download-panel-file"
    # data panel tools (always in the page, shown on the data tab)
    data_tools = "fd-data-tools"
    data_tools_details = "fd-data-tools-details"
    data_tools_summary = "fd-data-tools-summary"
    data_tools_sections = "fd-data-tools-sections"
    format_link = "fd-format-link"
    data_upload = "fd-data-upload"
    covariance_upload = "fd-cov-upload"
    covariance_name = "fd-cov-name"
    data_text = "fd-data-text"
    data_paste = "fd-data-paste"
    data_demo = "fd-data-demo"
    data_message = "fd-data-message"
    fit_slot = "fd-fit-slot"
    fit_free = "fd-fit-free"
    fit_run = "fd-fit-run"
    fit_out = "fd-fit-out"
    fit_store = "fd-fit-store"
    fit_load = "fd-fit-load"
    fit_load_message = "fd-fit-load-message"
    fit_reason = "fd-fit-reason"
    fit_load_reason = "fd-fit-load-reason"
    map_reason = "fd-map-reason"
    map_x = "fd-map-x"
    map_y = "fd-map-y"
    map_run = "fd-map-run"
    map_out = "fd-map-out"
    catalogue_models = "fd-catalogue-models"
    catalogue_run = "fd-catalogue-run"
    catalogue_message = "fd-catalogue-message"

    @staticmethod
    def fit_bound(name: str, end: str) -> dict:
        """Bound input of a fit parameter: `end` is ``"low"`` or ``"high"``."""
        return {"type": "fd-fit-bound", "key": name, "end": end}

    @staticmethod
    def param(slot: int, key: str) -> dict:
        return {"type": "fd-param", "slot": slot, "key": key}

    @staticmethod
    def view(key: str) -> dict:
        """A view key's control in the view bar (always in the page)."""
        return {"type": "fd-view", "key": key}

    @staticmethod
    def panel_shown(name: str) -> dict:
        """The values a panel's controls were built with (a store beside them; a pattern id, so
        that a panel without controls leaves an empty list, not a missing id, to `fd.panelViews`)."""
        return {"type": "fd-panel-shown", "name": name}

    @staticmethod
    def panel_view(key: str) -> dict:
        """A view key's control drawn with a panel (its unit, its model, its bins)."""
        return {"type": "fd-panel-view", "key": key}

    @staticmethod
    def slot(slot: int) -> dict:
        """The static shell of a slot (chip and card popover)."""
        return {"type": "fd-slot", "slot": slot}

    @staticmethod
    def chip(slot: int) -> dict:
        return {"type": "fd-chip", "slot": slot}

    @staticmethod
    def card_body(slot: int) -> dict:
        return {"type": "fd-card-body", "slot": slot}

    @staticmethod
    def tab_button(key: str) -> dict:
        return {"type": "fd-tab-button", "key": key}

    @staticmethod
    def status(slot: int) -> dict:
        return {"type": "fd-status", "slot": slot}

    @staticmethod
    def remove(slot: int) -> dict:
        return {"type": "fd-remove", "slot": slot}

    @staticmethod
    def duplicate(slot: int) -> dict:
        return {"type": "fd-duplicate", "slot": slot}

    @staticmethod
    def graph(name: str) -> dict:
        """A figure of the open panel (`name`: its block's id without ``fd-fig-``; a small plot of
        a set, one per model, adds ``-<slot>``)."""
        return {"type": "fd-graph", "name": name}

    @staticmethod
    def table(name: str) -> dict:
        """A table of the open panel (`name`: ``t`` and its place among the panel's tables)."""
        return {"type": "fd-table", "name": name}

    @staticmethod
    def table_row(table: str, row: int) -> dict:
        """A body row of a short (plain HTML) table of the open panel: `table` is its
        `table` name, `row` its place in the body (0 first)."""
        return {"type": "fd-row", "table": table, "row": row}

    @staticmethod
    def preset(slot: int) -> dict:
        return {"type": "fd-preset", "slot": slot}


ids = _Ids()
