"""The measurement-kind registry: every kind's prediction is the model.evaluate quantity it names
(divided by r_d or shifted by the offset as its nuisance says), units are spelled one way, and
a new kind needs one registry entry and nothing else.

References: model.evaluate (itself checked against an mpmath reference and Hogg 1999,
arXiv:astro-ph/9905116, in tests/model); the BAO observables D_M/r_d, D_H/r_d and D_V/r_d
(Eisenstein et al. 2005, ApJ 633, 560); units as in docs/measurements-format.md.
"""

import numpy as np
import pytest

from measurement_tables import BAO_DISTANCE, table_text
from model import (MEASUREMENT_KINDS, QUANTITIES, Cosmology, MeasurementFormatError,
                   MeasurementKind, Nuisances, evaluate, goodness_of_fit, parse_measurements,
                   quick_fit)

MODEL = Cosmology(h0=71.0, omega_m=0.29, omega_k=0.04, w0=-0.93, wa=0.1, label="kinds")
R_D = 149.0  # Mpc, fixed for the BAO rows
OFFSET = -0.21  # mag, fixed supernova offset
Z = np.array([0.07, 0.6, 1.9])


def test_every_kind_predicts_the_evaluate_quantity_it_names():
    rows = [{"z": z, "kind": key, "value": 40.0 if key == "distance_modulus" else 10.0, "error": 1.0}
            for key in MEASUREMENT_KINDS for z in Z]
    data = parse_measurements(table_text(rows))
    parts = goodness_of_fit(MODEL, data, Nuisances(r_d=R_D, offset=OFFSET)).by_kind()
    assert set(parts) == set(MEASUREMENT_KINDS)
    q = evaluate(MODEL, Z)
    for key, kind in MEASUREMENT_KINDS.items():
        want = q[kind.quantity]
        if kind.nuisance == "r_d":
            want = want / R_D
        elif kind.nuisance == "offset":
            want = want + OFFSET
        np.testing.assert_allclose(parts[key].prediction, want, rtol=1e-12, err_msg=key)


def test_the_bao_ratios_divide_the_documented_distances():
    # D_M/r_d, D_H/r_d and D_V/r_d (Eisenstein et al. 2005), not some other distance
    for key, distance in BAO_DISTANCE.items():
        assert (MEASUREMENT_KINDS[key].quantity, MEASUREMENT_KINDS[key].nuisance) == (distance, "r_d")
    assert [k for k, v in MEASUREMENT_KINDS.items() if v.nuisance == "offset"] == ["distance_modulus"]


def test_units_titles_and_quantities():
    documented = {"distance_modulus": "mag", "luminosity_distance": "Mpc", "angular_diameter_distance": "Mpc",
                  "comoving_distance": "Mpc", "dm_over_rd": "", "dh_over_rd": "", "dv_over_rd": "",
                  "hubble_parameter": "km/s/Mpc", "f_sigma8": ""}
    assert {k: v.unit for k, v in MEASUREMENT_KINDS.items()} == documented
    for key, kind in MEASUREMENT_KINDS.items():
        assert kind.key == key and kind.title and kind.description
        assert kind.unit != "1"  # dimensionless is spelled ""
        assert kind.quantity in QUANTITIES
        if not kind.nuisance:  # a direct comparison is in the quantity's own unit
            assert kind.unit == QUANTITIES[kind.quantity].unit, key


def test_a_kind_with_an_unknown_quantity_or_nuisance_is_refused():
    with pytest.raises(ValueError, match="quantity"):
        MeasurementKind("x", "", "x", "x", "growth_rate")
    with pytest.raises(ValueError, match="nuisance"):
        MeasurementKind("x", "", "x", "x", "comoving_distance", nuisance="h")


def test_a_new_kind_is_one_registry_entry(monkeypatch):
    # D_A/r_d: not a kind today; registering it is all it takes to read, score and fit it
    kind = MeasurementKind("da_over_rd", "", "D_A / r_d", "angular-diameter distance over r_d",
                           "angular_diameter_distance", nuisance="r_d")
    with pytest.raises(MeasurementFormatError, match="unknown kind"):
        parse_measurements("z,kind,value,error\n0.5,da_over_rd,8,0.1\n")
    monkeypatch.setitem(MEASUREMENT_KINDS, kind.key, kind)
    z = np.array([0.4, 0.8, 1.3, 2.1])
    truth = evaluate(MODEL, z)["angular_diameter_distance"] / R_D
    data = parse_measurements(table_text([{"z": a, "kind": kind.key, "value": v, "error": 0.01 * v}
                                          for a, v in zip(z, truth)]))
    gof = goodness_of_fit(MODEL, data, Nuisances(r_d=R_D))
    assert gof.chi2 == pytest.approx(0.0, abs=1e-18) and gof.by_kind()[kind.key].unit == ""
    # r_d free: the fits find that a row depends on it, and recover it
    fit = quick_fit(MODEL, data, {"r_d": (100.0, 200.0)}, Nuisances(r_d="free"))
    assert fit.best["r_d"] == pytest.approx(R_D, rel=1e-8)
