"""Plain HTML tables (text only: every cell is a string child, never markup)."""

from __future__ import annotations

from dash import html


def table(header: list[str], rows: list[list], class_name: str = "fd-table", colours: list | None = None):
    """`header` strings; `rows` of strings. `colours` optionally tints header cells (per column)."""
    head = [html.Th(h, style={"borderBottomColor": colours[i]} if colours and colours[i] else None)
            for i, h in enumerate(header)]
    return html.Table(className=class_name, children=[
        html.Thead(html.Tr(head)),
        html.Tbody([html.Tr([html.Td(cell) for cell in row]) for row in rows]),
    ])
