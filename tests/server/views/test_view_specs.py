"""The contract between the builders and the page: every panel's spec is semantic (roles, slots,
numbers, units; no colour, dash, opacity, width, size, Plotly mode or pre-written number) and
layouts can draw it. How layouts turns roles into a look: tests/layouts/."""

from __future__ import annotations

import pytest

from layouts.page import panel_body
from server import codec, data_store, tabs
from server.views.cards import card_status, cards
from server.views.comparison import compare

STYLE_KEYS = {"colour", "color", "dash", "opacity", "width", "size", "mode", "showlegend", "class", "line",
              "marker", "group", "legendgroup", "colours", "style"}
ROLES = {"model", "component", "guide", "data", "residual", "pull"}
DATA = ("z,kind,value,error,label\n0.3,luminosity_distance,1600,40,a\n0.5,dm_over_rd,13.4,0.2,b\n"
        "0.2,distance_modulus,40.2,0.15,sn1\n0.4,distance_modulus,41.9,0.15,sn2\n")


def _walk(node, path=()):
    if isinstance(node, dict):
        yield path, node
        for key, value in node.items():
            yield from _walk(value, path + (key,))
    elif isinstance(node, list):
        for i, value in enumerate(node):
            yield from _walk(value, path + (i,))


@pytest.fixture
def link(ctx):
    digest = data_store.store(DATA).hash
    return (f"m1.label=A&m1.h0=70&m1.om=0.3&m2.label=B&m2.w0=-0.9&m3.label=C&m3.ok=-0.02&data={digest}"
            "&z=0.5,2")


@pytest.mark.parametrize("tab", tabs.TAB_KEYS)
def test_every_panel_spec_is_semantic(link, tab):
    spec = tabs.tab(tab).builder(compare(codec.decode(link + f"&tab={tab}")))
    assert spec["blocks"], tab
    series_seen = 0
    for path, node in _walk(spec):
        assert not STYLE_KEYS & set(node), (tab, path, STYLE_KEYS & set(node))
        if "role" in node:
            series_seen += 1
            assert node["role"] in ROLES, (tab, path)
            assert len(node["x"]) == len(node["y"]) > 0
        if set(node) == {"value", "digits", "unit"}:
            assert isinstance(node["digits"], int) and isinstance(node["unit"], str)
    assert series_seen or tab == "table", tab
    assert panel_body(spec)  # and layouts can draw it


def test_cards_carry_slots_not_colours_and_status_numbers(ctx):
    state = codec.decode("m1.label=A&m1.h0=70&m1.om=0.3&m2.label=Bad&m2.h0=-5")
    assert [c["slot"] for c in cards(state)] == [1, 2] and not any("colour" in c for c in cards(state))
    good, bad = card_status(state, 1), card_status(state, 2)
    derived = dict(good["derived"])
    assert derived["age today"]["unit"] == "Gyr" and derived["Ω_k"]["value"] == 0.0
    assert good["reference"] and not good["errors"]
    assert bad["errors"] and bad["errors"][0].startswith("m2.h0: ") and "expected" in bad["errors"][0]
    assert card_status(state, 4) == {}
