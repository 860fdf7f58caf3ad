"""Hostile and malformed links, fuzzed with hypothesis, and the explicit limits.

Properties: the decoder never raises; the API never answers 5xx and never lets an exception
out; every refusal is JSON naming the key at fault, a key of the query itself (or ``query``
for its length). Check values: HTTP status codes (RFC 9110), the limits published in
`server.codec` and README.md, and `urllib.parse` (Python's standard library) for what a query
contains."""

from __future__ import annotations

import json
import string
import urllib.parse

import pytest
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from server import codec, compute

NUMBERS_AND_NOT = st.sampled_from([
    "nan", "NaN", "-nan", "inf", "-inf", "+Infinity", "infinity", "1e999", "-1e999", "1e-999", "1e308",
    "9" * 400, "0x1p3", "0x10", "1_000", "１２", "٣", "1,5", "1.5.5", "--1", "", " ", "0", "-0", "+0.3",
    ".", "e5", "1e", "１e5", "\u00a070", "70\x00", "7O", "NaN,NaN", "0.3,nan", "1e5000,1",
])
TEXT = st.text(st.characters(codec="utf-8", exclude_categories=("Cs",)), max_size=120)
SLOT_KEYS = [f"m{n}.{k}" for n in (0, 1, 2, 4, 5, 12) for k, _ in codec.MODEL_KEYS]
KEYS = st.one_of(st.sampled_from(SLOT_KEYS + list(codec.VIEW_KEYS)), TEXT,
                 st.sampled_from(["m1.", "m.h0", "m01.h0", "m٣.h0", "m99999999999999999999.h0", "m1.H0",
                                  "m1.h0 ", "%00", "&", "=", "?v"]))
VALUES = st.one_of(NUMBERS_AND_NOT, TEXT,
                   st.lists(NUMBERS_AND_NOT, max_size=8).map(",".join),
                   st.floats(allow_nan=True, allow_infinity=True).map(repr),
                   st.integers(min_value=-10 ** 30, max_value=10 ** 30).map(str))
PAIRS = st.lists(st.tuples(KEYS, VALUES), max_size=12)
ALLOWED = {200, 400, 404, 414, 422}


def _query(pairs) -> str:
    return urllib.parse.urlencode(pairs, quote_via=urllib.parse.quote)


def _keys_of(raw: bytes | str) -> set[str]:
    text = raw.decode("utf-8", errors="replace") if isinstance(raw, bytes) else raw
    text = text.lstrip("?")  # a leading "?" belongs to the link's syntax, as in the codec
    return {k for k, _ in urllib.parse.parse_qsl(text, keep_blank_values=True, errors="replace")}


def _slot_of(key: str) -> str:
    return key.split(".", 1)[0]


def check_answer(client, raw: bytes | str):
    # WSGI carries the query as latin-1 text: this round-trips any bytes unchanged
    wire = raw.decode("latin-1") if isinstance(raw, bytes) else raw
    response = client.get("/api/v1/compare", environ_overrides={"QUERY_STRING": wire})
    assert response.status_code in ALLOWED, (response.status_code, raw[:200])
    body = json.loads(response.get_data(as_text=True))
    keys = _keys_of(raw)
    if response.status_code == 200:
        for warning in body["warnings"]:
            assert warning.split(": unknown key")[0] in keys
        return body
    field, message = body["error"]["field"], body["error"]["message"]
    assert field, message
    assert field in message, (field, message)
    assert field in keys or field in {_slot_of(k) for k in keys} or field == "query" \
        or (field in ("ref",) and "ref" in keys), (field, keys)
    return body


@pytest.fixture(scope="module")
def client(tmp_path_factory):
    from server import create_app

    return create_app({"CACHE_TYPE": "SimpleCache", "CACHE_DIR": str(tmp_path_factory.mktemp("c"))}).server.test_client()


@settings(max_examples=300, deadline=None)
@given(st.one_of(st.binary(max_size=300).map(lambda b: b.decode("latin-1")), TEXT, PAIRS.map(_query),
                 PAIRS.map(lambda p: "&".join(f"{k}={v}" for k, v in p))))
@example("m1.h0=" + "9" * 5000)
@example("ref=" + "1" * 5000)
@example("m" + "1" * 5000 + ".h0=70")
def test_decoder_never_raises_and_every_problem_names_its_key(query):
    state = codec.decode(query)
    for problem in state.problems():
        assert problem.key and problem.message.startswith(problem.key), problem
    codec.encode(state)  # and the canonical link can always be written back


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture,
                                                                    HealthCheck.too_slow])
@given(st.one_of(st.binary(max_size=400), PAIRS.map(_query).map(str.encode),
                 st.lists(st.tuples(st.sampled_from(["m1.h0", "m1.om", "z", "m2.w0"]), NUMBERS_AND_NOT),
                          min_size=2, max_size=6).map(_query).map(str.encode)))
@example(b"m1.h0=70&m1.h0=71&m1.h0=nan")  # repeated keys
@example(b"m1.h0=%ff%fe&m1.label=%00%0a%0d")
@example(b"m1.h0=" + b"9" * 3900)
@example(b"m2.om=abc")
@example(b"m1.h0=70&zmax=100000")  # the largest zmax once landed an ulp outside the model's range
def test_api_never_fails_and_every_refusal_names_the_key(client, raw):
    check_answer(client, raw)


def test_query_of_100_kb_is_refused_naming_the_longest_key(client):
    raw = "m1.label=ok&m2.label=" + "x" * 100_000
    body = check_answer(client, raw)
    assert body["error"]["field"] == "query" and "m2.label" in body["error"]["message"]
    assert str(codec.MAX_QUERY_LENGTH) in body["error"]["message"]


def test_5000_redshifts_are_refused_naming_z(client):
    raw = "m1.h0=70&z=" + ",".join(["1"] * 5000)
    body = check_answer(client, raw)
    assert "z" in body["error"]["message"].split("longest is ")[1][:3]
    # within the length limit, the redshift count is refused by its own limit
    body = check_answer(client, "m1.h0=70&z=" + ",".join(["1"] * (codec.MAX_TABLE_REDSHIFTS + 1)))
    assert body["error"]["field"] == "z" and f"up to {codec.MAX_TABLE_REDSHIFTS}" in body["error"]["message"]


def test_label_slot_and_mass_limits(client):
    assert check_answer(client, "m1.label=" + "a" * codec.MAX_LABEL_LENGTH)["models"][0]["label"] == "a" * 80
    body = check_answer(client, "m1.label=" + "a" * (codec.MAX_LABEL_LENGTH + 1))
    assert body["error"]["field"] == "m1.label"
    body = check_answer(client, f"m{codec.MAX_SLOTS + 1}.h0=70")
    assert body["error"]["field"] == f"m{codec.MAX_SLOTS + 1}"
    assert check_answer(client, "m1.mnu=0.1,0.1,0.1,0.1")["error"]["field"] == "m1.mnu"


def test_the_longest_ordinary_link_fits_the_query_limit(client):
    # four models with every key set, 80-character labels and 50 redshifts
    pairs = []
    for n in range(1, codec.MAX_SLOTS + 1):
        pairs += [(f"m{n}.label", string.ascii_letters[:40] * 2), (f"m{n}.h0", "67.3612"), (f"m{n}.om", "0.315312"),
                  (f"m{n}.ob", "0.049312"), (f"m{n}.ok", "-0.012345"), (f"m{n}.w0", "-0.912345"),
                  (f"m{n}.wa", "-0.312345"), (f"m{n}.tcmb", "2.7255"), (f"m{n}.neff", "3.044"),
                  (f"m{n}.mnu", "0.06,0.0123,0.0012")]
    pairs += [("z", ",".join(f"{0.1 * i + 0.0123:.4f}" for i in range(1, 51))), ("tab", "table"), ("ref", "2")]
    query = _query(pairs)
    assert len(query) < codec.MAX_QUERY_LENGTH
    assert check_answer(client, query)["models"][3]["label"] == pairs[0][1]


def test_curve_sampling_is_fixed_whatever_the_link_asks(app_factory):
    with app_factory().server.app_context():
        for zmax in (0.01, 3.0, codec.Z_MAX):
            curves = compute.model_curves("h0=70", zmax)
            assert len(curves["z"]) == compute.GRID_POINTS == 400
            assert len(curves["at"]["luminosity_distance"]) == 400


def test_oversized_request_body_is_refused_with_413(app_factory):
    client = app_factory().server.test_client()
    limit = client.application.config["MAX_CONTENT_LENGTH"]
    response = client.post("/_dash-update-component", data=b"{" + b" " * (limit + 1) + b"}",
                           content_type="application/json")
    assert response.status_code == 413 and response.get_json()["error"]["field"] == "body"
