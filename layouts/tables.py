"""Tables from `layouts.specs.TableBlock`-shaped data (text only: cells are plain strings or
`Number`s written by `layouts.text.render`, never markup).

A short table (at most `PLAIN_ROWS` rows: one row per model, as most panels have) is a plain
HTML table. A longer one is one AG Grid component fed with its rows as data: as HTML the Table
panel's quantities at the link's redshifts (about 90 rows) would be about 800 ``html.Td``
components, which dominated the server's time for a cached update, while a grid costs about the
same for any size. The grid is not used for every table because starting it in the browser costs
more than a short table's few dozen cells: on the Energy budget panel (four models, one 4-row
table) the plain table drew the panel 0.08–0.14 s sooner in two back-to-back comparisons
(DEVELOPERS.md, "Keeping the page fast").
A table in sections (rows under headings) shows each heading in a first column spanning its rows.

A plain table given an id has an id on each body row too (`ids.table_row`), so that an edit that
changes one model's row sends that row only: Dash builds every component under a changed
``children`` afresh, and the Energy budget's 58 cells, rebuilt for each edit, took the edit's
redraw about a quarter of its time (DEVELOPERS.md, "Keeping the page fast").
"""

from __future__ import annotations

import dash_ag_grid as dag
from dash import html

from layouts.ids import ids
from layouts.palette import slot_colour
from layouts.text import render

__all__ = ["table", "PLAIN_ROWS"]

_ROW_HEIGHT = 26
_SECTION = "section"
PLAIN_ROWS = 16


# Column widths are set here from the longest text, not measured by the grid in the browser
# (its "autoSize" reads the size of every cell, which took most of the Table tab's drawing time):
# em widths of the page's sans-serif at the grid's 13 px, a little generous (a digit of DejaVu
# Sans, the widest common fallback, is 0.636 em; bold text about 10 % wider), plus the padding.
_FONT_PX, _EM_TEXT, _EM_BOLD, _PADDING_PX = 13, 0.64, 0.71, 2 * 8 + 6


def _width(header: str, cells: list[str]) -> int:
    """Pixels for a column holding `cells` under the bold `header`."""
    longest = max([len(c) * _EM_TEXT for c in cells] + [len(header) * _EM_BOLD], default=0)
    return int(round(longest * _FONT_PX + _PADDING_PX))


def _header_style(slot) -> dict:
    """The header's rule under each column; a model's column in its slot's colour."""
    return {"borderBottom": f"3px solid {'#888' if slot is None else slot_colour(slot)}"}


def _grid(header: list[str], sections: list[tuple[str | None, list[list[str]]]], column_slots: list) -> dag.AgGrid:
    fields = [f"c{i}" for i in range(len(header))]
    # the first column names the row (left), the others hold numbers (right-aligned)
    columns = [{"headerName": h, "field": f, "headerStyle": _header_style(slot)}
               for h, f, slot in zip(header, fields, column_slots)]
    for column in columns[1:]:
        column["type"] = "rightAligned"
    grouped = any(heading is not None for heading, _ in sections)
    if grouped:
        columns.insert(0, {"headerName": "", "field": _SECTION, "spanRows": True,
                           "cellStyle": {"fontWeight": "bold"}})
    data = [{**({_SECTION: heading} if grouped else {}), **dict(zip(fields, row))}
            for heading, rows in sections for row in rows]
    for column in columns:
        cells = [str(row.get(column["field"], "")) for row in data]
        column["width"] = _width(column["headerName"], cells)
    return dag.AgGrid(
        className="fd-grid", columnDefs=columns, rowData=data,
        defaultColDef={"sortable": False, "resizable": False, "suppressMovable": True, "filter": False},
        dashGridOptions={"domLayout": "autoHeight", "enableCellSpan": grouped, "rowHeight": _ROW_HEIGHT,
                         "headerHeight": _ROW_HEIGHT + 4, "suppressColumnVirtualisation": True,
                         "suppressRowVirtualisation": True, "suppressCellFocus": True,
                         "enableCellTextSelection": True},
        style={"width": "100%"})


def _plain(header: list[str], sections: list[tuple[str | None, list[list[str]]]], column_slots: list,
           name: str | None = None) -> html.Table:
    """The same table as `_grid` draws, as HTML: the first cell of each row names it (a row
    header), the others hold numbers (right-aligned, ``fd-num``); a section's heading is a row
    header spanning its rows. With a `name`, each body row has the id ``ids.table_row(name, k)``."""
    grouped = any(heading is not None for heading, _ in sections)
    head = [html.Th(h, scope="col", style=_header_style(slot), className="fd-num" if i else None)
            for i, (h, slot) in enumerate(zip(header, column_slots))]
    if grouped:
        head.insert(0, html.Th("", scope="col", style=_header_style(None)))
    rows = []
    for heading, cells in sections:
        for k, row in enumerate(cells):
            lead = [html.Th(heading, scope="rowgroup", rowSpan=len(cells))] if grouped and k == 0 else []
            line = lead + [html.Th(row[0] if row else "", scope="row")] + [
                html.Td(cell, className="fd-num") for cell in row[1:]]
            rows.append(html.Tr(line, **({"id": ids.table_row(name, len(rows))} if name else {})))
    return html.Table([html.Thead(html.Tr(head)), html.Tbody(rows)], className="fd-plain")


def table(header: list[str], rows: list[list] | None = None, sections: list[dict] | None = None,
          column_slots: list | None = None, ident: dict | None = None) -> html.Div:
    """`header` strings; `rows` of cells, or `sections` (``[{"heading", "rows"}]``).
    `column_slots` marks the header of a model's column with its colour; `ident`, the box's id."""
    slots = list(column_slots or []) + [None] * (len(header) - len(column_slots or []))
    parts = [(s["heading"], [[render(cell) for cell in row] for row in s["rows"]]) for s in sections] \
        if sections else [(None, [[render(cell) for cell in row] for row in rows or []])]
    short = sum(len(rows) for _, rows in parts) <= PLAIN_ROWS
    body = _plain(header, parts, slots, ident.get("name") if ident else None) if short else _grid(header, parts, slots)
    return html.Div(className="fd-table", children=body, **({"id": ident} if ident else {}))
