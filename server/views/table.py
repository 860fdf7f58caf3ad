"""The table panel: the inverse look-up (the redshift where a quantity takes a value) and every
registered quantity at the link's redshifts, grouped by theme (`model.THEMES`)."""

from __future__ import annotations

import numpy as np

import model
from layouts.specs import PanelSpec, TableSection
from server import codec, compute
from server.cache import fetch_many
from server.views.comparison import Comparison, key_of, num
from server.views.parts import failures_note, view_control, with_unit

__all__ = ["build", "table_header", "table_sections"]


def table_header(c: Comparison) -> tuple[list[str], list[int | None]]:
    """The header of the quantity table and the model slot of each column: per model its values,
    then (except the reference) the ratio to the reference."""
    ref_name = c.reference.name if c.reference else "reference"
    header, slots = ["quantity [unit]", "z"], [None, None]
    for e in c.entries:
        header.append(e.name)
        slots.append(e.slot)
        if e is not c.reference:
            header.append(f"{e.name} / {ref_name}")
            slots.append(None)
    return header, slots


def table_sections(c: Comparison) -> list[TableSection]:
    """Every quantity of `model.QUANTITIES` at the link's redshifts, one section per theme in
    the order and with the headings of `model.THEMES` (empty themes left out)."""
    view = c.state.view
    values = dict(zip((e.slot for e in c.entries), fetch_many(
        compute.values_at, [(key_of(c, e.slot), view.redshifts) for e in c.entries])))
    z_cells = [num(z) for z in view.redshifts]
    by_theme: dict[str, list] = {theme: [] for theme in model.THEMES}
    with np.errstate(all="ignore"):
        for key, q in model.QUANTITIES.items():
            ref = np.asarray(values[c.reference.slot][key], dtype=float) if c.reference else None
            columns = []  # per model: its values, then (except the reference) the ratio to the reference
            for e in c.entries:
                v = np.asarray(values[e.slot][key], dtype=float)
                columns.append(v.tolist())
                if e is not c.reference:
                    columns.append(np.where(ref != 0, v / np.where(ref != 0, ref, 1.0), np.nan).tolist())
            name = with_unit(q.symbol, q.unit)
            by_theme[q.theme].extend([name, z_cells[i], *(num(col[i]) for col in columns)]
                                     for i in range(len(z_cells)))
    return [{"heading": heading, "rows": by_theme[theme]} for theme, heading in model.THEMES.items()
            if by_theme[theme]]


def build(c: Comparison) -> PanelSpec:
    view = c.state.view
    quantity = view.inverse_quantity
    q = model.QUANTITIES[quantity]
    controls = [
        view_control(c, "z", "redshifts (comma-separated)",
                     f"up to {codec.MAX_TABLE_REDSHIFTS} values, {codec.Z_MIN:g} ≤ z ≤ {codec.Z_MAX:g}"),
        {"key": "iq", "kind": "dropdown", "label": "inverse look-up: quantity", "value": quantity,
         "options": [{"label": with_unit(model.QUANTITIES[k].description, model.QUANTITIES[k].unit),
                      "value": k} for k in codec.invertible()]},
        view_control(c, "iv", with_unit("value", q.unit), "0 ≤ value"),
    ]
    found = fetch_many(compute.inverse_lookup, [(key_of(c, e.slot), quantity, view.inverse_value)
                                                 for e in c.entries])
    header, column_slots = table_header(c)
    blocks = [
        {"kind": "table", "title": [f"Redshift where {q.description} = ", num(view.inverse_value, 6, q.unit)],
         "header": ["model", "z (– where none)"],
         "rows": [[e.name, num(z)] for e, z in zip(c.entries, found)]},
        {"kind": "table", "title": "Every quantity at the link's redshifts", "header": header,
         "sections": table_sections(c), "column_slots": column_slots},
    ]
    return {"controls": controls, "blocks": blocks + failures_note(c)}
