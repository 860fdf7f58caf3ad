"""`sync` called with no trigger, through the page-update route as the browser calls it: on the
page's first load it fills the view bar and the tab from the link; when inputs were only
inserted later (a panel's controls, a card), it answers with nothing, since they were built from
the link (Dash's "204 No Content" for a callback that updates nothing, RFC 9110 §15.3.5)."""

from __future__ import annotations

import json

import pytest

from layouts.ids import ids

LINK = "?m1.label=One&m2.label=Two&m2.w0=-0.9&tab=data&zmax=4&res=2"
VIEW_KEYS = ("res", "rbin", "rd")  # the Data panel's controls, as the panel inserts them


def _sync_payload(deps: list[dict], shells: dict) -> dict:
    dep = next(d for d in deps if d["output"].startswith(f"..{ids.url}.search..."))
    views = [{"id": {"type": "fd-view", "key": k}, "property": "value", "value": v}
             for k, v in zip(VIEW_KEYS, ("2", "", "model"))]
    bodies = [{"id": {"type": "fd-card-body", "slot": s}, "property": "className", "value": "fd-card-body"}
              for s in (1, 2, 3, 4)]

    def pattern_value(item, plain):
        key = json.loads(item["id"])["type"] if item["id"].startswith("{") else None
        if key == "fd-view":
            return views
        if key == "fd-card-body":
            return bodies
        if key is not None:
            return []  # no card built: no inputs of that pattern in the page
        return {**item, "value": plain.get(item["id"])}

    plain = {ids.url: LINK, ids.tab: "distances", ids.reference: 1, ids.zmax: "3", ids.add: 0, ids.shells: shells}
    outputs = []
    for part in dep["output"].strip(".").split("..."):
        ident, prop = part.rsplit(".", 1)
        if ident.startswith("{"):
            kind = json.loads(ident)["type"]
            outputs.append([{"id": v["id"], "property": prop} for v in (views if kind == "fd-view" else bodies)])
        else:
            outputs.append({"id": ident, "property": prop})
    return {"output": dep["output"], "outputs": outputs, "changedPropIds": [],
            "inputs": [pattern_value(i, plain) for i in dep["inputs"]],
            "state": [pattern_value(s, plain) for s in dep["state"]]}


@pytest.fixture
def post(app_factory):
    client = app_factory().server.test_client()
    deps = client.get("/_dash-dependencies").get_json()
    return lambda shells: client.post("/_dash-update-component", json=_sync_payload(deps, shells))


def test_on_the_first_load_the_view_bar_and_the_tab_show_the_link(post):
    answer = post({"filled": [], "open": None})  # the shells' store as the layout has it
    assert answer.status_code == 200
    response = answer.get_json()["response"]
    assert response[ids.tab]["data"] == "data" and response[ids.zmax]["value"] == "4"
    assert response[ids.shells]["data"]["filled"] == [1, 2]
    views = {json.loads(k)["key"]: v["value"] for k, v in response.items() if k.startswith('{"key"')}
    assert views["res"] == "2"


def test_inputs_inserted_later_get_no_answer(post):
    answer = post({"filled": [1, 2], "open": None})  # the page has been filled from the link
    assert answer.status_code == 204 and answer.data == b""
