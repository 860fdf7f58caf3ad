"""POST /api/v1/catalogue: a redshift file comes back with every model.evaluate quantity added,
streamed; the added numbers are checked against model.evaluate called directly, refusals name
line and column."""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest

import model
from server import catalogue


@pytest.fixture
def client(app_factory):
    return app_factory(CACHE_TYPE="SimpleCache").server.test_client()


def rows_of(response):
    """The CSV rows, after checking that the answer ends with its completeness line (which a copy
    cut short on the way would lack) and dropping that line."""
    rows = list(csv.reader(io.StringIO(response.get_data(as_text=True))))
    assert rows[-1] == [f"# complete: {response.headers['X-Rows']} rows"], rows[-3:]
    return rows[:-1]


def test_columns_equal_model_evaluate_and_other_lines_pass_through(client):
    z = np.random.default_rng(7).uniform(0.0, 4.0, 3000)
    body = "id,z,note\n# made-up catalogue\n" + "\n".join(f"g{i},{float(v)!r},\"x,{i}\"" for i, v in enumerate(z)) + "\n"
    r = client.post("/api/v1/catalogue?m1.label=A&m1.h0=70&m2.w0=-0.9&models=all", data=body,
                    content_type="text/csv")
    assert r.status_code == 200 and r.is_streamed and r.headers["X-Rows"] == "3000"
    rows = rows_of(r)
    assert rows[0][:3] == ["id", "z", "note"] and len(rows[0]) == 3 + 2 * len(model.QUANTITIES)
    assert rows[1] == ["# made-up catalogue"]
    assert rows[2][:3] == ["g0", repr(float(z[0])), "x,0"]
    header = rows[0]
    data = rows[2:]
    for slot, cosmo in ((1, model.Cosmology(h0=70.0, omega_m=0.3153)),
                        (2, model.Cosmology(h0=67.36, omega_m=0.3153, w0=-0.9))):
        expected = model.evaluate(cosmo, z)
        for key, unit in ((k, q.unit) for k, q in model.QUANTITIES.items()):
            column = header.index(f"m{slot}:{key}[{unit or 'dimensionless'}]")
            got = np.array([float(row[column]) for row in data])
            np.testing.assert_allclose(got, expected[key], rtol=1e-8)  # 9 significant digits written


def test_one_model_by_default_the_reference(client):
    body = "z\n0.5\n1.5\n"
    rows = rows_of(client.post("/api/v1/catalogue?m1.h0=70&m2.h0=60&ref=2", data=body, content_type="text/csv"))
    assert rows[0][1].startswith("m2:") and len(rows[0]) == 1 + len(model.QUANTITIES)
    expected = model.evaluate(model.Cosmology(h0=60.0, omega_m=0.3153), np.array([0.5, 1.5]))["luminosity_distance"]
    column = rows[0].index("m2:luminosity_distance[Mpc]")
    np.testing.assert_allclose([float(r[column]) for r in rows[1:]], expected, rtol=1e-8)


def test_more_than_one_chunk(client, monkeypatch):
    monkeypatch.setattr(catalogue, "CHUNK_ROWS", 7)
    z = np.linspace(0.1, 2.0, 50)
    body = "z\n" + "\n".join(repr(float(v)) for v in z) + "\n"
    r = client.post("/api/v1/catalogue?m1.h0=70&models=1", data=body, content_type="text/csv")
    rows = rows_of(r)
    assert [float(row[0]) for row in rows[1:]] == z.tolist()
    column = rows[0].index("m1:age[Gyr]")
    expected = model.evaluate(model.Cosmology(h0=70.0, omega_m=0.3153), z)["age"]
    np.testing.assert_allclose([float(row[column]) for row in rows[1:]], expected, rtol=1e-8)


@pytest.mark.parametrize("body, line, column, words", [
    ("id,z\n1,0.5\n2,abc\n", 3, 2, "not a number"),
    ("id,z\n1,0.5\n2,nan\n", 3, 2, "NaN"),
    ("id,z\n1,0.5\n2,1e9\n", 3, 2, "outside the model's range"),
    ("id,z\n1,0.5,3\n", 2, 3, "cells where the header has 2"),
    ("id,redshift\n1,0.5\n", 1, 1, "exactly one column named z"),
    ("z,Z\n1,0.5\n", 1, 2, "exactly one column named z"),
    ("", 1, 1, "no header"),
])
def test_bad_files_name_line_and_column(client, body, line, column, words):
    r = client.post("/api/v1/catalogue?m1.h0=70", data=body, content_type="text/csv")
    assert r.status_code == 400
    error = r.get_json()["error"]
    assert (error["line"], error["column"]) == (line, column) and words in error["message"]


def test_binary_bad_model_and_unknown_slot(client):
    r = client.post("/api/v1/catalogue?m1.h0=70", data=b"z\n\xff\xfe\n", content_type="text/csv")
    assert r.status_code == 400 and "not UTF-8" in r.get_json()["error"]["message"]
    r = client.post("/api/v1/catalogue?m1.om=abc", data="z\n1\n", content_type="text/csv")
    assert r.status_code == 400 and r.get_json()["error"]["field"] == "m1.om"
    r = client.post("/api/v1/catalogue?m1.h0=70&models=3", data="z\n1\n", content_type="text/csv")
    assert r.status_code == 400 and r.get_json()["error"]["field"] == "models"


def test_multipart_upload_above_the_app_wide_body_limit(client):
    # the app refuses bodies over MAX_CONTENT_LENGTH elsewhere; a catalogue may be larger
    limit = client.application.config.get("MAX_CONTENT_LENGTH") or (8 << 20)
    n = limit // 9 + 1000
    body = b"z\n" + b"0.123456\n" * n
    r = client.post("/api/v1/catalogue?m1.h0=70", data={"redshifts": (io.BytesIO(body), "z.csv")},
                    content_type="multipart/form-data")
    assert r.status_code == 200 and r.headers["X-Rows"] == str(n)


from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.one_of(st.binary(max_size=200),
                 st.lists(st.sampled_from(list("z,0123456789.e-+ \"#\n\r") + ["nan", "1e999", "\x00", "\u00e9"]),
                          max_size=60).map("".join).map(str.encode)))
def test_fuzzed_redshift_files_never_give_a_server_error(client, body):
    r = client.post("/api/v1/catalogue?m1.h0=70", data=body, content_type="text/csv")
    assert r.status_code in (200, 400), r.get_data(as_text=True)[:300]
    if r.status_code == 400:
        error = r.get_json()["error"]
        assert error["line"] >= 1 and error["column"] >= 1 and error["message"].startswith("redshift file, line")
    else:
        r.get_data()  # the stream runs to its end without raising
