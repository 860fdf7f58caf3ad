"""The page's own script tags: plotly.js and the chunks of dcc.Graph and dcc.Dropdown come with
the page as deferred scripts under fingerprinted URLs (with and without a URL prefix), each
served with a year of caching, and plotly.js is the copy the installed plotly package ships.

Check values: the plotly package's own file and version (`plotly.offline.get_plotlyjs_version`),
HTML's `defer` attribute (WHATWG HTML, "script" element), and ``max-age=31536000``, one year in
seconds (Dash's choice for fingerprinted files, RFC 9111 §5.2.2.1)."""

from __future__ import annotations

import re
from pathlib import Path

import plotly
import pytest
from plotly.offline import get_plotlyjs_version

from server.app import EAGER_SCRIPTS

YEAR = 365 * 24 * 3600


def _scripts(html: str) -> list[dict]:
    return [{"src": m.group(1), "defer": "defer" in m.group(0)}
            for m in re.finditer(r'<script[^>]*\bsrc="([^"]+)"[^>]*>', html)]


@pytest.mark.parametrize("prefix", ["/", "/cosmo/"])
def test_the_eager_scripts_come_with_the_page_deferred_and_cached(app_factory, prefix):
    client = app_factory(URL_PREFIX=prefix).server.test_client()
    page = client.get(prefix)
    assert page.status_code == 200
    scripts = _scripts(page.get_data(as_text=True))
    for namespace, path in EAGER_SCRIPTS:
        stem, ext = path.rsplit("/", 1)[-1].split(".", 1)
        # Dash's fingerprint: <name>.v<version>m<modified time>.<extension>
        pattern = re.compile(rf"^{re.escape(prefix)}_dash-component-suites/{namespace}/"
                             rf"{re.escape(path.rsplit('/', 1)[0] + '/') if '/' in path else ''}"
                             rf"{re.escape(stem)}\.v[0-9_a-z]+m\d+\.{re.escape(ext)}$")
        found = [s for s in scripts if pattern.match(s["src"])]
        assert len(found) == 1 and found[0]["defer"], (path, scripts)
        served = client.get(found[0]["src"])
        assert served.status_code == 200
        assert f"max-age={YEAR}" in served.headers["Cache-Control"]
        assert len(served.data) > 1000
    # the renderer and the component libraries are still ordinary (blocking) scripts
    assert any("dash_renderer" in s["src"] and not s["defer"] for s in scripts)


def test_the_page_serves_the_installed_plotly_js(app_factory):
    client = app_factory().server.test_client()
    (src,) = [s["src"] for s in _scripts(client.get("/").get_data(as_text=True)) if "/plotly/" in s["src"]]
    body = client.get(src).data
    shipped = Path(plotly.__file__).parent / "package_data" / "plotly.min.js"
    assert body == shipped.read_bytes()
    assert f"v{get_plotlyjs_version()}".encode() in body[:400]  # the bundle's banner names its version
