"""Speed of the data statistics: a 60 x 60 delta-chi^2 map and a quick fit.

Target (data issue): a 60 x 60 map over a few hundred measurements in well under a second.
Printed beside each time is the same work done the slow way (one model.evaluate per
parameter set), as a ratio measured in this run.
"""

import pathlib

import numpy as np

from benchmarks.bench_model import _median_time
from model import (Cosmology, Nuisances, chi2_map, evaluate, goodness_of_fit, quick_fit,
                   read_measurements)

DEMO = pathlib.Path(__file__).resolve().parent.parent / "server" / "demo" / "demo_synthetic.csv"


def run():
    data = read_measurements(DEMO)
    base = Cosmology(h0=68.4, omega_m=0.3, label="bench")
    print(f"data: {len(data)} synthetic measurements ({DEMO.name})")

    grids = [("omega_m", np.linspace(0.1, 0.5, 60), "w0", np.linspace(-1.6, -0.4, 60),
              Nuisances()),
             ("w0", np.linspace(-1.6, -0.4, 60), "wa", np.linspace(-2.0, 1.5, 60),
              Nuisances(r_d="free")),
             ("omega_m", np.linspace(0.1, 0.5, 60), "h0", np.linspace(60.0, 76.0, 60),
              Nuisances())]
    for x_name, x, y_name, y, nuisances in grids:
        seconds = _median_time(lambda: chi2_map(base, data, x_name, x, y_name, y, nuisances), 5)
        print(f"60 x 60 map {x_name} x {y_name} (r_d {nuisances.r_d}): {seconds * 1e3:.0f} ms "
              f"({seconds / 3600 * 1e6:.0f} us per node)")

    # The slow way for comparison: one goodness_of_fit (model.evaluate) per node, on 40 nodes.
    nodes = [base.replace(omega_m=om, w0=w) for om, w in zip(np.linspace(0.2, 0.4, 40),
                                                            np.linspace(-1.2, -0.8, 40))]
    slow = _median_time(lambda: [goodness_of_fit(m, data) for m in nodes], 3) / len(nodes)
    fast = _median_time(lambda: chi2_map(base, data, "omega_m", grids[0][1], "w0", grids[0][3]), 5)
    print(f"per node: map {fast / 3600 * 1e6:.0f} us, one evaluate per node {slow * 1e6:.0f} us: "
          f"ratio {slow / (fast / 3600):.0f}x")

    for free in (["omega_m", "w0"], ["omega_m", "w0", "wa"], ["omega_m", "w0", "wa", "r_d"]):
        nuisances = Nuisances(r_d="free") if "r_d" in free else Nuisances()
        result = quick_fit(base, data, free, nuisances)
        seconds = _median_time(lambda: quick_fit(base, data, free, nuisances), 5)
        print(f"quick fit of {', '.join(free)}: {seconds * 1e3:.0f} ms "
              f"({result.n_evaluations} residual evaluations, chi2_min {result.chi2_min:.2f})")
    single = _median_time(lambda: evaluate(base, data.z), 5)
    print(f"for scale: one model.evaluate at the {len(data)} redshifts takes {single * 1e3:.1f} ms")
