"""`sync` called through the page-update route as the browser calls it. With no trigger: on the
page's first load it fills the view bar and the tab from the link; when inputs were only
inserted later (a card built), it answers with nothing, since they were built from the link
(Dash's "204 No Content" for a callback that updates nothing, RFC 9110 §15.3.5). A panel's own
controls are not its inputs: the clientside `fd.panelViews` passes their changes on through the
`ids.panel_views` store, and `sync` writes them into the link."""

from __future__ import annotations

import json

import pytest

from layouts.ids import ids
from server import codec
from server.views.page import VIEW_BAR

LINK = "?m1.label=One&m2.label=Two&m2.w0=-0.9&tab=data&zmax=4&res=2&du=Gpc"
VIEW_KEYS = tuple(key for key, _, _ in VIEW_BAR)  # the view bar's lists, always in the page


def _sync_dependency(deps: list[dict]) -> dict:
    return next(d for d in deps if d["output"].startswith(f"..{ids.url}.search..."))


def _sync_payload(deps: list[dict], shells: dict, panel_views=None, trigger=None) -> dict:
    dep = _sync_dependency(deps)
    views = [{"id": {"type": "fd-view", "key": k}, "property": "value", "value": v}
             for k, v in zip(VIEW_KEYS, ("Gpc", "auto", "auto"))]  # as the link has them
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

    plain = {ids.url: LINK, ids.tab: "data", ids.reference: 1, ids.zmax: "4", ids.add: 0, ids.shells: shells,
             ids.panel_views: panel_views}
    outputs = []
    for part in dep["output"].strip(".").split("..."):
        ident, prop = part.rsplit(".", 1)
        if ident.startswith("{"):
            kind = json.loads(ident)["type"]
            outputs.append([{"id": v["id"], "property": prop} for v in (views if kind == "fd-view" else bodies)])
        else:
            outputs.append({"id": ident, "property": prop})
    changed = [] if trigger is None else [trigger] if isinstance(trigger, str) else list(trigger)
    return {"output": dep["output"], "outputs": outputs, "changedPropIds": changed,
            "inputs": [pattern_value(i, plain) for i in dep["inputs"]],
            "state": [pattern_value(s, plain) for s in dep["state"]]}


@pytest.fixture
def client(app_factory):
    return app_factory().server.test_client()


@pytest.fixture
def post(client):
    deps = client.get("/_dash-dependencies").get_json()
    return lambda shells, **kw: client.post("/_dash-update-component", json=_sync_payload(deps, shells, **kw))


def test_on_the_first_load_the_view_bar_and_the_tab_show_the_link(post):
    answer = post({"filled": [], "open": None})  # the shells' store as the layout has it
    assert answer.status_code == 200
    response = answer.get_json()["response"]
    assert response[ids.tab]["data"] == "data" and response[ids.zmax]["value"] == "4"
    assert response[ids.shells]["data"]["filled"] == [1, 2]
    views = {json.loads(k)["key"]: v["value"] for k, v in response.items() if k.startswith('{"key"')}
    assert views == {"du": "Gpc", "xs": "auto", "ys": "auto"}


def test_inputs_inserted_later_get_no_answer(post):
    answer = post({"filled": [1, 2], "open": None})  # the page has been filled from the link
    assert answer.status_code == 204 and answer.data == b""


def test_a_panels_controls_are_not_inputs_of_sync_but_pass_through_a_clientside_relay(client):
    deps = client.get("/_dash-dependencies").get_json()
    sync = _sync_dependency(deps)
    inputs = [i["id"] for i in sync["inputs"]]
    kinds = [json.loads(i)["type"] for i in inputs if i.startswith("{")]
    assert "fd-view" in kinds and "fd-panel-view" not in kinds  # inserted with each panel: no round trip
    assert ids.panel_views in inputs
    (relay,) = [d for d in deps if d["output"] == f"{ids.panel_views}.data"]
    assert relay["clientside_function"] == {"namespace": "fd", "function_name": "panelViews"}
    assert [json.loads(i["id"])["type"] for i in relay["inputs"]] == ["fd-panel-view"]
    assert relay["prevent_initial_call"] is True


def test_a_panel_control_change_is_written_into_the_link(post):
    shells = {"filled": [1, 2], "open": None}
    answer = post(shells, panel_views={"pairs": [["res", "1"], ["rbin", "0,0.5,1"], ["rd", "model"]], "at": 1},
                  trigger=f"{ids.panel_views}.data")
    assert answer.status_code == 200
    search = answer.get_json()["response"][ids.url]["search"]
    view = codec.decode(search).view
    assert view.value_text("res") == "1" and view.value_text("rbin") == "0,0.5,1"
    # the rest of the link is kept: the models and the view bar's unit
    assert [m.name for m in codec.decode(search).models] == ["One", "Two"] and view.value_text("du") == "Gpc"
    # the same values as the link's: nothing to write
    same = post(shells, panel_views={"pairs": [["res", "2"]], "at": 2}, trigger=f"{ids.panel_views}.data")
    # nothing is written: Dash answers with an empty response (its lists of no_update count as outputs)
    assert same.status_code == 200 and same.get_json()["response"] == {}


def test_on_the_first_load_with_the_stores_start_listed_the_link_is_shown_not_rewritten(post):
    # what Chromium sends as the page mounts: the location's search and the panel controls'
    # empty store, both listed as changed (seen in the page-update request)
    answer = post({"filled": [], "open": None}, panel_views=None,
                  trigger=[f"{ids.panel_views}.data", f"{ids.url}.search"])
    assert answer.status_code == 200
    response = answer.get_json()["response"]
    assert ids.url not in response  # the link as typed stays, bad values and all, for the notice
    assert response[ids.tab]["data"] == "data" and response[ids.zmax]["value"] == "4"
