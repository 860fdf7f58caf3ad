"""The downloads: a panel's numbers as CSV and the models' parameter sets as JSON."""

from __future__ import annotations

import io
import json

import numpy as np

from layouts.text import render
from server import codec, compute
from server.csvsafe import SafeWriter
from server.views.comparison import Comparison
from server.views.page import panel

__all__ = ["panel_csv", "parameter_sets"]


def _is_number(cell) -> bool:
    return isinstance(cell, dict) and "value" in cell


def _data_cell(cell):
    """A table cell as data: a number as its value (the writer prints it in full), text as text."""
    return cell["value"] if _is_number(cell) else render(cell)


def _write_table(writer, block: dict) -> None:
    sections = block.get("sections") or [{"heading": None, "rows": block.get("rows", [])}]
    rows = [row for section in sections for row in section["rows"]]
    header = []
    for i, title in enumerate(block["header"]):
        # units go in the header only: the first number of the column names it
        unit = next((row[i]["unit"] for row in rows if i < len(row) and _is_number(row[i]) and row[i]["unit"]), "")
        header.append(f"{title} [{unit}]" if unit and "[" not in title else title)
    writer.writerow([f"# table: {render(block.get('title', ''))}"])
    writer.writerow(header)
    for section in sections:
        if section["heading"] is not None:
            writer.writerow([f"# {section['heading']}"])
        writer.writerows([_data_cell(cell) for cell in row] for row in section["rows"])


def _write_figure(writer, block: dict) -> None:
    spec = block["spec"]
    title = render(spec["title"])
    groups = [(title, spec["series"])] if block["kind"] == "figure" else [
        (f"{title} / {p['title']}", p["series"]) for p in spec["panels"]]
    if block["kind"] == "figure" and spec.get("strip"):
        groups.append((f"{title} / {spec['strip']['y_title']}", spec["strip"]["series"]))
    if block["kind"] == "figure" and spec.get("points"):
        groups.append((f"{title} / measurements", spec["points"]))
    writer.writerow([f"# figure: {title}"])
    writer.writerow(["curve", "series", spec.get("x_title", "x"), spec.get("y_title", "y")])
    for curve, series in groups:
        for s in series:
            name = render(s["name"])
            writer.writerows([curve, name, x, y] for x, y in zip(np.asarray(s["x"], dtype=float).tolist(),
                                                                np.asarray(s["y"], dtype=float).tolist()))


def panel_csv(c: Comparison, tab: str | None = None) -> str:
    """CSV of everything a panel shows, as data a spreadsheet reads: each figure's curves and each
    table under a ``# figure:`` / ``# table:`` line with a header row of its own (units in the
    header only), numbers in full precision as plain ASCII, text that a spreadsheet would run as
    a formula neutralised (`server.csvsafe`); a grouped table's rows under ``# <heading>``."""
    out = io.StringIO()
    writer = SafeWriter(out)
    writer.writerow(["# Friedmann Desk", f"panel={tab or c.state.view.tab}", f"link=?{codec.encode(c.state)}"])
    for block in panel(c, tab)["blocks"]:
        if block["kind"] == "table":
            _write_table(writer, block)
        elif block["kind"] in ("figure", "multiples"):
            _write_figure(writer, block)
    return out.getvalue()


def parameter_sets(c: Comparison) -> str:
    """JSON of every model's inputs and resolved parameters, with the canonical link."""
    models = []
    for m in c.state.models:
        entry = next((e for e in c.entries if e.slot == m.slot), None)
        models.append({
            "slot": m.slot, "label": m.label, "link_inputs": dict(m.physical()),
            "resolved": entry.curves["params"] if entry else None,
            "error": c.failures[m.slot].message if m.slot in c.failures else None,
        })
    return json.dumps(compute.json_ready({"version": codec.SCHEME_VERSION, "query": codec.encode(c.state),
                                          "reference": codec.reference_slot(c.state), "models": models}),
                      indent=2, ensure_ascii=False)
