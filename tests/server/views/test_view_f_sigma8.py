"""fσ8 measurements through the server: scored by the API (χ² against model.goodness_of_fit
called directly), drawn on the data and growth panels with the fiducial-cosmology caveat, and
fitted with σ8 free from the page's fit tool (against model.quick_fit), loaded into the link
as ``fit=<slot>:s8`` and ``m<slot>.s8``. The table is invented from a model of our own."""

from __future__ import annotations

import math

import numpy as np
import pytest

import model
from server import codec, data_store
from server import state as state_module
from server.views import data_tools
from server.views.comparison import compare
from server.views.data import F_SIGMA8_CAVEAT
from server.views.page import panel

INVENTED = model.Cosmology(h0=70.0, omega_m=0.3, sigma8=0.74)
Z = np.array([0.2, 0.45, 0.7, 1.0])
VALUES = model.evaluate(INVENTED, Z)["f_sigma8"] * np.array([1.02, 0.97, 1.01, 1.03])
TABLE = "z,kind,value,error,label,group,correlation\n" + "".join(
    f"{z!r},f_sigma8,{v!r},0.03,invented RSD {i},{'P' if i < 2 else ''},{'0.3' if i < 2 else ''}\n"
    for i, (z, v) in enumerate(zip(Z.tolist(), VALUES.tolist()))) + "0.9,hubble_parameter,101,8,invented H,,\n"
QUERY = "m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.h0=70&m2.om=0.3&m2.s8=0.7"
MODELS = [model.Cosmology(h0=70.0, omega_m=0.3), model.Cosmology(h0=70.0, omega_m=0.3, sigma8=0.7)]


@pytest.fixture
def client(app_factory):
    return app_factory().server.test_client()


def test_api_scores_f_sigma8_rows_like_the_library(client):
    r = client.post("/api/v1/data", data=TABLE.encode(), content_type="text/csv")
    assert r.status_code == 201 and r.get_json()["kinds"]["f_sigma8"] == 4
    payload = client.get(f"/api/v1/compare?{QUERY}&data={r.get_json()['data']}").get_json()
    data = model.parse_measurements(TABLE)
    for entry, cosmo in zip(payload["models"], MODELS):
        direct = model.goodness_of_fit(cosmo, data)
        assert math.isclose(entry["data"]["chi2"], direct.chi2, rel_tol=1e-9)
    assert payload["models"][0]["data"]["chi2"] != payload["models"][1]["data"]["chi2"]  # σ8 matters


@pytest.fixture
def linked(ctx):
    digest = data_store.store(TABLE).hash
    return lambda tab: codec.decode(f"{QUERY}&data={digest}&tab={tab}")


def test_data_panel_shows_the_caveat_beside_the_f_sigma8_residuals(linked):
    blocks = panel(compare(linked("data")))["blocks"]
    ids = [b.get("id") for b in blocks]
    at = ids.index("fd-fig-residual-f_sigma8")
    assert blocks[at - 1] == {"kind": "text", "text": F_SIGMA8_CAVEAT, "tone": "note"}
    assert "Alcock–Paczynski" in F_SIGMA8_CAVEAT and "fiducial" in F_SIGMA8_CAVEAT


def test_growth_panel_draws_the_f_sigma8_points_and_the_caveat(linked):
    blocks = panel(compare(linked("growth")))["blocks"]
    spec = next(b["spec"] for b in blocks if b.get("id") == "fd-fig-f_sigma8")
    (points,) = spec["points"]
    np.testing.assert_allclose(points["y"], VALUES, rtol=1e-12)
    (ratio,) = spec["strip"]["points"]  # data over the reference model A's prediction
    np.testing.assert_allclose(ratio["y"], VALUES / model.evaluate(MODELS[0], Z)["f_sigma8"], rtol=1e-9)
    assert any(b.get("text") == F_SIGMA8_CAVEAT for b in blocks)


def test_page_fit_frees_sigma8_and_loads_it_into_the_link(linked):
    state = linked("data")
    fit = data_tools.fit_request(state, 2, ["sigma8"], {})
    direct = model.quick_fit(MODELS[1], model.parse_measurements(TABLE), {"sigma8": (0.4, 1.2)})
    np.testing.assert_allclose(fit["values"], direct.values, rtol=1e-9)
    assert abs(fit["values"][0] - 0.74) < 3 * fit["errors"][0]
    new = state_module.with_fit(state, fit)
    assert new.view.fit == (3, ("s8",)) and "fit=3:s8" in codec.encode(new)
    m3 = next(m for m in new.models if m.slot == 3)
    assert m3.sigma8 == pytest.approx(direct.best["sigma8"], rel=1e-6)
    assert data_tools.fit_report(fit)["rows"][0][0] == "σ₈"
