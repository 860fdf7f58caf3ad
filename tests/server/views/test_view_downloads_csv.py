"""Every panel's CSV is data a spreadsheet can read: csv parses it, each figure's x and y and
every table number read back with float() (units only in the headers, no typographic minus),
and a label typed as a formula arrives as text (OWASP, "CSV Injection")."""

from __future__ import annotations

import csv
import io
import math

import pytest

from server import codec, tabs
from server.views.comparison import compare
from server.views.downloads import panel_csv

QUERY = ("m1.label=%3DHYPERLINK(%22http%3A//x%22%2C%22y%22)&m1.h0=70&m2.label=%2B1%2B1&m2.w0=-0.9"
         "&m3.label=Plain&m3.ok=-0.05&z=0.1,1,3")


def _sections(rows):
    """(kind, title, header, data rows) for each '# figure:' / '# table:' section."""
    out, current = [], None
    for row in rows[1:]:
        if row and row[0].startswith(("# figure: ", "# table: ")):
            kind, _, title = row[0][2:].partition(": ")
            current = [kind, title, None, []]
            out.append(current)
        elif current is not None and current[2] is None:
            current[2] = row
        elif current is not None and row and not row[0].startswith("# "):
            current[3].append(row)
    return out


@pytest.mark.parametrize("tab", [t for t in tabs.TAB_KEYS if t != "data"])
def test_panel_csv_is_data(ctx, tab):
    text = panel_csv(compare(codec.decode(QUERY)), tab)
    assert text.isascii() or "−" not in text
    rows = list(csv.reader(io.StringIO(text)))
    sections = _sections(rows)
    assert sections, text[:500]
    numbers = 0
    for kind, title, header, data in sections:
        for row in data:
            assert len(row) == len(header), (title, header, row)
            cells = row[2:] if kind == "figure" else row[1:]
            for cell in cells:
                if cell == "" or cell in ("–",) or not cell[:1].isdigit() and cell[:1] not in "-.":
                    continue  # a gap, or a text cell (a model name, a fate)
                value = float(cell)  # a number: plain ASCII, no unit attached
                assert math.isfinite(value)
                numbers += 1
    assert numbers > 0
    # labels that look like formulas are text, not formulas
    for row in rows:
        for cell in row:
            assert not cell.startswith(("=", "+", "@")), cell
    assert "'=HYPERLINK" in text and "'+1+1" in text
