"""Catalogue columns through the route: a million redshifts with every quantity added, for one
model and for all four models of a link, streamed to the end (the Flask test client reads the
whole answer, so formatting and streaming are both in the time).

Target (hardening issue): 1e6 rows x 4 models in at most 5 s on this 2-core machine, so two such
downloads at once stay far inside gunicorn's 30 s heartbeat. Run with
``python -m benchmarks catalogue``.
"""

from __future__ import annotations

import tempfile
import time

import numpy as np

from server import create_app

ROWS = 1_000_000
QUERY = "m1.h0=67.4&m2.w0=-0.9&m2.wa=-0.3&m3.ok=-0.03&m4.mnu=0.2,0.1"
TARGET_S = 5.0


def _timed_download(client, body: bytes, models: str) -> tuple[float, int, bytes]:
    start = time.perf_counter()
    response = client.post(f"/api/v1/catalogue?{QUERY}&models={models}", data=body, content_type="text/csv")
    size, tail = 0, b""
    for chunk in response.response:  # streamed: read it chunk by chunk, as a client would
        size += len(chunk)
        tail = chunk[-100:] if len(chunk) >= 100 else (tail + chunk)[-100:]
    return time.perf_counter() - start, size, tail


def run():
    app = create_app({"CACHE_TYPE": "SimpleCache", "CACHE_DIR": tempfile.mkdtemp()})
    client = app.server.test_client()
    z = np.random.default_rng(2026).uniform(0.0, 6.0, ROWS)
    body = ("id,z\n" + "\n".join(f"g{i},{v:.6f}" for i, v in enumerate(z.tolist())) + "\n").encode()
    client.post(f"/api/v1/catalogue?{QUERY}&models=all", data=b"z\n0.5\n", content_type="text/csv").get_data()
    for models, label in (("1", "1 model"), ("all", "4 models")):
        seconds, size, tail = _timed_download(client, body, models)
        whole = tail.rstrip().endswith(f"# complete: {ROWS} rows".encode())
        print(f"catalogue, {ROWS:.0e} rows x {label}: {seconds:.2f} s, {size / 1e6:.0f} MB "
              f"({size / 1e6 / seconds:.0f} MB/s), ends with its completeness line: {whole}"
              + (f"; target <= {TARGET_S:g} s: {'met' if seconds <= TARGET_S else 'NOT met'}"
                 if models == "all" else ""))
