"""Shared test setup: headless Chromium options for dash_duo (see ../shared/TOOLCHAIN.md), a
fresh app per test, built by the factory with a private cache folder and measurement store, and
the measurement store's two engines (SQLite in the test's folder; one real PostgreSQL server
per session, started on first use on a free port and stopped by PID)."""

from __future__ import annotations

import itertools
import os
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))


def pytest_setup_options():
    """dash[testing] hook: the Chrome options used by dash_duo."""
    from selenium.webdriver.chrome.options import Options

    options = Options()
    options.binary_location = os.environ.get("FDESK_CHROMIUM", "/usr/bin/chromium")
    for flag in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync",
                 "--no-first-run", "--window-size=1400,900"):
        options.add_argument(flag)
    return options


@pytest.fixture
def app_factory(tmp_path):
    """Build apps through `create_app` with a private FileSystemCache folder and a private
    measurement store (SQLite in the test's folder)."""
    from server import create_app

    def build(**overrides):
        config = {"CACHE_TYPE": "FileSystemCache", "CACHE_DIR": str(tmp_path / "cache"),
                  "DATABASE_URL": f"sqlite:///{tmp_path / 'data' / 'measurements.sqlite3'}", **overrides}
        return create_app(config)

    return build


_databases = itertools.count()


@pytest.fixture(scope="session")
def postgres():
    """A throwaway PostgreSQL server (benchmarks/_postgres.py) for the whole session."""
    from benchmarks._postgres import PostgresServer
    from benchmarks._serving import free_port

    server = PostgresServer(free_port()).start()
    yield server
    server.remove()


@pytest.fixture(params=["sqlite", "postgresql"])
def database_url(request, tmp_path):
    """The URL of an empty measurement store on each engine."""
    if request.param == "sqlite":
        return f"sqlite:///{tmp_path / 'store' / 'measurements.sqlite3'}"
    return request.getfixturevalue("postgres").create_database(f"store_{os.getpid()}_{next(_databases)}")
