"""The production entry: the Dockerfile's own start command and health check run outside Docker
(no engine runs on these machines), under a URL prefix, and the pinned versions for the image.

Check values: HTTP status codes per RFC 9110; everything else is compared with what the app
itself serves or with the installed packages' metadata (importlib.metadata)."""

from __future__ import annotations

import json
import os
import re
import shlex
import subprocess
import sys
from importlib import metadata
from pathlib import Path

import pytest
from packaging.requirements import Requirement

from benchmarks._serving import ROOT, Gunicorn, free_port, get, page_update_payload, post

DOCKERFILE = (ROOT / "Dockerfile").read_text()
VENV_BIN = str(Path(sys.executable).parent)


def _instruction(name: str) -> str:
    lines = [line for line in DOCKERFILE.splitlines() if line.startswith(name + " ")]
    assert len(lines) == 1, f"expected one {name} line in the Dockerfile"
    return lines[0][len(name) + 1:]


def test_dockerfile_is_slim_non_root_and_installs_the_project_with_pins():
    base = _instruction("FROM")
    assert re.fullmatch(r"python:3\.11-slim(-\w+)?", base)
    assert _instruction("USER") not in ("root", "0")
    assert 'RUN pip install -c constraints.txt ".[web]"' in DOCKERFILE.splitlines()
    assert "PORT=" in DOCKERFILE and "WORKERS=" in DOCKERFILE
    assert "server/healthcheck.py" in _instruction("HEALTHCHECK")
    # the documented production command, with PORT/WORKERS from the environment
    assert _instruction("CMD") == 'exec gunicorn --no-control-socket -w "$WORKERS" -b "$HOST:$PORT" server.wsgi:application'
    readme = (ROOT / "README.md").read_text()
    assert "gunicorn --no-control-socket -w" in readme and "server.wsgi:application" in readme
    assert "0.0.0.0" not in DOCKERFILE  # loopback only; the container runs with host networking


@pytest.fixture(scope="module")
def docker_start_command():
    """The CMD line run by a shell, with the environment the Dockerfile sets and a URL prefix."""
    port = free_port()
    env = {"PATH": VENV_BIN + os.pathsep + os.environ["PATH"], "HOST": "127.0.0.1", "PORT": str(port),
           "WORKERS": "2", "FDESK_URL_PREFIX": "/cosmo/", "PYTHONUNBUFFERED": "1"}
    server = Gunicorn(env=env, workers=2, port=port, command=_instruction("CMD"), prefix="/cosmo/")
    with server:
        yield server


def test_docker_start_command_serves_page_assets_api_and_health_under_the_prefix(docker_start_command):
    port = docker_start_command.port
    status, headers, body = get(port, "/cosmo/healthz")
    assert status == 200 and json.loads(body)["status"] == "ok"
    status, headers, page = get(port, "/cosmo/?m1.h0=70")
    assert status == 200 and headers["content-type"].startswith("text/html")
    html = page.decode()
    # every script and stylesheet the page names is served under the prefix
    sources = re.findall(r'<script src="([^"]+)"', html) + re.findall(r'<link rel="stylesheet" href="([^"]+)"', html)
    assert sources and any("/assets/" in s for s in sources)
    for src in sources:
        assert src.startswith("/cosmo/"), src
        assert get(port, src.split("?")[0] + "?" + src.split("?")[1] if "?" in src else src)[0] == 200, src
    config = json.loads(re.search(r'<script id="_dash-config" type="application/json">(.*?)</script>', html).group(1))
    assert config["url_base_pathname"] == "/cosmo/" and config["ui"] is False  # dev tools off
    assert get(port, "/cosmo/_dash-layout")[0] == 200
    assert get(port, "/cosmo/_dash-dependencies")[0] == 200
    status, _, body = get(port, "/cosmo/api/v1/compare?m1.h0=70&z=1")
    assert status == 200 and json.loads(body)["models"][0]["params"]["h0"] == 70
    for outside in ("/healthz", "/api/v1/compare?m1.h0=70", "/_dash-layout"):
        assert get(port, outside)[0] == 404, outside


def test_docker_healthcheck_command_passes_against_the_started_server(docker_start_command):
    command = _instruction("HEALTHCHECK").split(" CMD ", 1)[1]
    env = {**docker_start_command.env, "PATH": VENV_BIN + os.pathsep + os.environ["PATH"]}
    assert subprocess.run(command, shell=True, cwd=ROOT, env=env, timeout=30).returncode == 0
    wrong = {**env, "PORT": str(free_port())}  # nothing listens there
    assert subprocess.run(command, shell=True, cwd=ROOT, env=wrong, timeout=30,
                          stderr=subprocess.DEVNULL).returncode == 1


def test_page_update_through_the_prefix_answers_with_the_link_labels(docker_start_command):
    port = docker_start_command.port
    dependencies = json.loads(get(port, "/cosmo/_dash-dependencies")[2])
    payload = page_update_payload(dependencies, "?m1.label=Prefix%20check&tab=table", "http://127.0.0.1/cosmo/")
    status, headers, body = post(port, "/cosmo/_dash-update-component", payload)
    assert status == 200, body[:300]
    assert "Prefix check" in body.decode()


def test_over_long_links_are_refused_by_the_app_or_by_gunicorn_never_a_5xx(docker_start_command):
    port = docker_start_command.port
    from server import codec

    just_over = "/cosmo/api/v1/compare?m1.label=" + "x" * (codec.MAX_QUERY_LENGTH - 5)
    status, _, body = get(port, just_over)  # still within gunicorn's 4094-byte request line
    assert status == 414 and json.loads(body)["error"]["field"] == "query"
    # 100 kB: past gunicorn's request-line limit, which answers 414 (plain text) itself
    status, headers, body = get(port, "/cosmo/api/v1/compare?z=" + "1," * 50_000)
    assert status == 414 and b"Request Line is too large" in body, body[:200]
    assert get(port, "/cosmo/healthz")[0] == 200  # and the workers carry on


def test_one_log_line_per_request_on_stdout_without_the_query(docker_start_command):
    port = docker_start_command.port
    marker = "Secret%20label%20Zq7"
    for _ in range(3):
        assert get(port, f"/cosmo/api/v1/compare?m1.label={marker}&m1.h0=71.25")[0] == 200
    assert get(port, "/cosmo/api/v1/compare?m1.label=Bad%20Zq7&m1.om=not-a-number")[0] == 400
    lines = [line for line in docker_start_command.stdout().splitlines() if " /cosmo/api/v1/compare " in line]
    assert len(lines) >= 4
    pattern = re.compile(r"\S+Z GET /cosmo/api/v1/compare (200|400|414) \d+\.\d ms cache=(hit|hit-shared|miss|-) pid=\d+")
    assert all(pattern.fullmatch(line) for line in lines), lines
    assert "Zq7" not in docker_start_command.stdout() + docker_start_command.stderr()


def test_constraints_pin_exactly_the_installed_runtime_dependencies_and_readme_lists_them():
    pins = {}
    for line in (ROOT / "constraints.txt").read_text().splitlines():
        if line.strip() and not line.startswith("#"):
            name, version = line.split("==")
            pins[re.sub(r"[-_.]+", "-", name).lower()] = version
    # the runtime closure of the image's install, walked through the installed metadata
    closure, todo = {}, ["numpy", "scipy", "dash", "dash-ag-grid", "plotly", "flask-caching", "gunicorn", "redis",
                        "sqlalchemy", "psycopg", "psycopg-binary"]  # the last two: the postgres extra
    while todo:
        name = re.sub(r"[-_.]+", "-", todo.pop()).lower()
        if name in closure:
            continue
        dist = metadata.distribution(name)
        closure[name] = dist.version
        for text in dist.requires or []:
            req = Requirement(text)
            if req.marker is None or req.marker.evaluate({"extra": ""}):
                todo.append(req.name)
    assert pins == closure
    readme = (ROOT / "README.md").read_text()
    for name in ("dash", "plotly", "flask", "flask-caching", "gunicorn", "redis", "numpy", "scipy", "werkzeug"):
        assert f"{name} {pins[name]}" in readme.lower(), name


def test_the_installed_package_carries_the_page_assets(tmp_path):
    # `pip install .` in the image copies what setuptools' build_py collects (no git there to
    # find data files): the stylesheet must be among them
    subprocess.run([sys.executable, "-c", "from setuptools import setup; setup()", "-q", "egg_info",
                    "--egg-base", str(tmp_path), "build_py", "--build-lib", str(tmp_path / "lib")],
                   check=True, cwd=ROOT, capture_output=True)
    built = {str(p.relative_to(tmp_path / "lib")) for p in (tmp_path / "lib").rglob("*") if p.is_file()}
    assert "layouts/assets/style.css" in built
    assert {"server/wsgi.py", "server/healthcheck.py", "model/__init__.py"} <= built


def test_healthcheck_reads_the_prefix_as_the_app_does():
    from server import healthcheck
    from server.config import normalise_prefix

    for text in ("", "/", "cosmo", "/cosmo", "/cosmo/", "a/b", "//a//b//"):
        url = healthcheck.health_url({"PORT": "9", "FDESK_URL_PREFIX": text})
        assert url == f"http://127.0.0.1:9{normalise_prefix(text)}healthz"
