"""Speed and memory of model.evaluate against its floor and against per-redshift quadrature.

Targets: evaluate on 1e6 unsorted redshifts (linear growth included) ≤ 8× one plain-numpy
E(z) on the same array; a new cosmology's first evaluate on 200 redshifts (its growth solved
too) ≤ 5 ms, and the growth solve alone measured beside it; ≥ 1000× faster than
per-redshift scipy.integrate.quad for D_C, lookback time and age; temporaries of no more
than a few input-sized arrays.
"""

import statistics
import time
import tracemalloc

import numpy as np
from scipy import integrate

from model import Cosmology, evaluate


def _plain_e(z, om, orad, ok, ol):
    return np.sqrt(om * (1 + z) ** 3 + orad * (1 + z) ** 4 + ok * (1 + z) ** 2 + ol)


def _median_time(fn, repeats):
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def bench_throughput(n=1_000_000, repeats=7):
    rng = np.random.default_rng(20261201)
    z = rng.uniform(0.0, 5.0, n)  # unsorted
    rows = []
    for name, cosmo in [
        ("flat LCDM, photons + 0.06 eV neutrino", Cosmology(h0=67.36, omega_m=0.3153,
                                                            omega_b=0.0493)),
        ("open w0/wa, no radiation", Cosmology(h0=70.0, omega_m=0.3, omega_k=0.05, w0=-0.9,
                                               wa=-0.3, t_cmb=0.0)),
    ]:
        evaluate(cosmo, z[:10])
        om, orad, ok, ol = cosmo.omega_m, cosmo.omega_r, cosmo.omega_k, cosmo.omega_de
        t_ours, t_floor = [], []
        for _ in range(repeats):  # interleaved, so both see the same machine load
            t = time.perf_counter()
            evaluate(cosmo, z)
            t_ours.append(time.perf_counter() - t)
            t = time.perf_counter()
            _plain_e(z, om, orad, ok, ol)
            t_floor.append(time.perf_counter() - t)
        ratio = statistics.median(t_ours) / statistics.median(t_floor)
        rows.append((name, ratio, statistics.median(t_ours)))
        print(f"evaluate(1e6 unsorted z) / plain-numpy E(z)  [{name}]: {ratio:5.2f}x "
              f"(target <= 8x; evaluate median {1e3 * statistics.median(t_ours):.0f} ms)")
    return rows


def bench_first_call(n_models=30):
    z = np.random.default_rng(7).uniform(0.0, 3.0, 200)
    times = []
    for k in range(n_models):
        cosmo = Cosmology(h0=60.0 + 0.37 * k, omega_m=0.25 + 0.003 * k, omega_b=0.045,
                          w0=-1.0 + 0.004 * k, wa=0.01 * k)
        t = time.perf_counter()
        cosmo2 = Cosmology(**cosmo.to_dict())  # construction included: the dashboard does it
        evaluate(cosmo2, z)
        times.append(time.perf_counter() - t)
    med = statistics.median(times)
    print(f"new cosmology, construct + first evaluate(200 z): median {1e3 * med:.2f} ms "
          f"= {med / 5e-3:.2f} of the 5 ms budget")
    return med


def bench_growth_solve(n_models=30):
    from model._growth import Growth

    times = []
    for k in range(n_models):
        cosmo = Cosmology(h0=60.0 + 0.37 * k, omega_m=0.25 + 0.003 * k, w0=-1.0 + 0.004 * k, wa=0.01 * k)
        t = time.perf_counter()
        Growth(cosmo)  # uncached: the solve a new model pays on its first evaluate
        times.append(time.perf_counter() - t)
    med = statistics.median(times)
    print(f"growth solve of a new model (D, f on the ln a grid): median {1e3 * med:.2f} ms "
          f"= {med / 5e-3:.2f} of the 5 ms budget")
    return med


def _quad_textbook(cosmo, z):
    from model._background import hubble_squared

    def e(zz):
        return float(np.sqrt(hubble_squared(cosmo, np.array([zz]))[0]))

    opts = dict(epsabs=0.0, epsrel=1e-10, limit=200)
    out = np.empty((3, z.size))
    for k, zz in enumerate(z):
        out[0, k] = integrate.quad(lambda s: 1.0 / e(s), 0.0, zz, **opts)[0]
        out[1, k] = integrate.quad(lambda s: 1.0 / ((1 + s) * e(s)), 0.0, zz, **opts)[0]
        out[2, k] = integrate.quad(lambda s: 1.0 / ((1 + s) * e(s)), zz, np.inf, **opts)[0]
    return out


def bench_versus_quad(n=400):
    z = np.random.default_rng(3).uniform(0.0, 3.0, n)
    cosmo = Cosmology(h0=68.0, omega_m=0.31, omega_b=0.049, t_cmb=0.0)
    t = time.perf_counter()
    ref = _quad_textbook(cosmo, z)
    t_quad = time.perf_counter() - t
    times = []
    for k in range(20):  # each a new cosmology: construction and tables inside the timing
        t = time.perf_counter()
        c = Cosmology(h0=68.0 + 1e-9 * k, omega_m=0.31, omega_b=0.049, t_cmb=0.0)
        ours = evaluate(c, z)
        times.append(time.perf_counter() - t)
    t_ours = statistics.median(times)
    dc = ours["comoving_distance"] / cosmo.hubble_distance
    err = np.max(np.abs(dc / ref[0] - 1.0))
    print(f"per-redshift quad (D_C, lookback, age; {n} z) / evaluate on a new cosmology: "
          f"{t_quad / t_ours:,.0f}x (target >= 1000x); max |ΔD_C|/D_C between them {err:.1e}")
    return t_quad / t_ours


def bench_memory(n=1_000_000):
    z = np.random.default_rng(5).uniform(0.0, 5.0, n)
    cosmo = Cosmology(h0=67.36, omega_m=0.3153, omega_b=0.0493)
    evaluate(cosmo, z[:10])
    tracemalloc.start()
    out = evaluate(cosmo, z)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    outputs = sum(v.nbytes for v in out.values())
    extra = (peak - outputs) / z.nbytes
    print(f"evaluate(1e6 z): peak memory beyond its {len(out)} output arrays = "
          f"{extra:.2f} input-sized arrays")
    return extra


def run():
    bench_throughput()
    bench_first_call()
    bench_growth_solve()
    bench_versus_quad()
    bench_memory()


if __name__ == "__main__":
    run()
