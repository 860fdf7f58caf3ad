"""Shared set-up for the tests of ``model.fitting``: the demo table and the script that
makes it (the helpers that write tables from arrays are in ``measurement_tables.py``)."""

import importlib.util
import pathlib

import pytest

from model import read_measurements

ROOT = pathlib.Path(__file__).resolve().parents[3]
DEMO_SCRIPT = ROOT / "scripts" / "make_demo_data.py"
DEMO_TABLE = ROOT / "server" / "demo" / "demo_synthetic.csv"


@pytest.fixture(scope="session")
def demo_script():
    """scripts/make_demo_data.py as a module."""
    spec = importlib.util.spec_from_file_location("make_demo_data", DEMO_SCRIPT)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="session")
def demo_path():
    """The committed demo table (package data of ``server``)."""
    return DEMO_TABLE


@pytest.fixture(scope="session")
def demo_set():
    """The demo table parsed."""
    return read_measurements(DEMO_TABLE)
