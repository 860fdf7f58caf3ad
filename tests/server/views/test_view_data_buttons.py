"""Which data-tool buttons can act (`data_tools.button_states`), and the reason shown when not:
measurements needed for fit and map, a fit for loading, and `state.with_fit`'s own refusals
(every slot taken, the start model gone)."""

from __future__ import annotations

from server import codec
from server.views import data_tools

HASH = "a" * codec.DATA_HASH_LENGTH
FIT = {"slot": 1, "names": ["omega_m"], "cosmology": {"omega_m": 0.29}}


def test_no_data_no_fit():
    s = data_tools.button_states(codec.decode("m1.h0=70"), None)
    assert s == {"fit": "load measurements first", "map": "load measurements first", "load": "run a fit first",
                 "load_label": "load the fit into a free slot"}


def test_with_data_and_a_fit_the_load_button_names_its_slot():
    s = data_tools.button_states(codec.decode(f"m1.h0=70&m3.h0=68&data={HASH}"), FIT)
    assert (s["fit"], s["map"], s["load"], s["load_label"]) == ("", "", "", "load the fit into m2")


def test_refusals_of_loading_are_the_reasons():
    full = codec.decode(f"m1.h0=70&m2.h0=68&m3.h0=66&m4.h0=64&data={HASH}")
    assert data_tools.button_states(full, FIT)["load"] == "all 4 slots are taken; remove a model first"
    gone = codec.decode(f"m2.h0=68&data={HASH}")
    assert "start model m1 is no longer in the link" in data_tools.button_states(gone, FIT)["load"]
    # a data reference that cannot be read counts as none
    assert data_tools.button_states(codec.decode("m1.h0=70&data=xyz"), None)["fit"] == "load measurements first"
