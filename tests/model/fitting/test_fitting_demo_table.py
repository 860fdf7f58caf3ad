"""The synthetic demo table: reproducible from its script, labelled synthetic, and consistent
with the invented truth it was drawn from (the fit lands within 3 sigma of it: for Gaussian
errors each parameter does so with 99.7 % probability)."""

import numpy as np

from model import Cosmology, quick_fit


def test_committed_file_is_what_the_script_makes(demo_script, demo_path):
    assert demo_path.read_text(encoding="utf-8") == demo_script.demo_table()
    assert demo_script.OUTPUT == demo_path


def test_demo_is_labelled_synthetic_everywhere(demo_path, demo_set):
    text = demo_path.read_text(encoding="utf-8")
    assert text.startswith("# SYNTHETIC demo data: not real measurements.")
    data = demo_set
    assert all(label.startswith("synthetic ") for label in data.label)
    kinds = data.kind.tolist()
    assert 200 <= kinds.count("distance_modulus") <= 500
    assert 3 <= len(data) - kinds.count("distance_modulus") <= 15


def test_demo_contains_no_published_redshift_bins(demo_set):
    # DESI 2024 DR1 effective redshifts (arXiv:2404.03000, from memory) must not reappear here
    published = {0.295, 0.51, 0.706, 0.93, 1.317, 1.491, 2.33}
    data = demo_set
    bao = data.z[data.kind != "distance_modulus"]
    assert not published & set(np.round(bao, 3).tolist())


def test_fit_to_the_demo_lands_near_its_invented_truth(demo_script, demo_set):
    truth = demo_script.SPARROWHAWK
    data = demo_set
    start = Cosmology(h0=truth.h0, omega_m=0.3)
    fit = quick_fit(start, data, {"omega_m": (0.1, 0.6), "w0": (-2.0, 0.0), "wa": (-3.0, 2.0)})
    for name in fit.names:
        assert abs(fit.best[name] - getattr(truth, name)) < 3.0 * fit.sigma[name], name
    assert fit.goodness.p_value > 0.001


def test_demo_growth_rows_fit_back_to_the_invented_sigma8(demo_script, demo_set):
    truth = demo_script.SPARROWHAWK  # σ8 = 0.79, invented with the rest of the scenario
    assert int(np.sum(demo_set.kind == "f_sigma8")) == len(demo_script.GROWTH_BINS)
    fit = quick_fit(truth.replace(sigma8=0.9), demo_set, ["sigma8"])
    assert abs(fit.best["sigma8"] - truth.sigma8) < 3.0 * fit.sigma["sigma8"]
    assert 0.005 < fit.sigma["sigma8"] < 0.1
