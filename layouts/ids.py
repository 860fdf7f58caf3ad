"""Every component id on the page comes from here (pattern-matching ids for per-slot parts)."""


class _Ids:
    url = "fd-url"
    cards = "fd-cards"
    add = "fd-add"
    tab = "fd-tab"
    zmax = "fd-zmax"
    panel = "fd-panel"
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

    @staticmethod
    def param(slot: int, key: str) -> dict:
        return {"type": "fd-param", "slot": slot, "key": key}

    @staticmethod
    def view(key: str) -> dict:
        return {"type": "fd-view", "key": key}

    @staticmethod
    def card(slot: int) -> dict:
        return {"type": "fd-card", "slot": slot}

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
    def preset(slot: int) -> dict:
        return {"type": "fd-preset", "slot": slot}


ids = _Ids()
