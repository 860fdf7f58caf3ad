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


# --- Babel's polyfill is left out; layouts/assets/regenerator.js stands in for the one part used

# What regenerator.js implements of regenerator-runtime's context (prev, next, sent, stop and
# abrupt("return", …)) for a compiled async function without try/catch (no try locations).
CONTEXT_MEMBERS = {"prev", "next", "sent", "stop", "abrupt"}


def _call_arguments(text: str, start: int) -> list[str]:
    """The top-level arguments of the call whose "(" is at `start` (brackets matched, string
    literals skipped): enough for minified code."""
    depth, i, args, begin, quote = 0, start, [], start + 1, None
    while i < len(text):
        ch = text[i]
        if quote:
            if ch == "\\":
                i += 1
            elif ch == quote:
                quote = None
        elif ch in "\"'`":
            quote = ch
        elif ch in "([{":
            depth += 1
        elif ch in ")]}":
            depth -= 1
            if depth == 0:
                args.append(text[begin:i])
                return args
        elif ch == "," and depth == 1:
            args.append(text[begin:i])
            begin = i + 1
        i += 1
    raise AssertionError(f"unbalanced call at {start}")


def _regenerator_uses(source: str) -> list[tuple[str, list[str]]]:
    """Each ``regeneratorRuntime.<member>(…)`` in `source`: the member and its arguments."""
    return [(m.group(1), _call_arguments(source, m.end() - 1))
            for m in re.finditer(r"regeneratorRuntime\.(\w+)\(", source)]


def _page_bundles(client, prefix="/") -> dict[str, str]:
    """Every script the page loads but our own (layouts/assets), and dcc's lazy chunks (fetched
    when a component first draws)."""
    html = client.get(prefix).get_data(as_text=True)
    out = {s["src"]: client.get(s["src"]).get_data(as_text=True) for s in _scripts(html)
           if "/assets/" not in s["src"]}
    import dash

    for chunk in sorted((Path(dash.__file__).parent / "dcc").glob("async-*.js")):
        out[chunk.name] = chunk.read_text(encoding="utf-8")
    return out


def test_the_page_leaves_out_babels_polyfill_and_brings_the_regenerator_stand_in(app_factory):
    client = app_factory().server.test_client()
    srcs = [s["src"] for s in _scripts(client.get("/").get_data(as_text=True))]
    assert not [s for s in srcs if "polyfill" in s], srcs
    (stand_in,) = [i for i, s in enumerate(srcs) if "/assets/regenerator.js" in s]
    renderer = next(i for i, s in enumerate(srcs) if "dash_renderer" in s)
    assert stand_in < renderer  # defined before the renderer's lazy loader can run
    # React is still the first script: the polyfill's tag went, nothing else
    assert "/deps/react@" in srcs[0]


def test_the_loaded_bundles_use_only_what_the_regenerator_stand_in_implements(app_factory):
    uses = {name: _regenerator_uses(text) for name, text in _page_bundles(app_factory().server.test_client()).items()}
    found = [(name, member, args) for name, calls in uses.items() for member, args in calls]
    assert found, "no bundle calls regeneratorRuntime any more: regenerator.js can go"
    for name, member, args in found:
        assert member in ("mark", "wrap"), (name, member)
        if member != "wrap":
            continue
        # wrap(inner, outer[, self]): a fourth argument would be the try locations
        assert len(args) <= 3, (name, args[3:])
        inner = args[0].strip().lstrip("(")
        param = re.match(r"function\s*\w*\s*\((\w+)\)", inner)
        assert param, (name, inner[:80])
        context = param.group(1)
        members = set(re.findall(rf"(?<![\w$.]){re.escape(context)}\.(\w+)", inner))
        assert members <= CONTEXT_MEMBERS, (name, members - CONTEXT_MEMBERS)
        assert set(re.findall(rf"(?<![\w$.]){re.escape(context)}\.abrupt\(\s*([\"'])(\w+)\1", inner)) <= {
            ("\"", "return"), ("'", "return")}, name


def test_the_guard_sees_what_the_stand_in_lacks():
    # a state machine with a try block, as Babel compiles `try { await p } catch (e) { ... }`
    # (regenerator's output shape: wrap(inner, outer, this, [[0, 5]]) and context.catch)
    compiled = ('regeneratorRuntime.wrap(function(t){for(;;)switch(t.prev=t.next){case 0:return t.prev=0,'
                't.next=3,p();case 3:t.next=8;break;case 5:t.prev=5,t.t0=t.catch(0);case 8:case"end":return t.stop()}}'
                ',t,null,[[0,5]])')
    ((member, args),) = _regenerator_uses(compiled)
    assert member == "wrap" and len(args) == 4 and args[3] == "[[0,5]]"
    assert {"catch", "t0"} <= set(re.findall(r"(?<![\w$.])t\.(\w+)", args[0])) - CONTEXT_MEMBERS
