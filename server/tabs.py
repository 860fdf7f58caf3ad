"""The tab registry: every panel of the page, once (key, title, builder).

The link accepts ``tab=<key>`` for each key here, the page shows the tabs in this order with
these titles, and the panel callback calls the builder. Builders are named by module and
function and imported on first use, so reading a link (`server.fields`, `server.codec`) never
loads the panel code, the cache or Dash.

Adding a panel: one `Tab` row here and one builder module (see DEVELOPERS.md).
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from typing import Callable

__all__ = ["Tab", "TABS", "TAB_KEYS", "TAB_TITLES", "tab"]


@dataclass(frozen=True)
class Tab:
    """One panel: its link key, its title on screen, and ``module:function`` of its builder
    (``builder(comparison) -> layouts.specs.PanelSpec``)."""

    key: str
    title: str
    builder_path: str

    @property
    def builder(self) -> Callable:
        module, _, name = self.builder_path.partition(":")
        return getattr(importlib.import_module(module), name)


TABS: tuple[Tab, ...] = (
    Tab("budget", "Energy budget", "server.views.budget:build"),
    Tab("distances", "Distances", "server.views.distances:build"),
    Tab("time", "Time", "server.views.time:build"),
    Tab("growth", "Growth", "server.views.growth:build"),
    Tab("volume", "Volume", "server.views.volume:build"),
    Tab("acoustic", "Acoustic scales", "server.views.acoustic:build"),
    Tab("table", "Table", "server.views.table:build"),
    Tab("data", "Data", "server.views.data:build"),
)
TAB_KEYS = tuple(t.key for t in TABS)
TAB_TITLES = {t.key: t.title for t in TABS}
_BY_KEY = {t.key: t for t in TABS}


def tab(key: str) -> Tab:
    """The registered tab `key` (KeyError for an unknown key)."""
    return _BY_KEY[key]
