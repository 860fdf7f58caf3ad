"""The quantity registry: every registered quantity is computed by evaluate(), nothing comes back
uninitialised, and a quantity derived from others needs only its registry entry."""

from __future__ import annotations

import math

import numpy as np
import pytest

import model


def test_every_registered_quantity_is_computed_for_an_ordinary_model():
    # Flat ΛCDM with radiation and a massive neutrino (Planck 2018 VI, Table 2, lensing column:
    # H0 = 67.36, Ω_m = 0.3153): every quantity is finite at these past redshifts; the event
    # horizon too, since a cosmological constant makes the conformal time to the end finite.
    c = model.Cosmology(h0=67.36, omega_m=0.3153)
    z = np.array([0.01, 0.5, 2.0, 1100.0])
    out = model.evaluate(c, z)
    assert list(out) == list(model.QUANTITIES)
    for key, values in out.items():
        assert values.shape == z.shape, key
        assert np.all(np.isfinite(values)), f"{key} is not computed: {values}"


def test_registry_entries_are_complete():
    for key, q in model.QUANTITIES.items():
        assert q.key == key and q.symbol and q.description and q.theme in model.THEMES
        assert q.unit != "1"  # dimensionless is spelled ""
    assert model.INVERTIBLE == tuple(k for k, q in model.QUANTITIES.items() if q.invertible)


def test_a_registered_quantity_nothing_fills_is_nan_not_uninitialised_memory(monkeypatch):
    monkeypatch.setitem(model.QUANTITIES, "forgotten", model.Quantity(
        "forgotten", "Mpc", "F", "registered but never computed", "distances"))
    out = model.evaluate(model.Cosmology(h0=70.0, omega_m=0.3), np.linspace(0.0, 3.0, 50_000))
    assert np.isnan(out["forgotten"]).all()


def test_a_derived_quantity_needs_only_its_registry_entry(monkeypatch):
    # Einstein–de Sitter (Ω_m = 1, radiation off): H = H0 (1+z)^{3/2}, so the Hubble time
    # 1/H(z) = t_H (1+z)^{-3/2} exactly (closed form, e.g. Hogg 1999, §3 with E = (1+z)^{3/2}).
    monkeypatch.setitem(model.QUANTITIES, "hubble_time_at_z", model.Quantity(
        "hubble_time_at_z", "Gyr", "1/H", "Hubble time 1/H(z)", "times",
        derive=lambda cosmo, z, v: cosmo.hubble_time * cosmo.h0 / v["hubble_parameter"]))
    c = model.Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0)
    z = np.array([0.0, 0.5, 3.0, 100.0])
    got = model.evaluate(c, z)["hubble_time_at_z"]
    np.testing.assert_allclose(got, c.hubble_time * (1.0 + z) ** -1.5, rtol=1e-12)
    scalar = model.evaluate(c, 3.0)["hubble_time_at_z"]
    assert scalar.shape == () and math.isclose(float(scalar), c.hubble_time / 8.0, rel_tol=1e-12)


@pytest.mark.parametrize("bad", [dict(theme="nowhere"), dict(unit="1")])
def test_a_malformed_entry_is_refused_naming_the_field(bad):
    fields = dict(key="x", unit="Mpc", symbol="x", description="x", theme="distances") | bad
    with pytest.raises(ValueError, match=next(iter(bad))):
        model.Quantity(**fields)


def test_per_model_tables_are_safe_when_many_threads_evaluate_at_once():
    # a threaded server (gunicorn gthread) evaluates from several threads: many distinct models
    # through a small memo must neither raise nor mix models up (each checked against its own
    # Einstein–de Sitter closed form, D_C = 2 D_H (1 − 1/√(1+z)))
    import threading

    errors = []

    def work(offset):
        try:
            for i in range(40):
                c = model.Cosmology(h0=60.0 + offset + 0.01 * i, omega_m=1.0, t_cmb=0.0)
                d = float(model.evaluate(c, 3.0)["comoving_distance"])
                assert abs(d / (2 * c.hubble_distance * 0.5) - 1) < 1e-9
        except Exception as err:  # noqa: BLE001 - collected and reported below
            errors.append(err)

    threads = [threading.Thread(target=work, args=(n,)) for n in range(6)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert errors == []
