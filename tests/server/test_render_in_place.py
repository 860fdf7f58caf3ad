"""`render` called through the page-update route as the browser calls it: a panel that differs
from the one drawn in its figures and its tables' cells only is redrawn in place, and only the
figures and the short tables' rows that changed are sent (each body row has its own id, the
Energy budget's small plots are one figure per model, and the panel key store holds a digest of
every row and figure drawn). Dash builds every component under a changed ``children`` afresh,
and Plotly redraws a whole figure for any change in it, so an edit of one model sent and drew
everything before."""

from __future__ import annotations

import json

import pytest

from layouts.ids import ids
from server import codec

BASE = "m1.label=Base&m2.label=Thawing&m2.w0=-0.9&m2.wa=-0.3&m3.label=Open&m3.ok=0.02&tab=budget"
HREF = "http://localhost/?"


def _render_dependency(deps: list[dict]) -> dict:
    return next(d for d in deps if d["output"].startswith(f"..{ids.panel}.children..."))


def _drawn_ids(children) -> dict[str, list[dict]]:
    """The pattern-matching ids in a panel as the page holds it, by type."""
    found: dict[str, list[dict]] = {}

    def walk(node):
        if isinstance(node, list):
            for child in node:
                walk(child)
        elif isinstance(node, dict) and "props" in node:
            ident = node["props"].get("id")
            if isinstance(ident, dict):
                found.setdefault(ident["type"], []).append(ident)
            walk(node["props"].get("children"))

    walk(children)
    return found


def _payload(dep: dict, link: str, drawn: dict[str, list[dict]], key) -> dict:
    outputs = []
    for part in dep["output"].strip(".").split("..."):
        ident, prop = part.rsplit(".", 1)
        if ident.startswith("{"):
            kind = json.loads(ident)["type"]
            outputs.append([{"id": i, "property": prop} for i in drawn.get(kind, [])])
        else:
            outputs.append({"id": ident, "property": prop})
    state = {ids.data_tools: "fd-tools", ids.panel_key: key}
    return {"output": dep["output"], "outputs": outputs, "changedPropIds": [f"{ids.url}.href"],
            "inputs": [{"id": ids.url, "property": "href", "value": HREF + link}],
            "state": [{"id": s["id"], "property": s["property"], "value": state[s["id"]]} for s in dep["state"]]}


@pytest.fixture
def draw(app_factory):
    client = app_factory().server.test_client()
    dep = _render_dependency(client.get("/_dash-dependencies").get_json())

    def post(link, drawn=None, key=None):
        answer = client.post("/_dash-update-component", json=_payload(dep, link, drawn or {}, key or {}))
        assert answer.status_code == 200
        return answer.get_json()["response"]

    return post


def _cells(row) -> list[str]:
    return [cell["props"]["children"] for cell in row]


def test_an_edit_sends_the_changed_row_and_figures_only(draw):
    first = draw(BASE)
    children = first[ids.panel]["children"]
    drawn = _drawn_ids(children)
    assert [r["row"] for r in drawn["fd-row"]] == [0, 1, 2]  # one row a model in the epochs table
    # the budget's small plots are one figure per model
    assert [g["name"] for g in drawn["fd-graph"]] == [
        "fractions-1", "fractions-2", "fractions-3", "densities-1", "densities-2", "densities-3", "w", "q"]
    key = first[ids.panel_key]["data"]
    assert set(key["rows"]) == {"t0:0", "t0:1", "t0:2"}

    # m2 becomes a cosmological constant, as m1: only its row (and the figures) change
    edited = draw(BASE.replace("m2.w0=-0.9&m2.wa=-0.3", "m2.w0=-1"), drawn, key)
    assert ids.panel not in edited  # the panel's elements are kept
    rows = {k: v for k, v in edited.items() if k.startswith("{") and json.loads(k)["type"] == "fd-row"}
    (row,) = rows.values()
    assert row == {"children": row["children"]}
    assert json.loads(next(iter(rows)))["row"] == 1
    assert _cells(row["children"])[0] == "Thawing"
    # of the figures, m2's small plots and the two plots of all models: m1's and m3's stay as drawn
    figures = [json.loads(k)["name"] for k in edited if k.startswith("{") and json.loads(k)["type"] == "fd-graph"]
    assert sorted(figures) == ["densities-2", "fractions-2", "q", "w"]
    # the new row's acceleration redshift (sixth column) is flat ΛCDM's: q = 0 at
    # 1 + z = (2 Ω_Λ / Ω_m)^(1/3) (textbook closed form, radiation neglected: about 0.1 % off)
    cosmo = codec.decode("m1.label=Base").models[0].to_cosmology()
    expected = (2 * cosmo.omega_de / cosmo.omega_m) ** (1 / 3) - 1
    assert float(_cells(row["children"])[5]) == pytest.approx(expected, rel=0.01)
    # the store now holds the new row's digest, the others' unchanged
    new_key = edited[ids.panel_key]["data"]
    assert new_key["key"] == key["key"] and new_key["rows"]["t0:1"] != key["rows"]["t0:1"]
    assert new_key["figures"]["fractions-1"] == key["figures"]["fractions-1"]
    assert new_key["figures"]["fractions-2"] != key["figures"]["fractions-2"]
    assert {k: v for k, v in new_key["rows"].items() if k != "t0:1"} == {
        k: v for k, v in key["rows"].items() if k != "t0:1"}

    # the same link again: nothing of the panel is sent, and no new key
    again = draw(BASE.replace("m2.w0=-0.9&m2.wa=-0.3", "m2.w0=-1"), drawn, new_key)
    assert not [k for k in again if k.startswith("{") and json.loads(k)["type"] in ("fd-row", "fd-graph")]
    assert ids.panel_key not in again


def test_a_row_the_page_does_not_hold_a_digest_of_is_sent(draw):
    first = draw(BASE)
    drawn = _drawn_ids(first[ids.panel]["children"])
    key = first[ids.panel_key]["data"]
    partial = {"key": key["key"], "rows": {k: v for k, v in key["rows"].items() if k != "t0:2"}}
    answer = draw(BASE, drawn, partial)
    rows = [json.loads(k)["row"] for k in answer if k.startswith("{") and json.loads(k)["type"] == "fd-row"]
    assert rows == [2]


def test_a_new_model_builds_the_panel_again(draw):
    first = draw(BASE)
    drawn = _drawn_ids(first[ids.panel]["children"])
    answer = draw(BASE + "&m4.label=Heavy&m4.mnu=0.2", drawn, first[ids.panel_key]["data"])
    # four small plots and a fourth row: the panel's structure changed, so it is sent whole
    assert ids.panel in answer
    assert [r["row"] for r in _drawn_ids(answer[ids.panel]["children"])["fd-row"]] == [0, 1, 2, 3]
    assert set(answer[ids.panel_key]["data"]["rows"]) == {"t0:0", "t0:1", "t0:2", "t0:3"}


def test_a_page_from_before_the_row_digests_gets_its_panel_whole(draw):
    # the store's former value (a digest string) is read as "nothing known": the panel is sent
    first = draw(BASE)
    drawn = _drawn_ids(first[ids.panel]["children"])
    answer = draw(BASE, drawn, first[ids.panel_key]["data"]["key"])
    assert ids.panel in answer
