"""Renamed attributes keep working for one release, with a warning that names the new spelling."""

from __future__ import annotations

import pytest

import model


def test_the_old_cold_dark_matter_name_is_an_alias_that_warns():
    # Planck 2018 VI, Table 2 (lensing column): Ω_m = 0.3153, Ω_b h² = 0.02237, one 0.06 eV neutrino
    c = model.Cosmology(h0=67.36, omega_m=0.3153, omega_b=0.02237 / 0.6736**2)
    with pytest.warns(DeprecationWarning, match="omega_cold_dark_matter"):
        old = c.omega_cdm
    assert old == c.omega_cold_dark_matter
    # Ω_c = Ω_m − Ω_ν − Ω_b with Ω_ν h² = Σm / 92.7 eV at N_eff = 3.044 (README, neutrino convention)
    assert c.omega_cold_dark_matter == pytest.approx(0.3153 - 0.06 / 92.7 / 0.6736**2 - c.omega_b, rel=2e-3)


def test_an_unknown_attribute_is_still_an_attribute_error():
    with pytest.raises(AttributeError, match="no attribute 'omega_nothing'"):
        model.Cosmology(h0=70.0, omega_m=0.3).omega_nothing
