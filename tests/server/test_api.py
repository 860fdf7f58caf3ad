"""The JSON API and app wiring, through Flask's test client on a fresh app per test.

Values are checked against model.evaluate called directly (the numerical library the issue names
as the reference for the API); error cases are the issue's list of 400s."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import model
from server import codec, compute


@pytest.fixture
def client(app_factory):
    return app_factory().server.test_client()


def strict_json(response):
    # NaN/Infinity are not JSON: refuse them
    def refuse(token):
        raise AssertionError(f"non-JSON constant {token} in response")
    return json.loads(response.get_data(as_text=True), parse_constant=refuse)


def test_healthz(client):
    r = client.get("/healthz")
    assert r.status_code == 200
    body = strict_json(r)
    assert body["cache"] == "FileSystemCache" and "version" in body


def test_environment_configuration(monkeypatch, app_factory, tmp_path):
    monkeypatch.setenv("FDESK_CACHE_TYPE", "SimpleCache")
    monkeypatch.setenv("FDESK_CACHE_THRESHOLD", "17")
    app = __import__("server").create_app({"CACHE_DIR": str(tmp_path)})
    assert app.server.config["CACHE_THRESHOLD"] == 17  # parsed as JSON by from_prefixed_env
    assert strict_json(app.server.test_client().get("/healthz"))["cache"] == "SimpleCache"


def test_default_cache_is_a_bounded_file_cache_in_a_user_folder(monkeypatch, tmp_path):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    app = __import__("server").create_app()
    assert app.server.config["CACHE_TYPE"] == "FileSystemCache"
    assert app.server.config["CACHE_DIR"] == str(tmp_path / "friedmann-desk")
    assert (tmp_path / "friedmann-desk").is_dir()
    assert 0 < app.server.config["CACHE_THRESHOLD"] <= 100000


def test_url_prefix_covers_page_api_and_health(app_factory):
    app = app_factory(URL_PREFIX="cosmo")
    c = app.server.test_client()
    assert c.get("/cosmo/healthz").status_code == 200
    assert c.get("/cosmo/api/v1/compare?m1.h0=70").status_code == 200
    assert c.get("/cosmo/").status_code == 200
    assert c.get("/healthz").status_code == 404


def test_wsgi_callable_is_the_flask_server(monkeypatch, tmp_path):
    monkeypatch.setenv("FDESK_CACHE_DIR", str(tmp_path))
    import importlib

    wsgi = importlib.import_module("server.wsgi")
    assert callable(wsgi.application)
    assert wsgi.application is wsgi.app.server


def test_compare_schema_and_values_equal_model_evaluate(client):
    query = "m1.label=Survey%20A&m1.h0=70&m1.om=0.3&m2.h0=65&m2.ode=0.6&m2.mnu=&ref=2&z=0.1,1,2.5"
    r = client.get("/api/v1/compare?" + query)
    assert r.status_code == 200
    body = strict_json(r)
    assert body["version"] == 1
    assert body["reference"] == 2
    assert body["query"] == codec.encode(codec.decode(query))
    assert [m["slot"] for m in body["models"]] == [1, 2]
    assert body["models"][0]["label"] == "Survey A"
    for m in body["models"]:
        assert set(m) == {"slot", "label", "params", "epochs", "acoustic", "at"}
        assert {"omega_de", "omega_k", "h0", "omega_m", "omega_b", "m_nu", "omega_r"} <= set(m["params"])
        assert set(m["at"]) == {"z", *model.QUANTITIES}
        assert m["at"]["z"] == [0.1, 1.0, 2.5]
    direct = [model.Cosmology(h0=70, omega_m=0.3),
              model.Cosmology.from_dark_energy(h0=65, omega_m=codec.ModelState(slot=2).omega_m,
                                               omega_de=0.6, m_nu=())]
    for m, cosmo in zip(body["models"], direct):
        expected = model.evaluate(cosmo, np.array([0.1, 1.0, 2.5]))
        for key, values in expected.items():
            got = np.array([np.nan if v is None else v for v in m["at"][key]], dtype=float)
            np.testing.assert_array_equal(got, np.where(np.isfinite(values), values, np.nan), err_msg=key)
    assert math.isclose(body["models"][1]["params"]["omega_de"], 0.6)
    assert math.isclose(body["models"][1]["params"]["omega_k"], direct[1].omega_k)


def test_non_finite_values_are_null(client):
    # Einstein-de Sitter has no event horizon (Hogg 1999 / textbook: decelerating forever), so
    # the model reports infinity there, and JSON must carry null.
    body = strict_json(client.get("/api/v1/compare?m1.om=1&m1.tcmb=0&m1.mnu=&z=1"))
    horizon = body["models"][0]["at"]["event_horizon"]
    assert horizon == [None]


def test_unknown_keys_are_warnings_not_errors(client):
    r = client.get("/api/v1/compare?m1.h0=70&colour=teal")
    assert r.status_code == 200
    assert any("colour" in w for w in strict_json(r)["warnings"])


BAD = [
    ("m2.om=abc", "m2.om"),
    ("m1.h0=nan", "m1.h0"),
    ("m1.h0=inf", "m1.h0"),
    ("m1.w0=1e999", "m1.w0"),
    ("m1.om=1e3", "m1.om"),
    ("m1.h0=-5", "m1.h0"),
    ("m5.h0=70", "m5"),
    ("m0.h0=70", "m0"),
    ("m1.ok=0.1&m1.ode=0.5", "m1.ode"),
    ("m1.mnu=0.1,0.1,0.1,0.1", "m1.mnu"),
    ("m1.mnu=0.1,x", "m1.mnu"),
    ("m1.h0=70&z=2e5", "z"),
    ("m1.h0=70&z=-1", "z"),
    ("m1.h0=70&zmax=0", "zmax"),
    ("m1.h0=70&tab=nope", "tab"),
    # Ω_m = 0.1, Ω_de = 2: E² = 0.1(1+z)³ − 1.1(1+z)² + 2 is negative at z = 1 (−1.6), so the
    # expansion turns around in the past: no big bang (textbook bounce condition).
    ("m1.om=0.1&m1.ode=2&m1.tcmb=0", "m1"),
]


@pytest.mark.parametrize("query,field", BAD)
def test_invalid_input_is_a_400_naming_the_field(client, query, field):
    r = client.get("/api/v1/compare?" + query)
    assert r.status_code == 400, r.get_data(as_text=True)
    error = strict_json(r)["error"]
    assert error["field"] == field
    assert error["message"].startswith(field)


def test_range_errors_name_the_accepted_range(client):
    spec = next(p for p in model.PARAMETERS if p.name == "omega_m")
    message = strict_json(client.get("/api/v1/compare?m1.om=7"))["error"]["message"]
    assert codec.range_text(spec) in message


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.tuples(st.sampled_from(["m1.h0", "m1.om", "m2.ok", "m2.ode", "m1.w0", "m1.wa", "m2.mnu",
                                           "z", "ref", "m3.tcmb", "m1.neff", "m4.ob"]),
                          st.one_of(st.sampled_from(["", "0", "-1", "0.3", "1e9", "nan", "2,3", "70", "x"]),
                                    st.floats(-10, 100).map(repr))), max_size=6))
def test_never_a_server_error(client, pairs):
    import urllib.parse

    query = urllib.parse.urlencode(pairs + [("z", "0.5")])
    r = client.get("/api/v1/compare?" + query)
    body = strict_json(r)
    # the answer is decided by the link's first problem: the codec's, then the model's
    state = codec.decode(query)
    problem = next(iter(state.problems()), None) or next(
        (res.problem for res in compute.resolve_all(state) if res.problem is not None), None)
    if problem is None:
        assert r.status_code == 200, body
        assert [m["slot"] for m in body["models"]] == list(state.slots())
        assert all(len(m["at"]["luminosity_distance"]) == 1 for m in body["models"])
    else:
        assert r.status_code == 400, body
        assert body["error"]["field"] == problem.key and body["error"]["message"] == problem.message


def test_editing_one_model_recomputes_only_that_model(app_factory, monkeypatch):
    import server.compute as compute

    app = app_factory()
    c = app.server.test_client()
    computed = []
    real = model.evaluate

    def counting(cosmo, z):
        computed.append(cosmo.h0)
        return real(cosmo, z)

    monkeypatch.setattr(model, "evaluate", counting)
    compute.cosmology_for.cache_clear()
    assert c.get("/api/v1/compare?m1.h0=61&m2.h0=62&z=1").status_code == 200
    first = set(computed)
    assert first == {61.0, 62.0}
    computed.clear()
    assert c.get("/api/v1/compare?m1.h0=61&m2.h0=63&z=1").status_code == 200
    assert set(computed) == {63.0}
