"""POST /api/v1/data and GET /api/v1/compare?...&data=<hash>, through Flask's test client.

χ², dof, p-value and Δχ² are checked against model.goodness_of_fit called directly and
scipy.stats.chi2.sf (the reference the format documentation names); malformed uploads must be
4xx naming line and column, never a 500 (hypothesis fuzzing)."""

from __future__ import annotations

import io
import json
import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy import stats

import model
from server import codec, data_store

DEMO_BYTES = data_store.DEMO_PATH.read_bytes()
DEMO = model.read_measurements(data_store.DEMO_PATH)
QUERY = "m1.label=Lantern%20baseline&m1.h0=68&m1.om=0.31&m2.label=Candidate%20Ember&m2.w0=-0.88&m2.wa=-0.35"
MODELS = [model.Cosmology(h0=68.0, omega_m=0.31), model.Cosmology(w0=-0.88, wa=-0.35, h0=67.36, omega_m=0.3153)]


@pytest.fixture
def client(app_factory):
    return app_factory().server.test_client()


def strict_json(response):
    def refuse(token):
        raise AssertionError(f"non-JSON constant {token} in response")
    return json.loads(response.get_data(as_text=True), parse_constant=refuse)


def post_raw(client, body: bytes):
    return client.post("/api/v1/data", data=body, content_type="text/csv")


def test_store_then_compare_gives_chi2_per_model(client):
    r = post_raw(client, DEMO_BYTES)
    assert r.status_code == 201
    body = strict_json(r)
    assert body["rows"] == len(DEMO) and body["kinds"]["distance_modulus"] == 300
    r = client.get(f"/api/v1/compare?{QUERY}&data={body['data']}")
    assert r.status_code == 200
    payload = strict_json(r)
    assert payload["data"]["hash"] == body["data"] and f"data={body['data']}" in payload["query"]
    direct = [model.goodness_of_fit(m, DEMO) for m in MODELS]
    for entry, expected in zip(payload["models"], direct):
        score = entry["data"]
        assert math.isclose(score["chi2"], expected.chi2, rel_tol=1e-9)
        assert score["dof"] == expected.dof == len(DEMO) - 1  # the supernova offset is marginalised
        assert math.isclose(score["p_value"], stats.chi2.sf(expected.chi2, expected.dof), rel_tol=1e-9)
        assert math.isclose(score["delta_chi2"], expected.chi2 - direct[0].chi2, rel_tol=1e-9, abs_tol=1e-9)


def test_multipart_and_json_uploads_give_the_same_reference(client):
    raw = strict_json(post_raw(client, DEMO_BYTES))["data"]
    form = client.post("/api/v1/data", data={"measurements": (io.BytesIO(DEMO_BYTES), "demo.csv")},
                       content_type="multipart/form-data")
    as_json = client.post("/api/v1/data", json={"measurements": DEMO_BYTES.decode("utf-8")})
    assert form.status_code == as_json.status_code == 201
    assert strict_json(form)["data"] == strict_json(as_json)["data"] == raw


def test_free_r_d_and_a_fit_note_change_k(client):
    digest = strict_json(post_raw(client, DEMO_BYTES))["data"]
    payload = strict_json(client.get(f"/api/v1/compare?{QUERY}&data={digest}&rd=free&fit=2:om,w0"))
    free = [model.goodness_of_fit(m, DEMO, model.Nuisances(r_d="free"), n_free=k) for m, k in zip(MODELS, (0, 2))]
    for entry, expected in zip(payload["models"], free):
        assert math.isclose(entry["data"]["chi2"], expected.chi2, rel_tol=1e-9)
        assert entry["data"]["n_parameters"] == expected.n_parameters
        assert math.isclose(entry["data"]["aic"], expected.aic, rel_tol=1e-9)
        assert math.isclose(entry["data"]["bic"], expected.bic, rel_tol=1e-9)
    assert payload["models"][1]["data"]["n_parameters"] == 4  # Ω_m, w₀, r_d and the offset


def test_unknown_reference_is_a_404_that_says_so(client):
    r = client.get(f"/api/v1/compare?{QUERY}&data={'ab' * (codec.DATA_HASH_LENGTH // 2)}")
    assert r.status_code == 404
    error = strict_json(r)["error"]
    assert error["field"] == "data" and "no longer stored" in error["message"]


def test_malformed_reference_is_a_400(client):
    r = client.get(f"/api/v1/compare?{QUERY}&data=not-a-hash")
    assert r.status_code == 400 and strict_json(r)["error"]["field"] == "data"


HEADER = "z,kind,value,error,label\n"


@pytest.mark.parametrize("body, covariance, line, column, words", [
    (HEADER + "0.5,dm_over_rd,13.6,0.2,a\n0.7,bogus,1,1,b\n", None, 3, 2, "unknown kind"),
    (HEADER + "0.5,dm_over_rd,13.6,-0.2,a\n", None, 2, 4, "must be positive"),
    (HEADER + "0.5,dm_over_rd,13.6,0,a\n", None, 2, 4, "must be positive"),
    (HEADER + "0.5,dm_over_rd,abc,0.2,a\n", None, 2, 3, "not a number"),
    (HEADER + "0.5,dm_over_rd,nan,0.2,a\n", None, 2, 3, "NaN"),
    (HEADER + "0.5,dm_over_rd,inf,0.2,a\n", None, 2, 3, "infinity"),
    (HEADER + "0.5,dm_over_rd,1e999,0.2,a\n", None, 2, 3, "overflows"),
    ("z,kind,value,error,z\n0.5,dm_over_rd,13.6,0.2,0.5\n", None, 1, 5, "duplicate column"),
    (HEADER + "0.5,dm_over_rd,13.6,0.2," + "x" * 500 + "\n", None, 2, 5, "limit is 200"),
    (HEADER + "0.5,dm_over_rd,13.6,0.2,a\n0.6,dh_over_rd,20,0.5,b\n", "0.04,0.1\n0.2,0.25\n", 2, 1, "not symmetric"),
    (HEADER + "0.5,dm_over_rd,13.6,0.2,a\n0.6,dh_over_rd,20,0.5,b\n", "0.04,0.2\n0.2,0.25\n", 2, 2,
     "not positive-definite"),
    (HEADER + "0.5,dm_over_rd,13.6,0.2,a\n0.6,dh_over_rd,20,0.5,b\n", "0.04\n", 1, 2, "where 2"),
])
def test_malformed_uploads_name_line_and_column(client, body, covariance, line, column, words):
    fields = {"measurements": (io.BytesIO(body.encode()), "m.csv")}
    if covariance is not None:
        fields["covariance"] = (io.BytesIO(covariance.encode()), "c.csv")
    r = client.post("/api/v1/data", data=fields, content_type="multipart/form-data")
    assert r.status_code == 400
    error = strict_json(r)["error"]
    assert (error["line"], error["column"]) == (line, column)
    assert words in error["message"] and f"line {line}, column {column}" in error["message"]
    assert error["field"] == ("covariance" if words in ("not symmetric", "not positive-definite", "where 2")
                              else "measurements")


@pytest.mark.parametrize("body, words", [
    (b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR", "not UTF-8"),
    ("z,kind,value,error,label\n0.5,dm_over_rd,13.6,0.2,Müller\n".encode("latin-1"), "not UTF-8"),
    (b"z,kind,value,error\n0.5,dm_over_rd,13.6,0.2\x00\n", "binary"),
    (b"", "no header"),
])
def test_binary_and_wrong_encodings_are_clear_400s(client, body, words):
    r = post_raw(client, body)
    assert r.status_code == 400
    assert words in strict_json(r)["error"]["message"]


def test_oversized_body_is_a_413(client):
    r = post_raw(client, b"x" * (data_store.LIMITS.max_bytes + data_store.LIMITS.max_covariance_bytes + 70000))
    assert r.status_code == 413 and strict_json(r)["error"]["field"] == "body"


def test_bad_json_bodies(client):
    assert client.post("/api/v1/data", data=b"{not json", content_type="application/json").status_code == 400
    r = client.post("/api/v1/data", json={"measurements": 3})
    assert r.status_code == 400 and strict_json(r)["error"]["field"] == "body"


CSV_ALPHABET = st.sampled_from(list("zkindvaluerrolbg_hep,.-+0123456789 \t\"\n\r#") +
                               ["distance_modulus", "dm_over_rd", "hubble_parameter", "nan", "inf", "\x00",
                                "\u00e9", "\ufeff", "z,kind,value,error\n", "1e308", "1e999"])


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.one_of(st.binary(max_size=300), st.lists(CSV_ALPHABET, max_size=80).map("".join).map(str.encode)),
       st.none() | st.binary(max_size=60))
def test_fuzzed_uploads_never_give_a_server_error(client, body, covariance):
    fields = {"measurements": (io.BytesIO(body), "m.csv")}
    if covariance is not None:
        fields["covariance"] = (io.BytesIO(covariance), "c.csv")
    r = client.post("/api/v1/data", data=fields, content_type="multipart/form-data")
    assert r.status_code in (201, 400), r.get_data(as_text=True)
    payload = strict_json(r)
    if r.status_code == 400:
        assert payload["error"]["message"] and payload["error"]["line"] >= 1 and payload["error"]["column"] >= 1
    else:  # stored under its content hash, and it reads back as the same rows
        assert payload["data"] == data_store.content_hash(body, covariance)
        assert payload["rows"] == len(data_store.load(payload["data"]).measurements)
