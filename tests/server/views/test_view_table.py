"""The table panel and the downloads: every registered quantity at the link's redshifts, grouped
by theme under `model.THEMES`' headings (on screen and in the CSV), values against
model.evaluate called directly; the inverse look-up against the quantity it inverts."""

from __future__ import annotations

import csv
import io
import json

import numpy as np
import pytest

import model
from layouts.text import number
from server import codec
from server.views.comparison import compare
from server.views.downloads import panel_csv, parameter_sets

QUERY = "m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.h0=70&m2.om=0.3&m2.w0=-0.9&z=0.5,2&tab=table&iq=age&iv=4"
A = model.Cosmology(h0=70.0, omega_m=0.3)
B = model.Cosmology(h0=70.0, omega_m=0.3, w0=-0.9)
Z = np.array([0.5, 2.0])


def _name(q):
    return f"{q.symbol} [{q.unit}]" if q.unit else q.symbol  # no bracket when dimensionless


def _quantity_table(spec):
    return next(b for b in spec["blocks"] if b.get("title") == "Every quantity at the link's redshifts")


def test_rows_grouped_by_theme_in_the_registry_order(open_panel):
    block = _quantity_table(open_panel(QUERY))
    themes_present = [t for t in model.THEMES if any(q.theme == t for q in model.QUANTITIES.values())]
    assert [s["heading"] for s in block["sections"]] == [model.THEMES[t] for t in themes_present]
    for theme, section in zip(themes_present, block["sections"]):
        expected = [_name(q) for q in model.QUANTITIES.values() if q.theme == theme for _ in Z]
        assert [row[0] for row in section["rows"]] == expected
    assert block["header"] == ["quantity [unit]", "z", "A", "B", "B / A"]
    assert block["column_slots"] == [None, None, 1, 2, None]


def test_cells_are_the_models_values_and_ratios(open_panel, table_text):
    rows = table_text(open_panel(QUERY), "Every quantity at the link's redshifts")
    va, vb = model.evaluate(A, Z), model.evaluate(B, Z)
    for key in ("luminosity_distance", "age", "hubble_parameter", "comoving_volume"):
        mine = [r for r in rows if r[0] == _name(model.QUANTITIES[key])]
        assert [r[1] for r in mine] == [number(z, 6) for z in Z]
        assert [r[2] for r in mine] == [number(v, 6) for v in va[key]]
        assert [r[3] for r in mine] == [number(v, 6) for v in vb[key]]
        assert [r[4] for r in mine] == [number(v, 6) for v in vb[key] / va[key]]


def test_inverse_look_up_finds_the_redshift_of_the_value(open_panel, table_text):
    spec = open_panel(QUERY)
    rows = table_text(spec, f"Redshift where {model.QUANTITIES['age'].description} = 4 Gyr")
    assert [r[0] for r in rows] == ["A", "B"]
    for row, cosmo in zip(rows, (A, B)):
        z = float(row[1].replace("−", "-"))
        assert float(model.evaluate(cosmo, z)["age"]) == pytest.approx(4.0, rel=1e-5)  # 6 digits of z


def test_csv_carries_the_theme_headings_before_their_rows(ctx):
    text = panel_csv(compare(codec.decode(QUERY)))
    rows = list(csv.reader(io.StringIO(text)))
    start = rows.index(["# table: Every quantity at the link's redshifts"])
    headings = [r[0][2:] for r in rows[start + 2:] if r and r[0].startswith("# ")]
    themes_present = [h for t, h in model.THEMES.items() if any(q.theme == t for q in model.QUANTITIES.values())]
    assert headings == themes_present
    # the row after a heading is that theme's first quantity at the first redshift
    first = rows.index([f"# {model.THEMES['times']}"]) + 1
    key = next(k for k, q in model.QUANTITIES.items() if q.theme == "times")
    assert rows[first][0] == _name(model.QUANTITIES[key]) and float(rows[first][1]) == Z[0]
    # the CSV is data: the number in full, as model.evaluate gives it
    assert float(rows[first][2]) == pytest.approx(float(model.evaluate(A, Z[0])[key]), rel=1e-12)


def test_parameter_sets_read_back_as_the_same_link(ctx):
    state = codec.decode(QUERY)
    sets = json.loads(parameter_sets(compare(state)))
    assert codec.decode(sets["query"]) == state and sets["version"] == codec.SCHEME_VERSION
    assert [m["label"] for m in sets["models"]] == ["A", "B"]
    assert sets["models"][1]["resolved"]["w0"] == -0.9 and sets["models"][1]["error"] is None
    # flat by default: Ω_de closes the budget, 1 - Ω_m - Ω_r (Friedmann equation at z = 0)
    resolved = sets["models"][0]["resolved"]
    assert resolved["omega_de"] == pytest.approx(1 - 0.3 - resolved["omega_r"], rel=1e-12)
