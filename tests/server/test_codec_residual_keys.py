"""The residual view keys of the link (``res``: which model's residuals, ``rbin``: bin edges in z):
round trips with hypothesis, canonical spelling, and refusals that name the key and what is accepted."""

from __future__ import annotations

import dataclasses
import urllib.parse

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from server import codec, fields

edges = st.lists(st.floats(min_value=0.0, max_value=codec.Z_MAX, allow_nan=False), min_size=2,
                 max_size=fields.MAX_BIN_EDGES, unique=True).map(lambda v: tuple(sorted(x + 0.0 for x in v)))


@settings(max_examples=200, deadline=None)
@given(st.sampled_from(["all", 1, 2]), st.none() | edges)
def test_residual_keys_round_trip(choice, bins):
    base = codec.decode("m1.h0=70&m2.w0=-0.9&tab=data")
    state = dataclasses.replace(base, view=dataclasses.replace(base.view, residual_slot=choice, residual_bins=bins))
    query = codec.encode(state)
    back = codec.decode(query)
    assert back == state and back.problems() == ()
    assert codec.encode(back) == query


def test_defaults_are_left_out_and_values_are_canonical():
    assert "res=" not in codec.encode(codec.decode("m1.h0=70&res=all"))
    state = codec.decode("m1.h0=70&m3.h0=68&res=3&rbin=0.0,0.50,1")
    assert (state.view.residual_slot, state.view.residual_bins) == (3, (0.0, 0.5, 1.0))
    assert codec.encode(state).endswith("res=3&rbin=0,0.5,1&m1.h0=70&m3.h0=68")
    assert state.view.value_text("rbin") == "0,0.5,1"


@pytest.mark.parametrize("key, raw, accepted", [
    ("res", "5", "all or a model slot 1 to 4"), ("res", "one", "all or a model slot"), ("res", "", "all or"),
    ("rbin", "0.5", "2 to 21 increasing"), ("rbin", "1,0.5", "is not increasing"), ("rbin", "0,0,1", "not increasing"),
    ("rbin", "0,abc", "is not a number"), ("rbin", "-1,2", "outside the model's range"),
    ("rbin", ",".join(str(i) for i in range(22)), "22 values given")])
def test_bad_residual_values_name_the_key_and_what_is_accepted(key, raw, accepted):
    state = codec.decode(f"m1.h0=70&{key}={urllib.parse.quote(raw)}")
    (problem,) = state.problems()
    assert problem.key == key and problem.message.startswith(f"{key}: ") and accepted in problem.message
    assert state.view.value_text(key) == raw  # the control keeps showing what was typed


def test_a_slot_without_a_model_gets_a_notice_and_every_model_is_shown():
    state = codec.decode("m1.h0=70&m2.w0=-0.9&res=4")
    (notice,) = state.notices
    assert notice.key == "res" and notice.message.startswith("res: model 4 is not in the link")
    assert "expected all or one of 1, 2" in notice.message
    assert state.view.residual_slot == "all" and "res=" not in codec.encode(state)
