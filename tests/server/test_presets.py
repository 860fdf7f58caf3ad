"""The "start from…" parameter sets: published values, the old keys read as aliases, and a value
that names no set changes nothing."""

from __future__ import annotations

import math

import pytest

from server import codec, presets, state


# Planck Collaboration 2020, "Planck 2018 results. VI", A&A 641, A6, Table 2:
# (H0 [km/s/Mpc], Omega_m, Omega_b h^2) of the TT,TE,EE+lowE+lensing and +BAO columns.
PUBLISHED = {"cmb2018-lens": (67.36, 0.3153, 0.02237), "cmb2018-lens-bao": (67.66, 0.3111, 0.02242)}


@pytest.mark.parametrize("key", PUBLISHED)
def test_planck_sets_carry_the_published_columns(key):
    h0, omega_m, omega_b_h2 = PUBLISHED[key]
    values = presets.PRESETS[key].values
    assert values["h0"] == h0 and values["omega_m"] == omega_m
    assert math.isclose(values["omega_b"] * (h0 / 100) ** 2, omega_b_h2, rel_tol=1e-6)
    # the base model of that table: one 0.06 eV neutrino, N_eff = 3.046, T_CMB = 2.7255 K
    assert values["m_nu"] == (0.06,) and values["n_eff"] == 3.046 and values["t_cmb"] == 2.7255
    assert "A&A 641, A6, Table 2" in presets.PRESETS[key].option_label


@pytest.mark.parametrize("old, new", sorted(presets.ALIASES.items()))
def test_old_keys_open_the_same_set_and_the_link_is_written_in_the_current_form(old, new):
    start = codec.decode("m1.h0=70&m2.om=0.2")
    via_old = state.apply_action(start, "preset", 2, old)
    via_new = state.apply_action(start, "preset", 2, new)
    assert via_old == via_new != start
    assert codec.encode(via_old) == codec.encode(via_new)
    assert via_old.model(2).label == presets.PRESETS[new].name
    assert old not in presets.PRESETS  # the list itself offers only the current keys


def test_a_value_that_names_no_set_changes_nothing():
    start = codec.decode("m1.h0=70")
    assert state.apply_action(start, "preset", 1, "no-such-set") == start
