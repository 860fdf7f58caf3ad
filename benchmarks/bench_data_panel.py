"""The data panel through the server path: store the demo data, score four models, fit, map.

Each line is a median of this run; the fit and the map are timed uncached (what the first
click costs: `compute.fit.uncached` / `compute.chi2_grid.uncached` plus the report or figure
and its JSON), the panel as a cached page update (decode, fetch the scores, build the blocks,
serialise with Plotly's encoder as Dash does). Target (data issue): a 60 x 60 map over a few
hundred measurements in well under a second. Run with ``python -m benchmarks data_panel``.
"""

from __future__ import annotations

import json
import tempfile

import plotly.utils

from benchmarks.bench_model import _median_time
from layouts.data_panel import fit_report, map_view
from layouts.page import panel_body
from server import codec, compute, create_app, data_store
from server.views import data_tools
from server.views.comparison import compare
from server.views.page import panel
from server.cache import flush_writes

QUERY = ("m1.label=Baseline&m2.label=Thawing&m2.w0=-0.9&m2.wa=-0.3&m3.label=Closed&m3.ok=-0.03"
         "&m4.label=Heavy%20neutrinos&m4.mnu=0.2,0.1&tab=data")


def _json_size(tree) -> int:
    return len(json.dumps(tree, cls=plotly.utils.PlotlyJSONEncoder))


def run():
    folder = tempfile.mkdtemp()
    app = create_app({"CACHE_TYPE": "SimpleCache", "CACHE_DIR": folder, "DATABASE_URL": f"sqlite:///{folder}/m.sqlite3"})
    client = app.server.test_client()
    raw = data_store.demo_bytes()
    post = _median_time(lambda: client.post("/api/v1/data", data=raw, content_type="text/csv"), 5)
    digest = client.post("/api/v1/data", data=raw, content_type="text/csv").get_json()["data"]
    print(f"POST /api/v1/data with the demo table ({len(raw)} bytes, 310 rows): {post * 1e3:.1f} ms")
    query = f"{QUERY}&data={digest}"

    with app.server.test_request_context():
        state = codec.decode(query)
        resolved = compute.resolve_all(state)
        key = resolved[0].key
        score = _median_time(lambda: [compute.goodness.uncached(r.key, digest, "model", 0) for r in resolved], 5)
        print(f"χ² of 4 models (uncached goodness_of_fit): {score * 1e3:.1f} ms")

        def page():
            body = panel_body(panel(compare(codec.decode(query))))
            return _json_size(body)
        page()
        flush_writes()
        size = page()
        cached = _median_time(page, 7)
        print(f"data panel update, cached (4 models, 4 residual plots): {cached * 1e3:.1f} ms, {size / 1e3:.0f} kB")

        for free in (("omega_m", "w0"), ("omega_m", "w0", "wa"), ("h0", "omega_m", "r_d")):
            spec = data_tools.parse_bounds(list(free), {})
            r_d = "model"

            def fit_once():
                result = compute.fit.uncached(key, digest, spec, r_d)
                fit = {"slot": 1, "name": "Baseline", "data": digest, "r_d_mode": r_d,
                       "bounds": [list(b) for b in spec], **result}
                return _json_size(fit_report(data_tools.fit_report(fit)))
            seconds = _median_time(fit_once, 5)
            print(f"quick fit of {', '.join(free)} through the server path: {seconds * 1e3:.0f} ms")

        x, y = data_tools.parse_bounds(["omega_m", "w0"], {})

        def map_once():
            grid = compute.chi2_grid.uncached(key, digest, x, y, data_tools.MAP_POINTS, "model")
            spec = {"title": "map", "x": grid["x"], "y": grid["y"], "delta_chi2": grid["delta_chi2"],
                    "levels": grid["levels"], "best": (grid["best"]["omega_m"], grid["best"]["w0"])}
            return _json_size(map_view(spec, []))
        seconds = _median_time(map_once, 5)
        print(f"60 x 60 Δχ² map Ω_m x w0 through the server path: {seconds * 1e3:.0f} ms "
              f"(figure {map_once() / 1e3:.0f} kB)")

    # catalogue columns: a million redshifts through POST /api/v1/catalogue, streamed and consumed
    import io
    import resource
    import time

    import numpy as np

    z = np.random.default_rng(20261201).uniform(0.0, 5.0, 1_000_000)
    body = ("id,z\n" + "\n".join(f"{i},{v:.6f}" for i, v in enumerate(z)) + "\n").encode()
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    start = time.perf_counter()
    response = client.post("/api/v1/catalogue?m1.label=Baseline", data={"redshifts": (io.BytesIO(body), "z.csv")},
                           content_type="multipart/form-data")
    size = sum(len(chunk) for chunk in response.response)
    seconds = time.perf_counter() - start
    grown = (resource.getrusage(resource.RUSAGE_SELF).ru_maxrss - before) / 1024
    print(f"catalogue columns, 1e6 rows ({len(body) / 1e6:.0f} MB in, {size / 1e6:.0f} MB out, one model): "
          f"{seconds:.1f} s, {seconds / 1e6 * 1e6:.1f} us a row; peak memory grew {grown:.0f} MB")
