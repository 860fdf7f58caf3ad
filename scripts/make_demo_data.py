"""Write the SYNTHETIC demo measurement table, server/demo/demo_synthetic.csv (package data).

Nothing in it is a real measurement. An invented survey pair -- the "Kestrel Ridge Transient
Survey" (supernova-like distance moduli) and the "Lanternfish Redshift Survey" (BAO-like
D_M/r_d, D_H/r_d and D_V/r_d) -- observes an invented "true" model, "Sparrowhawk", with
Gaussian noise from a fixed seed. Every row's label and the header say "synthetic".

Usage::

    python scripts/make_demo_data.py            # rewrite server/demo/demo_synthetic.csv
    python scripts/make_demo_data.py --check    # exit 1 if the committed file differs

The output is reproducible for a given numpy (Generator streams are stable in practice but
numpy does not promise it across versions).
"""

import argparse
import math
import pathlib
import sys

import numpy as np

ROOT = pathlib.Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from model import MEASUREMENT_KINDS, Cosmology, acoustic_scales, evaluate  # noqa: E402

OUTPUT = ROOT / "server" / "demo" / "demo_synthetic.csv"
SEED = 20261201

#: The invented truth behind the demo data: a mildly evolving dark energy.
SPARROWHAWK = Cosmology(h0=68.4, omega_m=0.296, w0=-0.92, wa=-0.2, sigma8=0.79,
                        label="Sparrowhawk (synthetic truth)")

N_SUPERNOVAE = 300
SUPERNOVA_SCATTER = 0.11  # mag, intrinsic scatter of the invented standard candles
PECULIAR_VELOCITY = 300.0  # km/s, spread of host velocities (adds to low-z errors)
C_KM_S = 299_792.458  # km/s, exact (SI)

# (redshift, kinds, fractional errors, correlation of the D_M-D_H pair) of the invented bins
BAO_BINS = [
    (0.38, ("dv_over_rd",), (0.012,), None),
    (0.55, ("dm_over_rd", "dh_over_rd"), (0.017, 0.028), -0.41),
    (0.78, ("dm_over_rd", "dh_over_rd"), (0.014, 0.022), -0.38),
    (1.05, ("dm_over_rd", "dh_over_rd"), (0.016, 0.024), -0.40),
    (1.45, ("dv_over_rd",), (0.022,), None),
    (2.20, ("dm_over_rd", "dh_over_rd"), (0.021, 0.019), -0.45),
]
# (redshift, error) of the invented growth-rate (redshift-space distortion) bins, fσ8
GROWTH_BINS = [(0.22, 0.045), (0.41, 0.038), (0.63, 0.034), (0.86, 0.040), (1.24, 0.058)]


def demo_table():
    """The demo table as CSV text in the measurement format (docs/measurements-format.md)."""
    rng = np.random.default_rng(SEED)
    truth = SPARROWHAWK
    r_d = acoustic_scales(truth)["r_drag"]

    # Supernova-like rows: a low-redshift sample and a deeper one, CMB-frame z with a
    # heliocentric z that differs by the invented observer motion (of order 1e-3).
    z = np.sort(np.concatenate([rng.uniform(0.012, 0.1, 45),
                                0.1 + 1.2 * rng.beta(1.6, 2.4, N_SUPERNOVAE - 45)]))
    z_helio = z + rng.normal(0.0, 8e-4, z.size)
    z_helio = np.where(z_helio > 0.001, z_helio, z)
    d_m = evaluate(truth, z)["transverse_comoving_distance"]
    mu = 5.0 * np.log10((1.0 + z_helio) * d_m) + 25.0
    sigma = np.hypot(SUPERNOVA_SCATTER, 5.0 / math.log(10.0) * PECULIAR_VELOCITY / (C_KM_S * z))
    mu_observed = mu + rng.normal(0.0, sigma)

    lines = [
        "# SYNTHETIC demo data: not real measurements.",
        f"# Made by scripts/make_demo_data.py (seed {SEED}) from the invented model "
        f"'Sparrowhawk': h0 = {truth.h0} km/s/Mpc, omega_m = {truth.omega_m}, flat, "
        f"w0 = {truth.w0}, wa = {truth.wa}, sigma8 = {truth.sigma8},",
        f"# T_CMB = {truth.t_cmb} K, N_eff = {truth.n_eff}, m_nu = {truth.m_nu[0]} eV; "
        f"r_d = {r_d:.3f} Mpc from the model. Surveys invented: Kestrel Ridge Transient Survey "
        "(supernova-like), Lanternfish Redshift Survey (BAO-like and growth-rate fsigma8).",
        "z,kind,value,error,label,z_helio,group,correlation",
    ]
    for i in range(z.size):
        lines.append(f"{z[i]:.5f},distance_modulus,{mu_observed[i]:.4f},{sigma[i]:.4f},"
                     f"synthetic KRTS-{i + 1:03d},{z_helio[i]:.5f},,")

    for z_bin, kinds, fractions, correlation in BAO_BINS:
        q = evaluate(truth, z_bin)
        truth_values = np.array([float(q[MEASUREMENT_KINDS[k].quantity]) / r_d for k in kinds])
        errors = np.array(fractions) * truth_values
        cov = np.diag(errors**2)
        if correlation is not None:
            cov[0, 1] = cov[1, 0] = correlation * errors[0] * errors[1]
        observed = rng.multivariate_normal(truth_values, cov)
        group = f"LRS-z{z_bin:.2f}" if correlation is not None else ""
        for kind, value, error in zip(kinds, observed, errors):
            corr = f"{correlation}" if correlation is not None else ""
            lines.append(f"{z_bin:.2f},{kind},{value:.4f},{error:.4f},synthetic LRS z={z_bin:.2f},,"
                         f"{group},{corr}")

    # growth-rate rows, drawn last so the rows above keep their random numbers
    z_growth = np.array([z_bin for z_bin, _ in GROWTH_BINS])
    f_sigma8 = evaluate(truth, z_growth)["f_sigma8"]
    for (z_bin, error), value in zip(GROWTH_BINS, f_sigma8 + rng.normal(0.0, [e for _, e in GROWTH_BINS])):
        lines.append(f"{z_bin:.2f},f_sigma8,{value:.4f},{error:.4f},synthetic LRS RSD z={z_bin:.2f},,,")
    return "\n".join(lines) + "\n"


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="compare with the committed file only")
    args = parser.parse_args(argv)
    text = demo_table()
    if args.check:
        same = OUTPUT.exists() and OUTPUT.read_text(encoding="utf-8") == text
        print(f"{OUTPUT.relative_to(ROOT)} is {'up to date' if same else 'STALE'}")
        return 0 if same else 1
    OUTPUT.parent.mkdir(parents=True, exist_ok=True)
    OUTPUT.write_text(text, encoding="utf-8")
    print(f"wrote {OUTPUT.relative_to(ROOT)}: {text.count(chr(10)) - 4} synthetic rows")
    return 0


if __name__ == "__main__":
    sys.exit(main())
