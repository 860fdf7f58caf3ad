"""The measurement store: uploads committed per second on SQLite and PostgreSQL, a set read back
by a worker that has not parsed it, and the 5000-row table of 2500 correlated pairs (parse and
score time, and how much it grows a fresh worker).

Targets (data store issue): the pairs table stored in well under a second and growing a worker
by less than 50 MB. The pairs table runs in a fresh child process (``--pairs-child``) so its
peak resident memory is its own. Run with ``python -m benchmarks store``.
"""

from __future__ import annotations

import json
import logging
import resource
import subprocess
import sys
import tempfile
import time
import tracemalloc

import numpy as np

from benchmarks._postgres import PostgresServer, postgres_binaries
from benchmarks._serving import ROOT, free_port
from benchmarks.bench_model import _median_time

PAIRS = 2500
QUERY = "m1.label=Baseline&m2.label=Thawing&m2.w0=-0.9&m2.wa=-0.3"


def pairs_table(pairs: int = PAIRS) -> bytes:
    """A made-up survey: `pairs` redshifts, each a D_M/r_d and D_H/r_d row correlated at r = -0.4."""
    rng = np.random.default_rng(11)
    z = np.sort(rng.uniform(0.1, 2.5, pairs))
    dm = 29.0 * z / (1 + 0.35 * z) * rng.normal(1, 0.01, pairs)
    dh = 29.0 / (1 + 1.2 * z) ** 0.9 * rng.normal(1, 0.01, pairs)
    lines = ["z,kind,value,error,label,z_helio,group,correlation"]
    for i in range(pairs):
        lines.append(f"{z[i]:.4f},dm_over_rd,{dm[i]:.4f},{0.02 * dm[i]:.4f},made-up pair {i},,p{i},-0.4")
        lines.append(f"{z[i]:.4f},dh_over_rd,{dh[i]:.4f},{0.03 * dh[i]:.4f},made-up pair {i},,p{i},-0.4")
    return ("\n".join(lines) + "\n").encode()


def _quiet(app):
    """No request log lines among the benchmark's own."""
    logging.getLogger("fdesk.requests").setLevel(logging.WARNING)
    return app


def _rss_peak_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # kB on Linux


def _rss_now_mb() -> float:
    with open("/proc/self/statm") as handle:
        return int(handle.read().split()[1]) * resource.getpagesize() / 2**20


def _pairs_child() -> None:
    """In a fresh process: build the app, then store and score the pairs table once."""
    import model
    from server import create_app

    folder = tempfile.mkdtemp()
    app = _quiet(create_app({"CACHE_TYPE": "SimpleCache", "DATABASE_URL": f"sqlite:///{folder}/m.sqlite3",
                             "REQUEST_BUDGET_SECONDS": 600.0}))
    client = app.server.test_client()
    client.get(f"/api/v1/compare?{QUERY}")  # models computed: what is left is the data's cost
    raw = pairs_table()
    before, now = _rss_peak_mb(), _rss_now_mb()
    start = time.perf_counter()
    r = client.post("/api/v1/data", data=raw, content_type="text/csv")
    stored = time.perf_counter() - start
    assert r.status_code == 201, r.get_data(as_text=True)[:300]
    digest = r.get_json()["data"]
    start = time.perf_counter()
    scored = client.get(f"/api/v1/compare?{QUERY}&data={digest}")
    score_time = time.perf_counter() - start
    assert scored.status_code == 200, scored.get_data(as_text=True)[:300]
    grown, kept_rss = _rss_peak_mb() - before, _rss_now_mb() - now

    data = model.parse_measurements(raw)
    cosmo = model.Cosmology(h0=67.36, omega_m=0.3153)
    model.goodness_of_fit(cosmo, data)  # the model's tables built: what follows is the data's cost
    start = time.perf_counter()
    parsed = model.parse_measurements(raw)
    parse_time = time.perf_counter() - start
    model.goodness_of_fit(cosmo, parsed)
    parse_and_score = time.perf_counter() - start
    tracemalloc.start()
    model.goodness_of_fit(cosmo, model.parse_measurements(raw))
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    kept = sum(getattr(data, n).nbytes for n in data.__dataclass_fields__ if isinstance(getattr(data, n), np.ndarray))
    print(json.dumps({"bytes": len(raw), "stored_s": stored, "scored_s": score_time, "grown_mb": grown, "kept_rss_mb": kept_rss, "parse_s": parse_time,
                      "parse_and_score_s": parse_and_score, "peak_mb": peak / 2**20, "kept_mb": kept / 2**20}))


def _uploads(url: str, label: str) -> None:
    from server import create_app

    app = _quiet(create_app({"CACHE_TYPE": "SimpleCache", "DATABASE_URL": url, "UPLOAD_RATE_LIMIT": 0}))
    client = app.server.test_client()
    counter = iter(range(10**6))

    def upload():
        body = f"z,kind,value,error\n0.5,dm_over_rd,{13 + next(counter) * 1e-5:.5f},0.2\n".encode()
        assert client.post("/api/v1/data", data=body, content_type="text/csv").status_code == 201

    new = _median_time(upload, 41)
    from server import data_store
    raw = data_store.demo_bytes()
    digest = client.post("/api/v1/data", data=raw, content_type="text/csv").get_json()["data"]
    with app.server.app_context():
        def fresh_load():
            data_store._memo().clear()  # as a worker that has not parsed it yet
            data_store.load(digest)
        load = _median_time(fresh_load, 21)
    print(f"{label}: a new one-row upload committed {new * 1e3:.1f} ms (median of 41); the demo set "
          f"(310 rows) read back and parsed by a fresh worker {load * 1e3:.1f} ms")


def run():
    done = subprocess.run([sys.executable, "-m", "benchmarks.bench_store", "--pairs-child"], cwd=ROOT,
                          capture_output=True, text=True, timeout=600)
    if done.returncode != 0:
        print(f"pairs table: the child failed: {done.stderr[-600:]}")
    else:
        f = json.loads(done.stdout.strip().splitlines()[-1])
        print(f"pairs table ({2 * PAIRS} rows, {PAIRS} correlated pairs, {f['bytes'] / 1e3:.0f} kB): stored through "
              f"POST /api/v1/data in {f['stored_s'] * 1e3:.0f} ms, two models scored in {f['scored_s'] * 1e3:.0f} ms; "
              f"the worker's resident memory grew {f['kept_rss_mb']:.1f} MB and its peak {f['grown_mb']:.1f} MB "
              "(target < 50 MB)")
        print(f"pairs table, model only: parse {f['parse_s'] * 1e3:.0f} ms, parse + χ² of one model "
              f"{f['parse_and_score_s'] * 1e3:.0f} ms, peak allocations {f['peak_mb']:.1f} MB (tracemalloc), "
              f"the parsed set keeps {f['kept_mb']:.2f} MB of arrays")
    _uploads(f"sqlite:///{tempfile.mkdtemp()}/m.sqlite3", "SQLite (WAL, synchronous=FULL)")
    if postgres_binaries() is None:
        print("PostgreSQL: not installed, skipped")
        return
    with PostgresServer(free_port()) as pg:
        _uploads(pg.url(), "PostgreSQL 15 (Unix socket, fsync on)")


if __name__ == "__main__":
    if sys.argv[1:] == ["--pairs-child"]:
        _pairs_child()
    else:
        run()
