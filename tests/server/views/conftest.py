"""Shared set-up of the view tests: an app (its cache backs the memo layer) in a request
context, a panel built from a link, and a table's rows as the page shows them."""

from __future__ import annotations

import pytest

from layouts.text import render
from server import codec
from server.views.comparison import compare
from server.views.page import panel


@pytest.fixture
def ctx(app_factory):
    app = app_factory(CACHE_TYPE="SimpleCache")
    with app.server.test_request_context():
        yield


@pytest.fixture
def open_panel(ctx):
    """``open_panel(query, tab=None)`` -> the `PanelSpec` of the link's (or `tab`'s) panel."""
    def build(query: str, tab: str | None = None):
        return panel(compare(codec.decode(query)), tab)
    return build


def _shown(rows):
    return [[render(cell) for cell in row] for row in rows]


@pytest.fixture
def table_text():
    """``table_text(panel_spec, title)`` -> that table's rows as text (sections flattened)."""
    def find(spec, title: str) -> list[list[str]]:
        block = next(b for b in spec["blocks"] if b["kind"] == "table" and render(b["title"]) == title)
        if "sections" in block:
            return [row for s in block["sections"] for row in _shown(s["rows"])]
        return _shown(block["rows"])
    return find
