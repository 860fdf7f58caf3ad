"""The link codec: round trips (hypothesis), canonical form, and every malformed value reported by
its key without raising. Accepted ranges are read from model.PARAMETERS, the model's own
published validation ranges, never restated here."""

from __future__ import annotations

import math
import urllib.parse

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import model
from server import codec

SPEC = {p.name: p for p in model.PARAMETERS}
NUMERIC_KEYS = [(k, f) for k, f in codec.MODEL_KEYS if f not in ("label", "m_nu")]


def number_in(name):
    spec = SPEC[name]
    return st.floats(min_value=spec.minimum, max_value=spec.maximum, allow_nan=False,
                     exclude_min=getattr(spec, "exclusive_minimum", False))


masses = st.lists(st.floats(min_value=0, max_value=SPEC["m_nu"].maximum, exclude_min=True),
                  max_size=codec.MAX_MASSES).map(lambda ms: tuple(sorted(ms, reverse=True)))


@st.composite
def model_states(draw, slot):
    closure = draw(st.one_of(number_in("omega_k").map(lambda v: (v, None)),
                             number_in("omega_de").map(lambda v: (None, v))))
    return codec.ModelState(
        slot=slot,
        label=draw(st.text(max_size=codec.MAX_LABEL_LENGTH)),
        h0=draw(number_in("h0")),
        omega_m=draw(number_in("omega_m")),
        omega_b=draw(st.none() | number_in("omega_b")),
        omega_k=closure[0],
        omega_de=closure[1],
        w0=draw(number_in("w0")),
        wa=draw(number_in("wa")),
        t_cmb=draw(number_in("t_cmb")),
        n_eff=draw(number_in("n_eff")),
        m_nu=draw(masses),
        sigma8=draw(number_in("sigma8")),
    )


redshift = st.floats(min_value=codec.Z_MIN, max_value=codec.Z_MAX, allow_nan=False)


@st.composite
def link_states(draw):
    slots = draw(st.lists(st.integers(1, codec.MAX_SLOTS), min_size=1, max_size=codec.MAX_SLOTS, unique=True))
    slots.sort()
    models = tuple(draw(model_states(s)) for s in slots)
    low = draw(st.floats(min_value=0, max_value=codec.Z_MAX / 2, allow_nan=False))
    high = draw(st.floats(min_value=low, max_value=codec.Z_MAX, allow_nan=False, exclude_min=True))
    view = codec.ViewState(
        reference=draw(st.none() | st.sampled_from(slots[1:] or [None])),
        tab=draw(st.sampled_from(codec.TABS)),
        zmax=draw(st.floats(min_value=0.01, max_value=codec.Z_MAX)),
        redshifts=tuple(draw(st.lists(redshift, min_size=1, max_size=codec.MAX_TABLE_REDSHIFTS))),
        distance=draw(st.sampled_from(sorted(codec.DISTANCE_CHOICES))),
        sky_area=draw(st.floats(min_value=1e-6, max_value=codec.FULL_SKY_DEG2)),
        survey=(low, high),
        inverse_quantity=draw(st.sampled_from(codec.invertible())),
        inverse_value=draw(st.floats(min_value=0, max_value=1e9)),
        data=draw(st.none() | st.text("0123456789abcdef", min_size=codec.DATA_HASH_LENGTH,
                                        max_size=codec.DATA_HASH_LENGTH)),
        r_d=draw(st.sampled_from(codec.R_D_CHOICES)),
        fit=draw(st.none() | st.tuples(st.sampled_from(slots), st.lists(
            st.sampled_from(list(codec.FIT_KEYS)), min_size=1, unique=True).map(
            lambda names: tuple(n for n in codec.FIT_KEYS if n in names)))),
    )
    return codec.LinkState(models=models, view=view)


@settings(max_examples=300, deadline=None)
@given(link_states())
def test_decode_inverts_encode(state):
    query = codec.encode(state)
    back = codec.decode(query)
    assert back == state
    assert back.problems() == ()
    assert codec.encode(back) == query


@settings(max_examples=200, deadline=None)
@given(link_states())
def test_encoding_is_canonical_under_reordering_and_respelling(state):
    # The same state spelt differently (shuffled keys, padded numbers) must give the same link.
    query = codec.encode(state)
    pairs = urllib.parse.parse_qsl(query, keep_blank_values=True)
    respelt = []
    for key, value in reversed(pairs):
        try:
            if key.endswith(".label"):
                raise ValueError("a label is text even when it reads as a number")
            float(value)
            value = value + "0" if "." in value and "e" not in value else value
        except ValueError:
            pass
        respelt.append((key, value))
    assert codec.encode(codec.decode(urllib.parse.urlencode(respelt))) == query


key_names = st.sampled_from(
    [f"m{n}.{k}" for n in range(0, 7) for k, _ in codec.MODEL_KEYS] + list(codec.VIEW_KEYS) + ["x", "m1.zz", ""])
raw_values = st.one_of(st.text(max_size=12), st.sampled_from(
    ["nan", "inf", "-inf", "1e400", "1_0", "0x10", "", ",", "0.1,0.2,0.3,0.4", "1,2", "1e-3", " 5 ", "+3", "-0"]),
    st.floats(allow_nan=True).map(repr))


@settings(max_examples=400, deadline=None)
@given(st.lists(st.tuples(key_names, raw_values), max_size=20))
def test_any_query_decodes_and_its_canonical_form_is_stable(pairs):
    query = urllib.parse.urlencode(pairs)
    state = codec.decode(query)  # must not raise
    canonical = codec.encode(state)
    again = codec.decode(canonical)
    assert again == state
    assert codec.encode(again) == canonical
    # every problem names a key of the query (or the slot of one)
    given_keys = {k for k, _ in pairs}
    for problem in state.problems():
        assert any(k == problem.key or k.startswith(problem.key + ".") for k in given_keys), problem


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=200))
def test_arbitrary_text_never_raises(text):
    state = codec.decode(text)
    assert 1 <= len(state.models) <= codec.MAX_SLOTS


@given(st.floats(allow_nan=False, allow_infinity=False))
def test_number_text_is_shortest_round_trip(x):
    text = codec.format_number(x)
    assert float(text) == x
    assert len(text) <= len(repr(x))


def test_number_text_examples():
    # Python's float repr is the shortest round-trip decimal (David Gay's algorithm)
    assert [codec.format_number(v) for v in (67.0, 0.3153, 1e-05, 100000.0, -0.0, 2.5e-7)] == [
        "67", "0.3153", "1e-5", "1e5", "0", "2.5e-7"]


@pytest.mark.parametrize("key,name", NUMERIC_KEYS)
@pytest.mark.parametrize("raw", ["abc", "nan", "inf", "1e999", "1_0", "0x1"])
def test_malformed_number_is_reported_by_key_with_range(key, name, raw):
    state = codec.decode(f"m2.{key}={urllib.parse.quote(raw)}&m1.h0=70")
    problems = [p for p in state.problems() if p.key == f"m2.{key}"]
    assert len(problems) == 1
    spec = SPEC[name]
    assert problems[0].message.startswith(f"m2.{key}: ")
    assert spec.symbol in problems[0].message
    assert codec.range_text(spec) in problems[0].message
    # the model still exists and keeps its default for that field; the other model is unaffected
    assert state.slots() == (1, 2)
    assert state.models[0].problems() == ()


def test_message_reads_as_in_the_issue_example():
    spec = SPEC["omega_m"]
    message = codec.decode("m2.om=abc").problems()[0].message
    low = "<" if getattr(spec, "exclusive_minimum", False) else "≤"
    assert message == (f"m2.om: 'abc' is not a number; expected "
                       f"{spec.minimum:g} {low} Ω_m ≤ {spec.maximum:g}")


@pytest.mark.parametrize("key,name", NUMERIC_KEYS)
def test_out_of_range_is_reported(key, name):
    spec = SPEC[name]
    bad = spec.maximum * 2 + 1
    state = codec.decode(f"m1.{key}={bad!r}")
    assert [p.key for p in state.problems()] == [f"m1.{key}"]
    assert "out of range" in state.problems()[0].message


def test_both_closures_reported_on_the_second():
    state = codec.decode("m1.ok=0.1&m1.ode=0.5")
    assert [p.key for p in state.problems()] == ["m1.ode"]
    assert state.models[0].omega_k == 0.1 and state.models[0].omega_de is None


def test_dark_energy_given_makes_curvature_derived():
    m = codec.decode("m1.ode=0.6").models[0]
    assert m.omega_de == 0.6 and m.omega_k is None
    assert m.physical()["omega_de"] == 0.6 and "omega_k" not in m.physical()


def test_masses():
    assert codec.decode("m1.mnu=0,0.05,0.1").models[0].m_nu == (0.1, 0.05)
    assert codec.decode("m1.mnu=").models[0].m_nu == ()
    state = codec.decode("m1.mnu=0.1,0.1,0.1,0.1")
    assert [p.key for p in state.problems()] == ["m1.mnu"]
    assert f"at most {codec.MAX_MASSES}" in state.problems()[0].message


def test_slot_outside_range_unknown_keys_and_duplicates():
    state = codec.decode("m5.h0=70&m0.om=0.3&m1.h0=70&colour=red&m1.xyz=1&m1.h0=71")
    keys = [p.key for p in state.problems()]
    assert "m5" in keys and "m0" in keys and "m1.h0" in keys
    assert state.unknown == ("colour", "m1.xyz")
    assert state.models[0].h0 == 70  # first value wins
    assert codec.encode(state) == "v=1&m1.h0=70"


def test_redshift_list_limits():
    many = ",".join(["1"] * (codec.MAX_TABLE_REDSHIFTS + 1))
    assert [p.key for p in codec.decode(f"z={many}").problems()] == ["z"]
    assert [p.key for p in codec.decode(f"z=0.5,{codec.Z_MAX * 10!r}").problems()] == ["z"]
    assert codec.decode("z=0.5,2").view.redshifts == (0.5, 2.0)


def test_no_slot_gives_the_demo_models_and_defaults_are_omitted():
    demo = codec.decode("tab=time")
    assert demo.models == codec.demo_models()
    assert codec.decode("").view.tab == "budget"
    default_h0 = codec.ModelState(slot=1).h0
    assert codec.encode(codec.decode(f"m1.h0={default_h0!r}")) == "v=1&m1.label="


def test_reference_must_be_a_present_slot():
    state = codec.decode("m1.h0=70&m3.h0=60&ref=3")
    assert codec.reference_slot(state) == 3
    state = codec.decode("m1.h0=70&ref=2")
    assert codec.reference_slot(state) == 1
    assert [p.key for p in state.problems()] == ["ref"]


def test_labels_survive_any_characters():
    label = "<img src=x onerror=alert(1)><a href=\"http://example.invalid/\">go</a>&%#+é"
    state = codec.LinkState(models=(codec.ModelState(slot=1, label=label),))
    assert codec.decode(codec.encode(state)).models[0].label == label


def test_cache_key_ignores_label_and_slot():
    a = codec.decode("m1.label=A&m1.h0=70").models[0]
    b = codec.decode("m3.label=B&m3.h0=70").models[0]
    assert codec.model_cache_key(a) == codec.model_cache_key(b) == "h0=70"
    assert math.isfinite(a.h0)


def test_data_reference_r_d_choice_and_fit_note():
    state = codec.decode("m1.h0=70&m2.w0=-0.9&data=0123456789abcdef01234567&rd=free&fit=2:w0,om")
    assert state.problems() == ()
    assert (state.view.data, state.view.r_d, state.view.fit) == ("0123456789abcdef01234567", "free", (2, ("om", "w0")))
    # names in the fixed order of codec.FIT_KEYS, defaults (rd=model, no data) omitted
    assert codec.encode(state) == "v=1&data=0123456789abcdef01234567&rd=free&fit=2:om,w0&m1.h0=70&m2.w0=-0.9"
    assert "rd=" not in codec.encode(codec.decode("m1.h0=70&rd=model"))


@pytest.mark.parametrize("key, raw", [("data", "xyz"), ("data", "0123456789ABCDEF01234567"), ("data", "0" * 25),
                                      ("rd", "maybe"), ("fit", "1"), ("fit", "1:"), ("fit", "0:om"),
                                      ("fit", "1:om,om"), ("fit", "1:omega")])
def test_bad_data_keys_are_reported_and_kept_verbatim(key, raw):
    state = codec.decode(f"m1.h0=70&{key}={raw}")
    assert [p.key for p in state.problems()] == [key]
    assert state.problems()[0].message.startswith(f"{key}: ")
    assert f"{key}={urllib.parse.quote(raw, safe=',:')}" in codec.encode(state)


def test_fit_note_for_a_missing_slot_is_dropped_with_a_notice():
    state = codec.decode("m1.h0=70&fit=3:om")
    assert state.view.fit is None and [p.key for p in state.notices] == ["fit"]
    assert "fit=" not in codec.encode(state)
