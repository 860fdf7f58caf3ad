"""How layouts draws a table block: a short one (a row per model) as a plain HTML table with
row and column headers, a long one as an AG Grid; both with the same cells, the numbers written
with their digits and unit, and each model's column marked with its colour."""

from __future__ import annotations

import dash_ag_grid as dag
from dash import html

from layouts.palette import slot_colour
from layouts.tables import PLAIN_ROWS, table


def _nodes(node, kind):
    """Every component of type `kind` under `node`, in document order."""
    out = [node] if isinstance(node, kind) else []
    kids = getattr(node, "children", None)
    for child in kids if isinstance(kids, (list, tuple)) else [kids]:
        if child is not None and not isinstance(child, (str, int, float)):
            out += _nodes(child, kind)
    return out


def _text(node) -> str:
    kids = node.children
    return "".join(kids) if isinstance(kids, (list, tuple)) else str(kids)


HEADER = ["model", "age today", "z acceleration begins"]


def _rows(n: int) -> list[list]:
    return [[f"model {i}", {"value": 13.7969 + i, "unit": "Gyr", "digits": 5}, {"value": -0.6310001 * i, "digits": 4}]
            for i in range(n)]


def test_a_short_table_is_plain_html_with_row_and_column_headers():
    block = table(HEADER, _rows(4), column_slots=[None, 2, 3])
    grid = _nodes(block, dag.AgGrid)
    assert not grid and block.className == "fd-table"
    heads = _nodes(_nodes(block, html.Thead)[0], html.Th)
    assert [_text(th) for th in heads] == HEADER and {th.scope for th in heads} == {"col"}
    # the model columns' header rule is in their slot's colour, the naming column's is grey
    assert slot_colour(2) in heads[1].style["borderBottom"] and slot_colour(3) in heads[2].style["borderBottom"]
    assert slot_colour(2) not in heads[0].style["borderBottom"]
    body = _nodes(block, html.Tbody)[0].children
    assert len(body) == 4
    for i, tr in enumerate(body):
        name, *cells = tr.children
        assert isinstance(name, html.Th) and name.scope == "row" and _text(name) == f"model {i}"
        # the digits are Python's own "g" format of the value (the minus typographic, the unit after it)
        assert [_text(td) for td in cells] == [f"{13.7969 + i:.5g} Gyr", f"{-0.6310001 * i:.4g}".replace("-", "−")]
        assert all(isinstance(td, html.Td) and td.className == "fd-num" for td in cells)


def test_a_table_in_sections_heads_each_section_with_a_cell_spanning_its_rows():
    sections = [{"heading": "distances", "rows": _rows(3)}, {"heading": "ages", "rows": _rows(2)}]
    block = table(HEADER, sections=sections)
    heads = _nodes(_nodes(block, html.Thead)[0], html.Th)
    assert len(heads) == len(HEADER) + 1  # a blank header over the section column
    spans = [th for th in _nodes(block, html.Th) if th.scope == "rowgroup"]
    assert [(_text(th), th.rowSpan) for th in spans] == [("distances", 3), ("ages", 2)]
    rows = _nodes(block, html.Tbody)[0].children
    assert len(rows) == 5 and rows[0].children[0] is spans[0] and rows[3].children[0] is spans[1]


def test_a_long_table_is_one_grid_with_the_same_cells():
    n = PLAIN_ROWS + 1
    block = table(HEADER, _rows(n), column_slots=[None, 1])
    assert not _nodes(block, html.Table)
    (grid,) = _nodes(block, dag.AgGrid)
    assert [c["headerName"] for c in grid.columnDefs] == HEADER
    assert len(grid.rowData) == n
    assert grid.rowData[3] == {"c0": "model 3", "c1": f"{16.7969:.5g} Gyr", "c2": f"{-1.8930003:.4g}".replace("-", "−")}
    assert slot_colour(1) in grid.columnDefs[1]["headerStyle"]["borderBottom"]
    # the limit is on rows: the last short table is plain
    assert _nodes(table(HEADER, _rows(PLAIN_ROWS)), html.Table)
