"""Measurements on the ratio strips of the distances panel: each point is the measured value
divided by the reference model's prediction, checked against `model.evaluate` called directly
(the model library is the reference for its own predictions)."""

from __future__ import annotations

import numpy as np

import model
from layouts.figures import figure
from server import codec, data_store
from server.views.comparison import compare
from server.views.page import panel

TABLE = ("z,kind,value,error,label\n"
         "0.3,luminosity_distance,1600,40,made-up DL one\n"
         "0.7,luminosity_distance,4400,90,made-up DL two\n"
         "0.9,hubble_parameter,102,8,made-up H point\n"
         "5.0,hubble_parameter,600,50,beyond zmax\n")
REF = model.Cosmology(h0=70.0, omega_m=0.3)


def _figures(extra=""):
    digest = data_store.store(TABLE).hash
    state = codec.decode("m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.h0=70&m2.om=0.3&m2.w0=-0.9"
                         f"&tab=distances&dist=dl&data={digest}{extra}")
    return {b["id"]: b["spec"] for b in panel(compare(state))["blocks"] if b["kind"] == "figure"}


def test_strip_points_are_data_over_the_reference_prediction(ctx):
    figs = _figures()
    (dl,) = figs["fd-fig-luminosity_distance"]["strip"]["points"]
    at = model.evaluate(REF, np.array([0.3, 0.7]))
    np.testing.assert_allclose(dl["y"], np.array([1600.0, 4400.0]) / at["luminosity_distance"], rtol=1e-9)
    np.testing.assert_allclose(dl["error"], np.array([40.0, 90.0]) / at["luminosity_distance"], rtol=1e-9)
    assert "/ A" in dl["name"]  # says which model is the reference
    (hz,) = figs["fd-fig-hz"]["strip"]["points"]
    h = model.evaluate(REF, np.array([0.9]))["hubble_parameter"]
    np.testing.assert_allclose(hz["y"], [102.0 / h[0]], rtol=1e-9)  # z = 5 is beyond zmax = 3: not drawn
    np.testing.assert_allclose(hz["x"], [0.9])


def test_strip_points_follow_the_reference_choice(ctx):
    (dl,) = _figures("&ref=2")["fd-fig-luminosity_distance"]["strip"]["points"]
    other = model.Cosmology(h0=70.0, omega_m=0.3, w0=-0.9)
    at = model.evaluate(other, np.array([0.3, 0.7]))["luminosity_distance"]
    np.testing.assert_allclose(dl["y"], np.array([1600.0, 4400.0]) / at, rtol=1e-9)


def test_strip_points_are_drawn_on_the_strip_axis(ctx):
    fig = figure(_figures()["fd-fig-hz"])
    on_strip = [t for t in fig["data"] if t["yaxis"] == "y2" and t["mode"] == "markers"]
    assert len(on_strip) == 1 and on_strip[0]["error_y"]["array"] and not on_strip[0]["showlegend"]
