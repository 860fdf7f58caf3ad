"""A published analysis: flat ΛCDM fitted to the DESI 2024 DR1 BAO measurements.

Data: DESI Collaboration 2024, "DESI 2024 III: Baryon Acoustic Oscillations from Galaxies and
Quasars", arXiv:2404.03000, Table 18 (D_V/r_d, D_M/r_d, D_H/r_d and the D_M-D_H correlation
coefficient r of each redshift bin), with the Lyman-alpha point of "DESI 2024 IV",
arXiv:2404.03001. All numbers below are entered FROM MEMORY (no copy of the tables was at
hand); they may be off in the last digit.

Result to recover: "DESI 2024 VI: Cosmological Constraints from the Measurements of Baryon
Acoustic Oscillations", arXiv:2404.03002, DESI BAO alone, flat ΛCDM:
Omega_m = 0.295 +- 0.015 and h r_d = (101.8 +- 1.3) Mpc (also from memory). Those are
posterior means and widths of a Bayesian analysis; ours is the least-squares best fit with
Gauss-Newton errors, and the data are remembered, so the tolerances are a third of the
published 1 sigma for the central values and 20 % for the errors.

Published data appear in this test only, never in the demo data set.
"""

import pytest

from measurement_tables import table_text
from model import Cosmology, Nuisances, parse_measurements, quick_fit

# (tracer, z_eff, D_V/r_d, sigma) -- from memory
DV = [
    ("BGS", 0.295, 7.93, 0.15),
    ("QSO", 1.491, 26.07, 0.67),
]
# (tracer, z_eff, D_M/r_d, sigma, D_H/r_d, sigma, r) -- from memory
DM_DH = [
    ("LRG1", 0.510, 13.62, 0.25, 20.98, 0.61, -0.445),
    ("LRG2", 0.706, 16.85, 0.32, 20.08, 0.60, -0.420),
    ("LRG3+ELG1", 0.930, 21.71, 0.28, 17.88, 0.35, -0.389),
    ("ELG2", 1.317, 27.79, 0.69, 13.82, 0.42, -0.444),
    ("Lya QSO", 2.330, 39.71, 0.94, 8.52, 0.17, -0.477),
]


def desi_dr1():
    rows = [{"z": z, "kind": "dv_over_rd", "value": v, "error": e, "label": f"DESI DR1 {name}"}
            for name, z, v, e in DV]
    for name, z, dm, e_dm, dh, e_dh, r in DM_DH:
        rows.append({"z": z, "kind": "dm_over_rd", "value": dm, "error": e_dm,
                     "label": f"DESI DR1 {name}", "group": name, "correlation": r})
        rows.append({"z": z, "kind": "dh_over_rd", "value": dh, "error": e_dh,
                     "label": f"DESI DR1 {name}", "group": name, "correlation": r})
    return parse_measurements(table_text(rows))


def test_correlated_pairs_are_read_as_published():
    data = desi_dr1()
    assert len(data) == 12 and data.covariance_source == "pairs"
    i = list(data.label).index("DESI DR1 Lya QSO")
    assert data.covariance[i, i + 1] == pytest.approx(-0.477 * 0.94 * 0.17)


def test_flat_lcdm_fit_recovers_the_published_omega_m_and_h_r_d():
    data = desi_dr1()
    # h0 is held at 70: BAO alone constrain only h r_d (the radiation term depends on h by
    # 1e-4 at these redshifts). Neutrinos: one of 0.06 eV, as DESI 2024 VI assumes.
    start = Cosmology(h0=70.0, omega_m=0.3, m_nu=(0.06,))
    fit = quick_fit(start, data, {"omega_m": (0.1, 0.6), "r_d": (100.0, 200.0)},
                    Nuisances(r_d="free"))
    h = start.h
    omega_m, r_d = fit.best["omega_m"], fit.best["r_d"]
    sigma_om, sigma_rd = fit.sigma["omega_m"], fit.sigma["r_d"]
    # DESI 2024 VI (arXiv:2404.03002), from memory: 0.295 +- 0.015 and 101.8 +- 1.3 Mpc
    assert omega_m == pytest.approx(0.295, abs=0.005)
    assert sigma_om == pytest.approx(0.015, rel=0.2)
    assert h * r_d == pytest.approx(101.8, abs=0.45)
    assert h * sigma_rd == pytest.approx(1.3, rel=0.2)
    # Omega_m and h r_d are anticorrelated in BAO fits; the chi^2 is reasonable for 12 - 2 dof
    assert fit.correlation[0, 1] < 0
    assert fit.dof == 10 and 3.0 < fit.chi2_min < 25.0
    print(f"DESI DR1 BAO, flat LCDM: Omega_m = {omega_m:.4f} +- {sigma_om:.4f}, "
          f"h r_d = {h * r_d:.2f} +- {h * sigma_rd:.2f} Mpc, chi2_min = {fit.chi2_min:.2f} "
          f"for {fit.dof} dof, correlation {fit.correlation[0, 1]:.3f}")
