"""The view bar's units and scales (link keys du, xs, ys): distances drawn in Mpc, h⁻¹ Mpc or Gpc,
linear or log axes. Values are checked against `model.evaluate` called directly; the unit
conversions are the definitions (1 Gpc = 1000 Mpc; a distance in h⁻¹ Mpc is the distance in Mpc
times h = H₀ / (100 km s⁻¹ Mpc⁻¹))."""

from __future__ import annotations

import numpy as np
import pytest

import model
from layouts.figures import figure
from server import codec, data_store
from server.views.comparison import compare
from server.views.page import panel, view_controls

LINK_DL = "m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.h0=64&m2.om=0.35&tab=distances&dist=dl"
LINK = "m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.h0=64&m2.om=0.35&tab=distances&dist=dc"
MODELS = {"A": model.Cosmology(h0=70.0, omega_m=0.3), "B": model.Cosmology(h0=64.0, omega_m=0.35)}


def _figure(extra="", key="comoving_distance", link=LINK):
    state = codec.decode(link + extra)
    return next(b["spec"] for b in panel(compare(state))["blocks"] if b.get("id") == f"fd-fig-{key}")


@pytest.mark.parametrize("du, unit, factor", [("", "Mpc", lambda h: 1.0), ("&du=gpc", "Gpc", lambda h: 1e-3),
                                              ("&du=hmpc", "h⁻¹ Mpc", lambda h: h / 100.0)])
def test_distances_in_the_chosen_unit_match_the_model(ctx, du, unit, factor):
    spec = _figure(du)
    assert spec["y_title"] == f"D_C [{unit}]"
    for series in spec["series"]:
        cosmo = MODELS[series["name"]]
        expected = model.evaluate(cosmo, np.asarray(series["x"]))["comoving_distance"] * factor(cosmo.h0)
        np.testing.assert_allclose(series["y"], expected, rtol=1e-5)  # curves are sent at 6 significant digits (compute.round_significant)
    # the strip is the ratio in the drawn unit: in h⁻¹ Mpc the two models' h enter it
    ratio = spec["strip"]["series"][0]
    b, a = (model.evaluate(MODELS[n], np.asarray(ratio["x"][1:]))["comoving_distance"] * factor(MODELS[n].h0)
            for n in ("B", "A"))
    np.testing.assert_allclose(ratio["y"][1:], b / a, rtol=1e-5)


def test_measurements_follow_the_unit_with_the_reference_h(ctx):
    digest = data_store.store("z,kind,value,error\n0.5,luminosity_distance,2900,60\n").hash
    spec_mpc = _figure(f"&data={digest}", "luminosity_distance", LINK_DL)
    spec_h = _figure(f"&data={digest}&du=hmpc", "luminosity_distance", LINK_DL)
    assert list(spec_mpc["points"][0]["y"]) == [2900.0]
    np.testing.assert_allclose(spec_h["points"][0]["y"], [2900.0 * 0.70])  # the reference (m1) has h = 0.70
    np.testing.assert_allclose(spec_h["points"][0]["error"], [60.0 * 0.70])
    texts = [b["text"] for b in panel(compare(codec.decode(LINK_DL + f"&data={digest}&du=hmpc")))["blocks"]
             if b["kind"] == "text"]
    assert any("h⁻¹ Mpc with the reference model's h = 0.7" in str(t) for t in texts), texts


def test_axis_scales_follow_xs_and_ys_and_auto_keeps_the_page_choice(ctx):
    assert _figure()["x_log"] is False and _figure()["y_log"] is False
    assert _figure("&zmax=100")["x_log"] is True  # auto: log beyond z = 10
    assert _figure("&zmax=100&xs=lin")["x_log"] is False
    assert _figure("&xs=log&ys=log")["x_log"] is True and _figure("&ys=log")["y_log"] is True
    drawn = figure(_figure("&xs=log&ys=log"))
    assert drawn["layout"]["xaxis"]["type"] == "log" and drawn["layout"]["yaxis"]["type"] == "log"


@pytest.mark.parametrize("raw, key", [("du=parsec", "du"), ("xs=ln", "xs"), ("ys=", "ys")])
def test_bad_units_and_scales_name_the_key_and_the_choices(raw, key):
    state = codec.decode("m1.h0=70&" + raw)
    messages = [p.message for p in state.view.problems() if p.key == key]
    assert messages and messages[0].startswith(f"{key}: ") and "expected one of" in messages[0]


def test_units_round_trip_and_the_view_bar_shows_the_link():
    state = codec.decode("m1.h0=70&du=gpc&xs=log&ys=lin")
    assert codec.encode(codec.decode(codec.encode(state))) == codec.encode(state)
    assert "du=gpc" in codec.encode(state) and "du=" not in codec.encode(codec.decode("m1.h0=70&du=mpc"))
    shown = {c["key"]: c["value"] for c in view_controls(state)}
    assert shown == {"du": "gpc", "xs": "log", "ys": "lin"}
    for control in view_controls(state):
        assert control["value"] in [o["value"] for o in control["options"]]
