"""The measurement format's page (``<prefix>format``): served by the app from the package's copy
of docs/measurements-format.md, at the root and under a URL prefix, linked from the data tab;
and the small Markdown converter behind it, checked against the HTML elements of the HTML
Living Standard (headings h1-h6, p, ul/ol/li, pre/code, table/thead/tbody/tr/th/td)."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from layouts.data_panel import SECTIONS_CLASSES
from layouts.ids import ids
from server.format_page import markdown_to_html

ROOT = Path(__file__).resolve().parents[2]
SOURCE = (ROOT / "docs" / "measurements-format.md").read_text(encoding="utf-8")
HEADINGS = [m.group(2) for m in re.finditer(r"^(#{1,6}) (.+)$", SOURCE, re.M)]


def _find_json(node, wanted):
    """The component with id `wanted` in a callback answer's JSON."""
    if isinstance(node, dict):
        if node.get("props", {}).get("id") == wanted:
            return node
        node = list(node.values())
    if isinstance(node, list):
        return next((found for child in node if (found := _find_json(child, wanted)) is not None), None)
    return None


@pytest.mark.parametrize("prefix", ["/", "/cosmo/"])
def test_the_page_answers_with_every_heading_and_the_tab_links_to_it(app_factory, prefix):
    app = app_factory(URL_PREFIX=prefix)
    r = app.server.test_client().get(prefix + "format")
    assert r.status_code == 200 and r.mimetype == "text/html"  # RFC 9110: 200 OK
    body = r.get_data(as_text=True)
    assert HEADINGS and all(h in body for h in HEADINGS)
    assert "<h1>Measurement tables</h1>" in body and "<table>" in body and "<pre><code>" in body
    assert f'href="{prefix}"' in body  # back to the desk
    # the Data tab's tools (their sections built when first shown open: without data, at once) link to it
    deps = app.server.test_client().get(prefix + "_dash-dependencies").get_json()
    dep = next(d for d in deps if f"{ids.data_tools_sections}.children" in d["output"])
    values = {(ids.url, "href"): f"http://localhost{prefix}?tab=data",
              (ids.data_tools_sections, "className"): SECTIONS_CLASSES["empty"]}
    payload = {"output": dep["output"], "changedPropIds": [f"{ids.url}.href"],
               "outputs": [{"id": o.rsplit(".", 1)[0], "property": o.rsplit(".", 1)[1]}
                           for o in dep["output"].strip(".").split("...")],
               "inputs": [{**i, "value": values.get((i["id"], i["property"]))} for i in dep["inputs"]],
               "state": [{**i, "value": values.get((i["id"], i["property"]))} for i in dep["state"]]}
    answer = app.server.test_client().post(prefix + "_dash-update-component", json=payload)
    response = answer.get_json()["response"]
    assert response[ids.data_tools_details]["open"] is True
    link = _find_json(response[ids.data_tools_sections]["children"], ids.format_link)
    assert link is not None and link["props"]["href"] == prefix + "format"


def test_no_page_outside_the_prefix(app_factory):
    app = app_factory(URL_PREFIX="/cosmo/")
    assert app.server.test_client().get("/format").status_code == 404


def test_converter_elements_and_escaping():
    text = ("## Kinds <b>\n\nA *short* line\nand its **second** half, `a|b`, [home](#top), "
            "[bad](javascript:alert).\n\n1. first\n   continued\n2. second\n\n"
            "| a | b |\n|---|---|\n| `x|y` | <i> |\n\n```\n<raw> & code\n```\n")
    assert markdown_to_html(text) == "\n".join([
        "<h2>Kinds &lt;b&gt;</h2>",
        "<p>A <em>short</em> line and its <strong>second</strong> half, <code>a|b</code>, "
        '<a href="#top">home</a>, <a href="#">bad</a>.</p>',
        "<ol><li>first continued</li><li>second</li></ol>",
        "<table><thead><tr><th>a</th><th>b</th></tr></thead><tbody><tr><td><code>x|y</code></td>"
        "<td>&lt;i&gt;</td></tr></tbody></table>",
        "<pre><code>&lt;raw&gt; &amp; code</code></pre>"])


def test_the_package_copy_is_the_document():
    assert (ROOT / "server" / "docs" / "measurements-format.md").read_text(encoding="utf-8") == SOURCE
