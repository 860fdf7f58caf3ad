"""What the data panel shows (server.views.data, server.views.data_tools), checked against
model.goodness_of_fit, model.quick_fit and model.chi2_map called directly; user text from files
stays text in figures."""

from __future__ import annotations

import math

import numpy as np
import pytest

import model
from layouts.figures import chi2_map_figure, figure
from layouts.text import number, render
from server import codec, data_store
from server.views import data_tools
from server.views.comparison import compare
from server.views.page import panel
from server import state as state_module

HOSTILE = "<img src=x onerror=alert(1)>"
TABLE = ("z,kind,value,error,label\n"
         f"0.3,luminosity_distance,1600,40,{HOSTILE}\n"
         "0.5,dm_over_rd,13.4,0.2,made-up survey A\n"
         "0.9,hubble_parameter,102,8,made-up H point\n"
         "0.2,distance_modulus,40.2,0.15,sn one\n"
         "0.4,distance_modulus,41.9,0.15,sn two\n"
         "0.6,distance_modulus,42.9,0.15,sn three\n")
A = model.Cosmology(h0=70.0, omega_m=0.3)
B = model.Cosmology(h0=70.0, omega_m=0.3, w0=-0.9)


def link(extra=""):
    digest = data_store.store(TABLE).hash
    return codec.decode(f"m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.h0=70&m2.om=0.3&m2.w0=-0.9&data={digest}"
                        f"&tab=data{extra}")


def test_score_table_matches_the_model(ctx, table_text):
    spec = panel(compare(link()))
    rows = table_text(spec, "Goodness of fit")
    header = next(b for b in spec["blocks"] if b.get("title") == "Goodness of fit")["header"]
    data = model.parse_measurements(TABLE)
    ga, gb = model.goodness_of_fit(A, data), model.goodness_of_fit(B, data)
    assert rows[0][:6] == ["A", number(ga.chi2, 6), str(ga.dof), number(ga.p_value, 3), number(0.0, 5),
                           str(ga.n_parameters)]
    assert rows[1][1] == number(gb.chi2, 6) and rows[1][4] == number(gb.chi2 - ga.chi2, 5)
    assert rows[0][-1] == f"{number(ga.offset, 4)} mag"  # the offset with its unit, as on screen
    assert "AIC" not in header  # only once a fit is in the link
    # pure numbers carry no "[dimensionless]"; a column with a unit names it in its cells
    assert not any("dimensionless" in h for h in header)


def test_residual_figures_per_kind_and_pulls(ctx):
    c = compare(link())
    figures = {b["id"]: b["spec"] for b in panel(c)["blocks"] if b["kind"] == "figure"}
    data = model.parse_measurements(TABLE)
    gb = model.goodness_of_fit(B, data)
    spec = figures["fd-fig-residual-distance_modulus"]
    rows = data.kind == "distance_modulus"
    second = next(p for p in spec["points"] if p["slot"] == 2)
    np.testing.assert_allclose(second["y"], (data.value - gb.prediction)[rows], rtol=1e-12)
    pulls = next(p for p in spec["strip"]["series"] if p["slot"] == 2)
    np.testing.assert_allclose(pulls["y"], ((data.value - gb.prediction) / data.error)[rows], rtol=1e-12)
    assert set(figures) >= {f"fd-fig-residual-{k}" for k in data.kinds_present}


def test_measurements_on_the_distance_and_acoustic_panels_as_text(ctx):
    state = link()
    distances = panel(compare(codec.decode(codec.encode(state).replace("tab=data", "tab=distances"))))
    specs = {b["id"]: b["spec"] for b in distances["blocks"] if b["kind"] == "figure"}
    dl = specs["fd-fig-luminosity_distance"]["points"][0]
    assert list(dl["y"]) == [1600.0] and list(dl["error"]) == [40.0]
    hz = specs["fd-fig-hz"]["points"][0]
    assert math.isclose(hz["y"][0], 102 / 1.9) and math.isclose(hz["error"][0], 8 / 1.9)
    drawn = figure(specs["fd-fig-luminosity_distance"])
    texts = [t for trace in drawn["data"] for t in trace.get("text", [])]
    assert HOSTILE not in texts and "&lt;img src=x onerror=alert(1)&gt;" in texts
    # Δμ: the supernovae minus the reference model with its best offset
    data = model.parse_measurements(TABLE)
    ga = model.goodness_of_fit(A, data)
    np.testing.assert_allclose(specs["fd-fig-dmu"]["points"][0]["y"], (data.value - ga.prediction)[data.kind ==
                                                                                                     "distance_modulus"])
    acoustic = panel(compare(codec.decode(codec.encode(state).replace("tab=data", "tab=acoustic"))))
    dm = next(b for b in acoustic["blocks"] if b.get("id") == "fd-fig-dm_rd")
    assert list(dm["spec"]["points"][0]["y"]) == [13.4]


def test_fit_report_load_into_slot_and_aic(ctx, table_text):
    state = link()
    fit = data_tools.fit_request(state, 2, ["omega_m", "w0"], {("w0", "low"): "-1.5", ("w0", "high"): "-0.5"})
    direct = model.quick_fit(B, model.parse_measurements(TABLE), {"omega_m": (0.05, 0.7), "w0": (-1.5, -0.5)})
    np.testing.assert_allclose(fit["values"], direct.values, rtol=1e-9)
    np.testing.assert_allclose(fit["errors"], direct.errors, rtol=1e-9)
    report = data_tools.fit_report(fit)
    assert report["rows"][0][0] == "Ω_m"
    assert render(report["rows"][0][1]) == number(direct.values[0], 6)
    assert render(report["rows"][1][3]) == f"{number(-1.5, 4)} to {number(-0.5, 4)}"  # w₀'s bounds as given
    assert any(number(direct.chi2_min, 6) in render(line) for line in report["summary"])
    new = state_module.with_fit(state, fit)
    assert new.view.fit == (3, ("om", "w0")) and "fit=3:om,w0" in codec.encode(new)
    m3 = next(m for m in new.models if m.slot == 3)
    assert abs(m3.omega_m - direct.best["omega_m"]) < 1e-6 * max(1.0, abs(direct.best["omega_m"]))
    spec = panel(compare(new))
    header = next(b for b in spec["blocks"] if b.get("title") == "Goodness of fit")["header"]
    assert "AIC" in header and table_text(spec, "Goodness of fit")[2][5] == "3"  # Ω_m, w₀, offset


@pytest.mark.parametrize("bounds, words", [
    ({("omega_m", "low"): "abc"}, "Ω_m lower bound: 'abc' is not a number"),
    ({("omega_m", "high"): "9"}, "Ω_m upper bound: 9 is out of range; expected accepted 0 to 5"),
    ({("omega_m", "low"): "0.5", ("omega_m", "high"): "0.2"}, "must be below the upper bound"),
    ({("omega_m", "low"): "nan"}, "is not a number"),
])
def test_bad_bounds_name_the_field(ctx, bounds, words):
    with pytest.raises(data_tools.FitRequestError, match=words):
        data_tools.fit_request(link(), 1, ["omega_m"], bounds)


def test_fit_without_data_or_with_a_full_page(ctx):
    with pytest.raises(data_tools.FitRequestError, match="no measurements"):
        data_tools.fit_request(codec.decode("m1.h0=70"), 1, ["omega_m"], {})
    full = codec.decode(codec.encode(link()) + "&m3.w0=-0.8&m4.w0=-0.7")
    fit = data_tools.fit_request(full, 1, ["omega_m"], {})
    with pytest.raises(state_module.TransitionError, match="slots are taken"):
        state_module.with_fit(full, fit)


def test_map_and_its_contours(ctx):
    state = link()
    result = data_tools.map_request(state, 1, "omega_m", "h0", {}, None)
    spec = result["spec"]
    direct = model.chi2_map(A, model.parse_measurements(TABLE), "omega_m", np.linspace(0.05, 0.7, 60), "h0",
                            np.linspace(50, 90, 60))
    np.testing.assert_allclose(spec["delta_chi2"], direct.delta_chi2, rtol=1e-9, atol=1e-9)
    contours = [t for t in chi2_map_figure(spec)["data"] if t["type"] == "contour"]
    # 68.3 % and 95.4 % joint regions of two parameters: Δχ² = 2.30 and 6.18 (Press et al.,
    # Numerical Recipes, 3rd ed. 2007, section 15.6)
    assert [t["contours"]["start"] for t in contours] == pytest.approx([2.30, 6.18], abs=0.005)
    assert [t["name"].split(" (")[0] for t in contours] == ["68.3 %", "95.4 %"]
    with pytest.raises(data_tools.FitRequestError, match="two different"):
        data_tools.map_request(state, 1, "w0", "w0", {}, None)


def test_upload_contents_decoding():
    import base64

    from server.callbacks import upload_bytes

    assert upload_bytes("data:text/csv;base64," + base64.b64encode(b"z,kind\n").decode(), "measurements") == b"z,kind\n"
    assert upload_bytes(None, "covariance") is None
    for bad in ("no comma", "data:text/csv;base64,@@@", "text/csv,abc"):
        with pytest.raises(data_store.DataRejected, match="measurements: "):
            upload_bytes(bad, "measurements")


def test_the_optimisers_message_and_the_limits_are_in_plain_words():
    # scipy.optimize.least_squares' own closing messages (scipy documentation, status codes 2-4)
    assert "no longer improved" in data_tools.optimiser_text("`ftol` termination condition is satisfied.")
    assert "parameters no longer moved" in data_tools.optimiser_text("`xtol` termination condition is satisfied.")
    assert data_tools.optimiser_text("something new") == "something new"
    limits = data_tools.data_tool_options()["limits"]
    assert "1 MiB" in limits and "4 MiB" in limits and "bytes" not in limits


def test_a_pasted_spreadsheet_table_is_stored_and_the_message_says_how_it_was_read(ctx):
    table = "z\tkind\tvalue\terror\n0.51\tdm_over_rd\t13.6\t0.25\n0.8\thubble_parameter\t95\t9\n"
    search, message = data_tools.store_upload(codec.decode("m1.h0=70"), table, None, "pasted table")
    assert "Stored 2 measurements" in message and "read as tab-separated" in message
    assert "data=" in search
