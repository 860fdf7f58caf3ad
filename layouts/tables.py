"""Tables as one `dash_table.DataTable` each (text only: cells are plain strings, never markup).

One component per table instead of one per cell: the 85-row table at the link's redshifts used
to be about 800 `html.Td` components, which dominated the server's time for a cached update.
"""

from __future__ import annotations

from dash import dash_table, html

__all__ = ["table"]

_CELL = {"textAlign": "right", "padding": "3px 8px", "fontFamily": "inherit", "fontSize": "13px",
         "border": "none", "borderBottom": "1px solid #ddd", "whiteSpace": "nowrap"}
_HEADER = {"fontWeight": "bold", "backgroundColor": "white", "borderBottom": "3px solid #888"}


def table(header: list[str], rows: list[list], class_name: str = "fd-table", colours: list | None = None):
    """`header` strings; `rows` of strings. `colours` optionally tints header cells (per column)."""
    column_ids = [f"c{i}" for i in range(len(header))]
    first = column_ids[:1]
    header_styles = [{"if": {"column_id": cid}, "borderBottomColor": colours[i]}
                     for i, cid in enumerate(column_ids) if colours and i < len(colours) and colours[i]]
    return html.Div(className=class_name, children=dash_table.DataTable(
        columns=[{"name": str(h), "id": cid, "type": "text"} for h, cid in zip(header, column_ids)],
        data=[dict(zip(column_ids, map(str, row))) for row in rows],
        style_as_list_view=True,
        style_table={"overflowX": "auto"},
        style_cell=_CELL,
        style_header=_HEADER,
        style_cell_conditional=[{"if": {"column_id": cid}, "textAlign": "left"} for cid in first],
        style_header_conditional=header_styles,
        page_action="none",
        sort_action="none",
        editable=False,
        cell_selectable=False,
    ))
