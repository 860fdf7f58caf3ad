"""The data panel's residuals: one model or all (``res``), binned weighted means (``rbin``)
checked against a hand computation with numpy (inverse-variance weights, Bevington & Robinson
2003, eqs. 4.17 and 4.19) on residuals from `model.goodness_of_fit` called directly; and how
layouts draws them (slot colour and marker shape, a small shift in z per model, true z in the
hover, bars spanning each bin)."""

from __future__ import annotations

import re

import numpy as np

import model
from layouts.figures import SLOT_SPREAD, figure
from layouts.palette import slot_colour, slot_symbol
from server import codec, data_store
from server.views.comparison import compare
from server.views.page import panel

TABLE = ("z,kind,value,error,label\n"
         "0.1,distance_modulus,38.3,0.10,sn a\n"
         "0.2,distance_modulus,40.2,0.15,sn b\n"
         "0.4,distance_modulus,41.9,0.20,sn c\n"
         "0.6,distance_modulus,42.9,0.15,sn d\n"
         "1.6,distance_modulus,45.4,0.30,sn e\n")
A = model.Cosmology(h0=70.0, omega_m=0.3)
B = model.Cosmology(h0=70.0, omega_m=0.3, w0=-0.9)
FIG = "fd-fig-residual-distance_modulus"


def _panel(extra=""):
    digest = data_store.store(TABLE).hash
    return panel(compare(codec.decode(
        f"m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.h0=70&m2.om=0.3&m2.w0=-0.9&data={digest}&tab=data{extra}")))


def _figure(spec):
    return next(b["spec"] for b in spec["blocks"] if b.get("id") == FIG)


def test_results_come_first_and_the_residual_controls_are_there(ctx):
    spec = _panel()
    kinds = [b["kind"] for b in spec["blocks"]]
    assert kinds[0] == "table" and kinds[1] == "figure"  # the scores, then the residuals, then the notes
    controls = {c["key"]: c for c in spec["controls"]}
    assert [o["label"] for o in controls["res"]["options"]] == ["all models", "m1 A", "m2 B"]
    assert controls["res"]["value"] == "all" and controls["rbin"]["value"] == ""


def test_one_model_or_all(ctx):
    assert {p["slot"] for p in _figure(_panel())["points"]} == {1, 2}
    one = _figure(_panel("&res=2"))
    assert {p["slot"] for p in one["points"]} == {2} and {p["slot"] for p in one["strip"]["series"]} == {2}


def test_binned_means_match_a_hand_computation(ctx):
    spec = _panel("&rbin=0,0.3,1,1.2")
    data = model.parse_measurements(TABLE)
    binned = [p for p in _figure(spec)["points"] if p["role"] == "binned"]
    assert [p["slot"] for p in binned] == [1, 2]
    for cosmo, series in zip((A, B), binned):
        g = model.goodness_of_fit(cosmo, data)
        expected = []
        for rows in ([0, 1], [2, 3]):  # 0 ≤ z < 0.3 and 0.3 ≤ z < 1; 1-1.2 holds nothing; z = 1.6 is outside
            w = 1.0 / data.error[rows] ** 2
            expected.append((np.sum(w * g.residual[rows]) / np.sum(w), 1.0 / np.sqrt(np.sum(w))))
        np.testing.assert_allclose(series["y"], [m for m, _ in expected], rtol=1e-12)
        np.testing.assert_allclose(series["error"], [s for _, s in expected], rtol=1e-12)
        np.testing.assert_array_equal(series["x_low"], [0.0, 0.3])
        np.testing.assert_array_equal(series["x_high"], [0.3, 1.0])
        assert series["text"][0] == "2 measurements in 0 ≤ z < 0.3"
    notes = [b["text"] for b in spec["blocks"] if b["kind"] == "text"]
    assert any("no measurements in 1 ≤ z ≤ 1.2" in t and "skipped" in t for t in notes)


def test_models_get_their_shape_colour_and_a_small_shift_with_the_true_z_in_the_hover(ctx):
    drawn = figure(_figure(_panel("&rbin=0,0.3,1")))
    residuals = [t for t in drawn["data"] if t["yaxis"] == "y" and t["marker"]["size"] < 8]
    binned = [t for t in drawn["data"] if t.get("error_x")]
    assert len(residuals) == 2 and len(binned) == 2
    z = np.array([0.1, 0.2, 0.4, 0.6, 1.6])
    span = 1.6 - 0.0  # a linear axis (1.6 / 0.1 < 20) from the first bin edge to the last point
    for slot, trace in zip((1, 2), residuals):
        assert trace["marker"]["symbol"] == slot_symbol(slot) and trace["marker"]["color"] == slot_colour(slot)
        assert trace["customdata"] == z.tolist() and "%{customdata" in trace["hovertemplate"]
    shifts = [np.asarray(t["x"]) - z for t in residuals]
    np.testing.assert_allclose(shifts[0], -SLOT_SPREAD * span)
    np.testing.assert_allclose(shifts[1], +SLOT_SPREAD * span)
    assert slot_symbol(1) != slot_symbol(2)
    # the bar spans the bin (shifted with its model): low edge 0 and high edge 0.3 for the first bin
    first = binned[0]
    assert abs(first["x"][0] - first["error_x"]["arrayminus"][0] - (0.0 - SLOT_SPREAD * span)) < 1e-12
    assert abs(first["x"][0] + first["error_x"]["array"][0] - (0.3 - SLOT_SPREAD * span)) < 1e-12
    pulls = [t for t in drawn["data"] if t["yaxis"] == "y2"]
    np.testing.assert_allclose(np.asarray(pulls[0]["x"]) - z, -SLOT_SPREAD * span)


def test_one_model_is_not_shifted(ctx):
    drawn = figure(_figure(_panel("&res=1")))
    residual = next(t for t in drawn["data"] if t["yaxis"] == "y")
    assert residual["x"] == [0.1, 0.2, 0.4, 0.6, 1.6] and "customdata" not in residual


def test_the_demo_sets_note_names_no_repository_path():
    # a reader of the page has the page, not the repository: the note says what the set is
    from server.views.comparison import SYNTHETIC_NOTE

    assert "synthetic" in SYNTHETIC_NOTE and "not real measurements" in SYNTHETIC_NOTE
    assert not re.search(r"\b[\w-]+/[\w./-]+\.(py|md|csv)\b", SYNTHETIC_NOTE), SYNTHETIC_NOTE
