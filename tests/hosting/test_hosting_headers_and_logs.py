"""Security headers on every response, the Content-Security-Policy against the page's own
inline scripts, debug mode off, the request log line, error logs without typed text, and no
eval/pickle/shell anywhere near client input.

Check values: the CSP hash-source definition (W3C Content Security Policy Level 3, §2.3.1 and
§6.7.2.2: "'sha256-" + base64 of the SHA-256 digest of the script text + "'"), HTTP status
codes (RFC 9110), and the app's own page."""

from __future__ import annotations

import base64
import hashlib
import io
import json
import re
import tokenize
from pathlib import Path

import pytest

from server import api

ROOT = Path(__file__).resolve().parents[2]
EXPECTED = {"x-content-type-options": "nosniff", "referrer-policy": "no-referrer"}


@pytest.fixture
def client(app_factory):
    return app_factory().server.test_client()


def _csp(response) -> dict[str, list[str]]:
    policy = response.headers["Content-Security-Policy"]
    return {d.split()[0]: d.split()[1:] for d in policy.split("; ")}


def test_every_kind_of_response_carries_the_security_headers(client):
    page = client.get("/?m1.h0=70").get_data(as_text=True)
    script = re.search(r'<script src="(/_dash-component-suites/[^"]+)"', page).group(1)
    responses = {
        "page": client.get("/"), "stylesheet": client.get("/assets/style.css"), "script": client.get(script),
        "layout": client.get("/_dash-layout"), "health": client.get("/healthz"),
        "api": client.get("/api/v1/compare?m1.h0=70"), "api 400": client.get("/api/v1/compare?m1.om=x"),
        "not allowed": client.post("/healthz"), "too long": client.get("/api/v1/compare?z=" + "1," * 3000),
    }
    assert [r.status_code for r in responses.values()] == [200] * 6 + [400, 405, 414]
    for name, response in responses.items():
        for header, value in EXPECTED.items():
            assert response.headers.get(header) == value, name
        csp = _csp(response)
        assert csp["frame-ancestors"] == ["'self'"] and csp["object-src"] == ["'none'"], name


def test_csp_allows_exactly_the_inline_scripts_of_the_page_and_no_eval(client):
    response = client.get("/")
    page = re.sub(r"<!--.*?-->", "", response.get_data(as_text=True), flags=re.S)  # comments never run
    csp = _csp(response)
    inline = [body for attrs, body in re.findall(r"<script([^>]*)>(.*?)</script>", page, flags=re.S)
              if "src=" not in attrs and "application/json" not in attrs]
    assert inline  # Dash's renderer start-up line
    for body in inline:
        digest = base64.b64encode(hashlib.sha256(body.encode()).digest()).decode()
        assert f"'sha256-{digest}'" in csp["script-src"]
    assert "'unsafe-inline'" not in csp["script-src"] and "'unsafe-eval'" not in csp["script-src"]
    assert csp["default-src"] == ["'self'"]


def test_frame_ancestors_can_name_a_site_that_embeds_the_page(app_factory):
    app = app_factory(FRAME_ANCESTORS="'self' https://wiki.example.org")
    assert _csp(app.server.test_client().get("/"))["frame-ancestors"] == ["'self'", "https://wiki.example.org"]


def test_debug_and_dev_tools_are_off_unless_asked(client, monkeypatch, tmp_path):
    page = client.get("/").get_data(as_text=True)
    config = json.loads(re.search(r'<script id="_dash-config" type="application/json">(.*?)</script>', page).group(1))
    assert config["ui"] is False and config.get("hot_reload") in (None, False)
    assert client.application.debug is False
    import dash

    import server.__main__ as entry

    seen = []
    monkeypatch.setattr(dash.Dash, "run", lambda self, **kw: seen.append(kw))
    monkeypatch.setattr(entry, "settle_heap", lambda: None)  # gc.freeze is for serving processes only
    monkeypatch.setenv("FDESK_CACHE_DIR", str(tmp_path))
    monkeypatch.setenv("DASH_DEBUG", "true")  # the environment alone does not switch it on
    entry.main(["--port", "8999"])
    entry.main(["--port", "8999", "--debug"])
    assert [kw["debug"] for kw in seen] == [False, True]
    assert all(kw["host"] == "127.0.0.1" for kw in seen)


def test_one_log_line_per_request_with_status_time_and_cache_outcome(client, capsys):
    capsys.readouterr()
    client.get("/api/v1/compare?m1.label=Typed%20by%20Ann%20Qx9&m1.h0=66.6")
    client.get("/api/v1/compare?m1.label=Typed%20by%20Ann%20Qx9&m1.h0=66.6")
    client.get("/api/v1/compare?m1.label=Qx9&m1.h0=seventy")
    client.get("/healthz")
    out = capsys.readouterr().out.splitlines()
    assert len(out) == 4
    fields = [line.split(" ") for line in out]
    assert [(f[1], f[2], f[3], f[6]) for f in fields] == [
        ("GET", "/api/v1/compare", "200", "cache=miss"), ("GET", "/api/v1/compare", "200", "cache=hit"),
        ("GET", "/api/v1/compare", "400", "cache=-"), ("GET", "/healthz", "200", "cache=-")]
    assert all(float(f[4]) >= 0 and f[5] == "ms" for f in fields)
    assert "Qx9" not in "\n".join(out)


def test_log_lines_cannot_be_forged_through_the_path(client, capsys):
    capsys.readouterr()
    client.get("/x%0aGET /healthz 200 1.0 ms cache=hit")
    out = capsys.readouterr().out.splitlines()
    assert len(out) == 1 and " 404 " in out[0] and "%0A" in out[0]


def test_error_logs_keep_the_stack_but_not_what_was_typed(client, caplog, monkeypatch):
    def fail(query):
        raise ValueError(f"cannot handle {query}")

    monkeypatch.setattr(api, "compare_payload", fail)
    response = client.get("/api/v1/compare?m1.label=Private%20Zk4")
    assert response.status_code == 422
    assert "ValueError: <message withheld>" in caplog.text and "in fail" in caplog.text
    assert "Zk4" not in caplog.text


def _names_in(path: Path) -> set[str]:
    with path.open("rb") as f:
        return {t.string for t in tokenize.tokenize(f.readline) if t.type == tokenize.NAME}


def test_no_eval_pickle_or_shell_in_the_code_that_handles_requests():
    forbidden = {"eval", "exec", "pickle", "marshal", "subprocess", "system", "popen", "shelve", "yaml"}
    for folder in ("server", "layouts"):
        for path in sorted((ROOT / folder).glob("*.py")):
            found = _names_in(path) & forbidden
            assert not found, f"{path.name}: {sorted(found)}"
