"""The growth panel, the s8 link key, and growth in the Table panel, its CSV, the API's `at`
block and the catalogue columns (all read the quantity registry).

Check values: curves against `model.evaluate` called directly (6 significant digits, the
curves' rounding); the growth index against Linder (2005, PRD 72, 043529): γ ≈ 0.55 for flat
ΛCDM, here within 0.01 at z ≤ 2 (the published fit is good to a few 1e-3 there).
"""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest

import model
from server import codec
from server.views.comparison import compare
from server.views.downloads import panel_csv

QUERY = ("m1.label=A&m1.h0=70&m1.om=0.3&m1.s8=0.8&m2.label=B&m2.h0=70&m2.om=0.3&m2.w0=-0.9&m2.s8=0.75"
         "&tab=growth&z=0.5,2")
A = model.Cosmology(h0=70.0, omega_m=0.3, sigma8=0.8)
B = model.Cosmology(h0=70.0, omega_m=0.3, w0=-0.9, sigma8=0.75)
GROWTH_KEYS = ("growth_factor", "growth_rate", "f_sigma8", "sigma8_at_z")


def _figures(spec):
    return {b["id"]: b["spec"] for b in spec["blocks"] if b["kind"] == "figure"}


def test_growth_tab_is_registered_after_time():
    from server.tabs import TAB_KEYS, TAB_TITLES

    keys = list(TAB_KEYS)
    assert keys.index("growth") == keys.index("time") + 1 and TAB_TITLES["growth"] == "Growth"


def test_panel_draws_d_f_fsigma8_and_gamma_with_strips(open_panel):
    figures = _figures(open_panel(QUERY))
    assert set(figures) >= {"fd-fig-growth_factor", "fd-fig-growth_rate", "fd-fig-f_sigma8", "fd-fig-growth-index"}
    for spec in figures.values():
        assert [s["name"] for s in spec["series"]] == ["A", "B"]
        assert [s["name"] for s in spec["strip"]["series"]] == ["B"]
        # pure numbers: the symbol alone on the axis, no "[dimensionless]"
        assert "dimensionless" not in spec["y_title"] and spec["x_title"] == "redshift z"
    for key in ("growth_factor", "growth_rate", "f_sigma8"):
        spec = figures[f"fd-fig-{key}"]
        z = np.asarray(spec["series"][0]["x"], dtype=float)
        want_a, want_b = model.evaluate(A, z)[key], model.evaluate(B, z)[key]
        np.testing.assert_allclose(spec["series"][0]["y"], want_a, rtol=1e-5)
        np.testing.assert_allclose(spec["series"][1]["y"], want_b, rtol=1e-5)
        np.testing.assert_allclose(spec["strip"]["series"][0]["y"], want_b / want_a, rtol=1e-5)


def test_growth_index_is_near_linders_055_for_flat_lcdm(open_panel):
    spec = _figures(open_panel("m1.h0=70&m1.om=0.3&m1.tcmb=0&m1.mnu=&tab=growth&zmax=2"))["fd-fig-growth-index"]
    gamma = np.asarray(spec["series"][0]["y"], dtype=float)
    assert np.all(np.abs(gamma[np.isfinite(gamma)] - 0.55) < 0.01) and np.isfinite(gamma).sum() > 300


def test_s8_link_key_reaches_the_model_and_round_trips():
    state = codec.decode("m1.h0=70&m1.om=0.3&m1.s8=0.7")
    assert state.models[0].sigma8 == 0.7 and state.models[0].to_cosmology().sigma8 == 0.7
    assert "m1.s8=0.7" in codec.encode(state)
    assert "s8" not in codec.encode(codec.decode("m1.h0=70"))  # the default is not written
    assert "s8=0.7" in codec.model_cache_key(state.models[0])


@pytest.mark.parametrize("raw", ["0", "-1", "3.5", "abc"])
def test_a_bad_s8_names_the_key_and_the_accepted_range(raw):
    problems = codec.decode(f"m1.h0=70&m1.s8={raw}").problems()
    assert problems and problems[0].key == "m1.s8" and "0 < σ₈ ≤ 3" in problems[0].message


def test_planck_presets_carry_their_published_sigma8():
    from server.presets import PRESETS

    # Planck 2018 VI, Table 2: 0.8111 (TT,TE,EE+lowE+lensing); 0.8102 (+BAO; from memory)
    assert PRESETS["cmb2018-lens"].values["sigma8"] == 0.8111
    assert PRESETS["cmb2018-lens-bao"].values["sigma8"] == 0.8102


def test_growth_in_the_table_panel_csv_and_the_api(app_factory):
    app = app_factory(CACHE_TYPE="SimpleCache")
    z = np.array([0.5, 2.0])
    want = model.evaluate(A, z)
    with app.server.app_context():
        text = panel_csv(compare(codec.decode(QUERY.replace("tab=growth", "tab=table"))), "table")
    assert "Growth of structure" in text
    for key in GROWTH_KEYS:
        rows = [r for r in csv.reader(io.StringIO(text)) if r and (r[0] == model.QUANTITIES[key].symbol or r[0].startswith(model.QUANTITIES[key].symbol + " ["))]
        assert len(rows) == 2, key
        np.testing.assert_allclose([float(r[2]) for r in rows], want[key], rtol=1e-5)
    body = app.server.test_client().get("/api/v1/compare?" + QUERY).get_json()
    for key in GROWTH_KEYS:
        np.testing.assert_allclose(body["models"][0]["at"][key], want[key], rtol=1e-12)


def test_growth_panel_csv_and_catalogue_columns(app_factory):
    app = app_factory(CACHE_TYPE="SimpleCache")
    with app.server.app_context():
        text = panel_csv(compare(codec.decode(QUERY)), "growth")
    title = model.QUANTITIES["f_sigma8"].description
    rows = [r for r in csv.reader(io.StringIO(text)) if r and r[0] == title and r[1] == "B"]
    z, value = np.array([[float(r[2]), float(r[3])] for r in rows]).T
    assert z.size >= 100
    np.testing.assert_allclose(value, model.evaluate(B, z)["f_sigma8"], rtol=1e-5)
    r = app.server.test_client().post("/api/v1/catalogue?models=all&" + QUERY, data="z\n0.5\n2\n", content_type="text/csv")
    rows = list(csv.reader(io.StringIO(r.get_data(as_text=True))))
    column = rows[0].index("m2:f_sigma8[dimensionless]")
    np.testing.assert_allclose([float(row[column]) for row in rows[1:-1]],
                               model.evaluate(B, [0.5, 2.0])["f_sigma8"], rtol=1e-8)

