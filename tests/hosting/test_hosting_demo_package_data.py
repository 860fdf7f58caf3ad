"""The demo table travels with the packages: a wheel built from exactly what the Dockerfile copies
holds it, and an installed copy (a throwaway venv, run outside the repository) loads it through
the app's "load demo data" path.

Check values: the wheel is a zip archive (PEP 427), its members compared byte for byte with the
committed table; HTTP 201 for the stored set (RFC 9110); the parsed row count compared with the
table parsed here."""

from __future__ import annotations

import json
import os
import shlex
import shutil
import subprocess
import sys
import sysconfig
import venv
import zipfile
from pathlib import Path

import pytest

import model

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "server" / "demo" / "demo_synthetic.csv"
MEMBER = "server/demo/demo_synthetic.csv"


def _copied_like_the_image(destination: Path) -> None:
    """Copy what the Dockerfile's COPY lines copy, and nothing else."""
    for line in (ROOT / "Dockerfile").read_text().splitlines():
        if not line.startswith("COPY "):
            continue
        for source in shlex.split(line)[1:-1]:
            path = ROOT / source
            if path.is_dir():
                shutil.copytree(path, destination / source, ignore=shutil.ignore_patterns("__pycache__"))
            else:
                (destination / source).parent.mkdir(parents=True, exist_ok=True)
                shutil.copy2(path, destination / source)


@pytest.fixture(scope="module")
def wheel(tmp_path_factory) -> Path:
    base = tmp_path_factory.mktemp("wheel")
    source = base / "src"
    source.mkdir()
    _copied_like_the_image(source)
    out = base / "dist"
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "--no-build-isolation", "--no-index",
                    "-q", "-w", str(out), str(source)], check=True, cwd=base, timeout=240)
    (built,) = out.glob("friedmann_desk-*.whl")
    return built


def test_the_wheel_holds_the_demo_table(wheel):
    with zipfile.ZipFile(wheel) as archive:
        assert MEMBER in archive.namelist()
        assert archive.read(MEMBER) == DEMO.read_bytes()


def test_the_wheel_holds_the_format_description(wheel):
    # server/docs/measurements-format.md links to docs/; the wheel must hold the text itself
    with zipfile.ZipFile(wheel) as archive:
        assert archive.read("server/docs/measurements-format.md") == (ROOT / "docs" / "measurements-format.md").read_bytes()


def test_an_installed_copy_loads_the_demo_through_the_app(wheel, tmp_path):
    env_dir = tmp_path / "venv"
    venv.EnvBuilder(system_site_packages=True, with_pip=False).create(env_dir)
    python = env_dir / "bin" / "python"
    # the installed copy sees this interpreter's libraries (dash, numpy...) through a plain path
    # line, which does not run the editable install's finder kept beside them
    target = Path(subprocess.check_output([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                                          text=True).strip())
    (target / "zz_test_libraries.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    subprocess.run([sys.executable, "-m", "pip", "--python", str(python), "install", "--no-deps", "--no-index",
                    "-q", str(wheel)], check=True, timeout=240)
    script = (
        "import json, server, model\n"
        "from server import codec, create_app, data_store\n"
        "from server.views import data_tools\n"
        "app = create_app({'CACHE_TYPE': 'SimpleCache'})\n"
        "with app.server.test_request_context():\n"
        "    search, message = data_tools.store_upload(codec.decode(''), data_store.demo_bytes(), None,\n"
        "                                          data_store.DEMO_PATH.name)\n"
        "response = app.server.test_client().post('/api/v1/data', data=data_store.demo_bytes(),\n"
        "                                         content_type='text/csv')\n"
        "page = app.server.test_client().get('/format')\n"
        "print(json.dumps({'server': server.__file__, 'model': model.__file__, 'search': search,\n"
        "                  'message': message, 'status': response.status_code,\n"
        "                  'format': [page.status_code, page.get_data(as_text=True)]}))\n")
    outside = tmp_path / "elsewhere"
    outside.mkdir()
    environment = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "PYTHONHOME")}
    environment["XDG_DATA_HOME"] = str(tmp_path / "data")  # the measurement store: not the user's own
    run = subprocess.run([str(python), "-c", script], cwd=outside, env=environment, capture_output=True,
                         text=True, timeout=240)
    assert run.returncode == 0, run.stderr[-3000:]
    answer = json.loads(run.stdout.strip().splitlines()[-1])
    for package in ("server", "model"):
        assert Path(answer[package]).is_relative_to(target), answer[package]  # not this worktree
    assert answer["status"] == 201
    assert answer["format"][0] == 200 and "<h1>Measurement tables</h1>" in answer["format"][1]
    rows = len(model.read_measurements(DEMO))
    assert f"Stored {rows} measurements from synthetic demo data" in answer["message"]
    assert "data=" in answer["search"] and "tab=data" in answer["search"]
