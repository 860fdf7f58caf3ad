"""The energy-budget and distances panels' derived curves, computed once per model in
`server.compute.model_curves`, against closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants

from server import codec, compute
from server.views import budget, distances
from server.views.comparison import compare

# Einstein–de Sitter: Ω_m = 1, radiation off (T_CMB = 0, no massive neutrinos)
EDS = "m1.label=EdS&m1.h0=70&m1.om=1&m1.tcmb=0&m1.mnu="


def _guides(spec, slot=1):
    densities = next(b for b in spec["blocks"] if b["id"] == "fd-fig-densities")["spec"]
    plot = next(p for p in densities["panels"] if p["slot"] == slot)
    return {s["component"]: s for s in plot["series"] if s["role"] == "guide"}


def test_slope_guides_pass_through_todays_densities_with_their_powers(ctx):
    spec = budget.build(compare(codec.decode("m1.label=A&m1.h0=70&m1.om=0.3&m1.tcmb=2.7255&tab=budget")))
    guides = _guides(spec)
    assert set(guides) == {"photons", "cold_dark_matter", "dark_energy"}
    a = np.asarray(guides["photons"]["x"], dtype=float)
    assert a[0] == pytest.approx(compute.A_MIN, rel=1e-5) and a[-1] == pytest.approx(compute.A_MAX, rel=1e-5)
    # photons today: ρ_γ = π² k⁴ T⁴ / (15 ħ³ c⁵) (Stefan–Boltzmann law; CODATA constants via scipy)
    rho_gamma = math.pi ** 2 * constants.k ** 4 * 2.7255 ** 4 / (15 * constants.hbar ** 3 * constants.c ** 5)
    np.testing.assert_allclose(guides["photons"]["y"], rho_gamma * a ** -4, rtol=1e-4)
    # cold dark matter: Ω_cdm ρ_crit a⁻³ with ρ_crit = 3H₀²/(8πG) (Friedmann equation); the baryons are
    # 0.157 of the cold matter by the page's default (empty Ω_b), so Ω_cdm = 0.3 (1 - 0.157) less the ν part
    h0_si = 70e3 / (constants.parsec * 1e6)
    rho_crit = 3 * h0_si ** 2 / (8 * math.pi * constants.G)
    cdm = np.asarray(guides["cold_dark_matter"]["y"], dtype=float)
    assert cdm[1] / cdm[0] == pytest.approx((a[1] / a[0]) ** -3, rel=1e-5)
    assert 0.2 * rho_crit < cdm[0] * a[0] ** 3 < 0.3 * rho_crit
    # a cosmological constant: flat and closing the budget, Ω_Λ ρ_crit with Ω_Λ ≈ 1 - Ω_m
    de = np.asarray(guides["dark_energy"]["y"], dtype=float)
    assert de[0] == de[1] == pytest.approx(0.7 * rho_crit, rel=2e-4)


def test_no_guide_without_a_positive_density_today(ctx):
    # Ω_de = 0 (Ω_k closes the budget instead): there is no dark-energy density to draw a slope through
    spec = budget.build(compare(codec.decode("m1.label=A&m1.h0=70&m1.om=0.3&m1.ode=0&tab=budget")))
    assert "dark_energy" not in _guides(spec) and "photons" in _guides(spec)


def test_epoch_markers_sit_at_a_of_their_redshifts(ctx):
    c = compare(codec.decode("m1.label=A&m1.h0=70&m1.om=0.3&tab=budget"))
    epochs = c.entries[0].curves["epochs"]
    fractions = next(b for b in budget.build(c)["blocks"] if b["id"] == "fd-fig-fractions")["spec"]
    markers = {m["text"]: m["x"] for m in fractions["panels"][0]["markers"]}
    assert markers["today"] == 1.0
    assert markers["matter–radiation equality"] == pytest.approx(1 / (1 + epochs["z_equality"]), rel=1e-12)
    assert markers["acceleration begins"] == pytest.approx(1 / (1 + epochs["z_acceleration"]), rel=1e-12)


def test_expansion_rate_over_one_plus_z_in_einstein_de_sitter(ctx):
    spec = distances.build(compare(codec.decode(EDS + "&tab=distances")))
    series = next(b for b in spec["blocks"] if b.get("id") == "fd-fig-hz")["spec"]["series"][0]
    z = np.asarray(series["x"], dtype=float)
    # H = H₀ (1+z)^{3/2} (Hogg 1999, eq. 14 with Ω_M = 1), so H/(1+z) = H₀ √(1+z)
    np.testing.assert_allclose(series["y"], 70.0 * np.sqrt(1 + z), rtol=1e-5)  # curves and z carry 6 digits


def test_the_drawn_density_parameters_follow_the_friedmann_closed_form_between_their_points(ctx):
    """The budget's curves are drawn on `compute.BUDGET_POINTS` scale factors, joined by straight
    lines on the log-a axis: at the points and halfway between them the drawn Ω_m(a) must be
    the closed form's, Ω_m(a) = Ω_m a⁻³ / (Ω_r a⁻⁴ + Ω_m a⁻³ + Ω_Λ) (Friedmann equation, flat;
    massless neutrinos, so all radiation falls as a⁻⁴), within 0.003 (about 1 px on a 300-px-tall
    small plot: a judgement, no source)."""
    spec = budget.build(compare(codec.decode("m1.label=A&m1.h0=70&m1.om=0.3&m1.tcmb=2.7255&m1.neff=3.044"
                                             "&m1.mnu=&tab=budget")))
    fractions = next(b for b in spec["blocks"] if b["id"] == "fd-fig-fractions")["spec"]
    series = {s["component"]: s for s in fractions["panels"][0]["series"]}
    a = np.asarray(series["baryons"]["x"], dtype=float)
    assert len(a) == compute.BUDGET_POINTS
    drawn = np.asarray(series["baryons"]["y"], dtype=float) + np.asarray(series["cold_dark_matter"]["y"], dtype=float)
    # photons today from T_CMB: ρ_γ = π² k⁴ T⁴ / (15 ħ³ c⁵) (Stefan–Boltzmann; CODATA via scipy); each of
    # N_eff neutrino species 7/8 (4/11)^(4/3) of that (standard thermal history)
    h0_si = 70e3 / (constants.parsec * 1e6)
    rho_crit = 3 * h0_si ** 2 / (8 * math.pi * constants.G)
    omega_gamma = math.pi ** 2 * constants.k ** 4 * 2.7255 ** 4 / (15 * constants.hbar ** 3 * constants.c ** 5) / rho_crit
    omega_r = omega_gamma * (1 + 3.044 * 7 / 8 * (4 / 11) ** (4 / 3))
    omega_l = 1 - 0.3 - omega_r

    def closed(x):
        return 0.3 * x ** -3 / (omega_r * x ** -4 + 0.3 * x ** -3 + omega_l)

    np.testing.assert_allclose(drawn, closed(a), atol=1e-4)
    halfway = np.sqrt(a[1:] * a[:-1])  # the middle of each segment on a log axis
    line = 0.5 * (drawn[1:] + drawn[:-1])
    assert np.max(np.abs(line - closed(halfway))) < 0.003
