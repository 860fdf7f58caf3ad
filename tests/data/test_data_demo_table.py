"""The synthetic demo table: reproducible from its script, labelled synthetic, and consistent
with the invented truth it was drawn from (the fit lands within 3 sigma of it: for Gaussian
errors each parameter does so with 99.7 % probability)."""

import importlib.util
import pathlib

import numpy as np

from model import Cosmology, quick_fit, read_measurements

ROOT = pathlib.Path(__file__).resolve().parents[2]
SCRIPT = ROOT / "scripts" / "make_demo_data.py"
DEMO = ROOT / "data" / "demo_synthetic.csv"


def load_script():
    spec = importlib.util.spec_from_file_location("make_demo_data", SCRIPT)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_committed_file_is_what_the_script_makes():
    assert DEMO.read_text(encoding="utf-8") == load_script().demo_table()


def test_demo_is_labelled_synthetic_everywhere():
    text = DEMO.read_text(encoding="utf-8")
    assert text.startswith("# SYNTHETIC demo data: not real measurements.")
    data = read_measurements(DEMO)
    assert all(label.startswith("synthetic ") for label in data.label)
    kinds = data.kind.tolist()
    assert 200 <= kinds.count("distance_modulus") <= 500
    assert 3 <= len(data) - kinds.count("distance_modulus") <= 15


def test_demo_contains_no_published_redshift_bins():
    # DESI 2024 DR1 effective redshifts (arXiv:2404.03000, from memory) must not reappear here
    published = {0.295, 0.51, 0.706, 0.93, 1.317, 1.491, 2.33}
    data = read_measurements(DEMO)
    bao = data.z[data.kind != "distance_modulus"]
    assert not published & set(np.round(bao, 3).tolist())


def test_fit_to_the_demo_lands_near_its_invented_truth():
    truth = load_script().SPARROWHAWK
    data = read_measurements(DEMO)
    start = Cosmology(h0=truth.h0, omega_m=0.3)
    fit = quick_fit(start, data, {"omega_m": (0.1, 0.6), "w0": (-2.0, 0.0), "wa": (-3.0, 2.0)})
    for name in fit.names:
        assert abs(fit.best[name] - getattr(truth, name)) < 3.0 * fit.sigma[name], name
    assert fit.goodness.p_value > 0.001
