"""Adding a quantity is one registry entry: a throwaway quantity registered in model.QUANTITIES
appears in the API answer, the Table panel's CSV and the catalogue columns with no other edit."""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest

import model
from server import codec
from server.views.comparison import compare
from server.views.downloads import panel_csv

# A model no other test uses, so no memo from an earlier test can answer for it.
QUERY = "m1.label=Registry%20probe&m1.h0=71.2345&m1.om=1&m1.ob=0.04&m1.tcmb=0&m1.mnu=&z=0.5,3"
H0, Z = 71.2345, np.array([0.5, 3.0])


@pytest.fixture
def probe(monkeypatch):
    # 1/H(z) in Gyr. Einstein–de Sitter (Ω_m = 1, radiation off): H = H0 (1+z)^{3/2}, so
    # 1/H = t_H (1+z)^{-3/2} exactly (closed form; Hogg 1999, §3 with E = (1+z)^{3/2}).
    monkeypatch.setitem(model.QUANTITIES, "probe_hubble_time", model.Quantity(
        "probe_hubble_time", "Gyr", "t_probe", "Hubble time 1/H(z), registered by a test", "times",
        derive=lambda cosmo, z, v: cosmo.hubble_time * cosmo.h0 / v["hubble_parameter"]))
    return model.Cosmology(h0=H0, omega_m=1.0, omega_b=0.04, t_cmb=0.0, m_nu=()).hubble_time * (1 + Z) ** -1.5


@pytest.fixture
def client(app_factory):
    return app_factory(CACHE_TYPE="SimpleCache").server.test_client()


def test_api_answer_carries_the_new_quantity(probe, client):
    body = client.get("/api/v1/compare?" + QUERY).get_json()
    np.testing.assert_allclose(body["models"][0]["at"]["probe_hubble_time"], probe, rtol=1e-12)


def test_table_panel_csv_carries_the_new_quantity(probe, app_factory):
    app = app_factory(CACHE_TYPE="SimpleCache")
    with app.server.app_context():  # the memo layer is the app's
        text = panel_csv(compare(codec.decode(QUERY)), "table")
    rows = [r for r in csv.reader(io.StringIO(text)) if r and r[0].startswith("t_probe")]
    assert len(rows) == 2, text[:2000]
    np.testing.assert_allclose([float(r[2]) for r in rows], probe, rtol=1e-5)  # table cells: 6 digits


def test_catalogue_columns_carry_the_new_quantity(probe, client):
    r = client.post("/api/v1/catalogue?" + QUERY, data="z\n0.5\n3\n", content_type="text/csv")
    assert r.status_code == 200
    rows = list(csv.reader(io.StringIO(r.get_data(as_text=True))))
    assert rows[-1] == ["# complete: 2 rows"]
    column = rows[0].index("m1:probe_hubble_time[Gyr]")
    np.testing.assert_allclose([float(row[column]) for row in rows[1:-1]], probe, rtol=1e-8)
