"""The downloads: a panel's numbers as CSV and the models' parameter sets as JSON."""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np

from layouts.text import render
from server import codec, compute
from server.views.comparison import Comparison
from server.views.page import panel

__all__ = ["panel_csv", "parameter_sets"]


def _write_table(writer, block: dict) -> None:
    writer.writerow([f"# table: {render(block.get('title', ''))}"])
    writer.writerow(block["header"])
    sections = block.get("sections") or [{"heading": None, "rows": block.get("rows", [])}]
    for section in sections:
        if section["heading"] is not None:
            writer.writerow([f"# {section['heading']}"])
        writer.writerows([render(cell) for cell in row] for row in section["rows"])


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
            for x, y in zip(np.asarray(s["x"], dtype=float), np.asarray(s["y"], dtype=float)):
                writer.writerow([curve, name, f"{x:.6g}", "" if not math.isfinite(y) else f"{y:.6g}"])


def panel_csv(c: Comparison, tab: str | None = None) -> str:
    """Long-format CSV of everything a panel shows: figure curves and tables (a grouped table's
    rows under ``# <heading>`` lines), cells written as on screen."""
    out = io.StringIO()
    writer = csv.writer(out)
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
