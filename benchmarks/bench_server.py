"""Server-side speed and size of a full page update (the issue's targets: four new models
<= 150 ms median, cached <= 20 ms, response <= 600 kB).

A "full update" here is what the server does when a link changes: decode it, compute (or fetch
from the cache) every model, build all six panels and the card statuses, and serialise them with
Plotly's JSON encoder as Dash does. Each update runs in a request, as in the app, where results
reach the shared cache once the response has been sent (server.cache); the benchmark writes
them between runs, untimed (`flush_writes`). Run with ``python -m benchmarks server``.
"""

from __future__ import annotations

import json
import statistics
import tempfile
import time

import plotly.utils

from layouts.cards import card_status
from layouts.page import panel_body
from server import codec, create_app
from server.app import settle_heap
from server.cache import flush_writes
from server.views.cards import card_status as card_status_spec
from server.views.comparison import compare
from server.views.page import panel

REPEATS = 9


def _four_model_query(seed: int) -> str:
    # made-up candidates of a made-up survey team; the seed makes every run's models new
    h = 60.0 + seed * 0.01
    return (f"m1.label=Baseline&m1.h0={h:.2f}&m2.label=Thawing&m2.h0={h:.2f}&m2.w0=-0.9&m2.wa=-0.3"
            f"&m3.label=Closed&m3.h0={h:.2f}&m3.ok=-0.03&m4.label=Heavy%20neutrinos&m4.h0={h:.2f}"
            f"&m4.mnu=0.2,0.1&z=0.1,0.5,1,2,3")


def full_update(query: str) -> dict[str, int]:
    """Every panel's serialised response size in bytes (and the card statuses')."""
    state = codec.decode(query)
    comparison = compare(state)
    sizes = {}
    for tab in codec.TABS:
        body = panel_body(panel(comparison, tab))
        sizes[tab] = len(json.dumps(body, cls=plotly.utils.PlotlyJSONEncoder))
    statuses = [card_status(card_status_spec(state, m.slot)) for m in state.models]
    sizes["cards"] = len(json.dumps(statuses, cls=plotly.utils.PlotlyJSONEncoder))
    return sizes


def open_panel_update(query: str) -> int:
    """What one link change costs in the app: the open panel and the card statuses."""
    state = codec.decode(query)
    body = panel_body(panel(compare(state)))
    statuses = [card_status(card_status_spec(state, m.slot)) for m in state.models]
    return len(json.dumps([body, statuses], cls=plotly.utils.PlotlyJSONEncoder))


def run() -> None:
    with tempfile.TemporaryDirectory() as cache_dir:
        app = create_app({"CACHE_TYPE": "FileSystemCache", "CACHE_DIR": cache_dir})
        with app.server.test_request_context():
            full_update(_four_model_query(0))  # warm imports and tables
            flush_writes()
        settle_heap()  # as the server's entry points do once the app is built
        cold, warm, one_panel = [], [], []
        sizes = {}
        for i in range(1, REPEATS + 1):
            query = _four_model_query(i)
            with app.server.test_request_context():
                t0 = time.perf_counter()
                sizes = full_update(query)
                cold.append(time.perf_counter() - t0)
                flush_writes()  # done once the response has been sent; not timed
            with app.server.test_request_context():
                t0 = time.perf_counter()
                full_update(query)
                warm.append(time.perf_counter() - t0)
            with app.server.test_request_context():
                t0 = time.perf_counter()
                open_panel_update(query + f"&tab=distances&zmax={3 + i * 0.01:.2f}")
                one_panel.append(time.perf_counter() - t0)
                flush_writes()
    cold_ms, warm_ms = statistics.median(cold) * 1e3, statistics.median(warm) * 1e3
    print(f"full update, all six panels, four new models: median {cold_ms:.1f} ms (target 150 ms, "
          f"ratio {cold_ms / 150:.2f})")
    print(f"same update, every model cached:              median {warm_ms:.1f} ms (target 20 ms, "
          f"ratio {warm_ms / 20:.2f})")
    print(f"the app's actual update (open panel + cards, new z_max): median "
          f"{statistics.median(one_panel) * 1e3:.1f} ms")
    largest = max((k for k in sizes if k != "cards"), key=sizes.get)
    total = sum(sizes.values())
    print("response size per panel (kB): " + ", ".join(f"{k} {v / 1e3:.0f}" for k, v in sizes.items()))
    print(f"largest single-panel response: {largest} {sizes[largest] / 1e3:.0f} kB; all six panels together "
          f"{total / 1e3:.0f} kB (target 600 kB, ratio {total / 600e3:.2f})")


if __name__ == "__main__":
    run()
