"""Load on the production setup: gunicorn with 2 workers sharing a throwaway Redis, 32
concurrent clients on loopback, a few thousand API and page-update requests over distinct
four-model links. Bounded: a fixed number of requests, a per-request timeout and an overall
deadline; it starts and stops its own servers. ``python -m benchmarks load``.

Targets (the hosting issue): zero errors in steady state; p99 under 1 s uncached; for cached
requests, throughput within 20 % of a trivial endpoint's (``/healthz``) under the same load.
Phases, each timed on its own:

* uncached: every link names four models no request has computed yet (half of the links as
  API calls, half as the page update a browser sends);
* cached: the same links again (each as an API call and as a page update), after an untimed
  pass has cached every answer (API answers are memoized whole, page updates per model);
* trivial: ``/healthz``, as many requests as the cached phase.
"""

from __future__ import annotations

import json
import queue
import statistics
import threading
import time

from benchmarks._serving import Gunicorn, RedisServer, get, page_update_payload, post

CLIENTS = 32
UNCACHED_LINKS = 512
CACHED_ROUNDS = 2
DEADLINE_S = 240.0  # the whole run stops by itself
TIMEOUT_S = 30.0


def four_model_link(i: int) -> str:
    """A distinct four-model link of a made-up survey team (invented candidates)."""
    h0 = 60.0 + i * 0.003
    return (f"m1.label=Baseline%20{i}&m1.h0={h0:.3f}&m2.label=Thawing&m2.h0={h0:.3f}&m2.w0=-0.9&m2.wa=-0.3"
            f"&m3.label=Closed&m3.h0={h0:.3f}&m3.ok=-0.03&m4.label=Light%20neutrinos&m4.h0={h0:.3f}"
            f"&m4.mnu=0.06&z=0.1,0.5,1,2")


def _percentile(sorted_values: list[float], q: float) -> float:
    if not sorted_values:
        return float("nan")
    k = min(len(sorted_values) - 1, max(0, round(q / 100 * (len(sorted_values) - 1))))
    return sorted_values[k]


def drive(port: int, jobs: list[tuple[str, str, object]], clients: int = CLIENTS, deadline: float | None = None) -> dict:
    """Send `jobs` ``(method, path, payload)`` from `clients` threads; timings and errors."""
    work: "queue.Queue[tuple[str, str, object]]" = queue.Queue()
    for job in jobs:
        work.put(job)
    times: list[float] = []
    errors: list[str] = []
    outcomes: dict[str, int] = {}
    lock = threading.Lock()

    def client():
        while deadline is None or time.monotonic() < deadline:
            try:
                method, path, payload = work.get_nowait()
            except queue.Empty:
                return
            t0 = time.perf_counter()
            try:
                if method == "GET":
                    status, headers, _ = get(port, path, timeout=TIMEOUT_S)
                else:
                    status, headers, _ = post(port, path, payload, timeout=TIMEOUT_S)
                error = None if status == 200 else f"HTTP {status}"
            except OSError as err:
                error, headers = type(err).__name__, {}
            elapsed = time.perf_counter() - t0
            with lock:
                times.append(elapsed)
                if error:
                    errors.append(error)
                key = headers.get("x-fdesk-cache", "?")
                outcomes[key] = outcomes.get(key, 0) + 1

    started = time.perf_counter()
    threads = [threading.Thread(target=client) for _ in range(clients)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    wall = time.perf_counter() - started
    times.sort()
    return {"n": len(times), "errors": len(errors), "kinds": sorted(set(errors)), "rps": len(times) / wall,
            "p50": _percentile(times, 50), "p95": _percentile(times, 95), "p99": _percentile(times, 99),
            "max": times[-1] if times else float("nan"), "cache": outcomes, "unsent": work.qsize()}


def _line(name: str, r: dict) -> str:
    return (f"{name:<26} {r['n']:>5} req  {r['rps']:7.1f} req/s  p50 {r['p50'] * 1e3:7.1f} ms  "
            f"p95 {r['p95'] * 1e3:7.1f} ms  p99 {r['p99'] * 1e3:7.1f} ms  errors {r['errors']}"
            + (f" {r['kinds']}" if r["errors"] else "") + (f"  not sent {r['unsent']}" if r["unsent"] else ""))


def run() -> dict:
    deadline = time.monotonic() + DEADLINE_S
    with RedisServer() as redis_server:
        env = {"FDESK_CACHE_TYPE": "RedisCache", "FDESK_CACHE_REDIS_URL": redis_server.url}
        with Gunicorn(env=env, workers=2) as server:
            port = server.port
            dependencies = json.loads(get(port, "/_dash-dependencies")[2])

            def api(i):
                return ("GET", f"/api/v1/compare?{four_model_link(i)}", None)

            def page(i):
                return ("POST", "/_dash-update-component",
                        page_update_payload(dependencies, f"?{four_model_link(i)}&tab=distances"))

            # warm-up: imports, first tables, the code paths of both request kinds (not timed)
            drive(port, [api(-1), page(-2)] * 4, clients=2)
            uncached = drive(port, [api(i) if i % 2 else page(i) for i in range(UNCACHED_LINKS)],
                             deadline=deadline)
            drive(port, [api(i) for i in range(UNCACHED_LINKS)] + [page(i) for i in range(UNCACHED_LINKS)],
                  deadline=deadline)  # untimed: every answer and model now cached
            cached_api = drive(port, [api(i) for _ in range(CACHED_ROUNDS) for i in range(UNCACHED_LINKS)],
                               deadline=deadline)
            cached_page = drive(port, [page(i) for _ in range(CACHED_ROUNDS) for i in range(UNCACHED_LINKS)],
                                deadline=deadline)
            trivial = drive(port, [("GET", "/healthz", None)] * (CACHED_ROUNDS * UNCACHED_LINKS), deadline=deadline)
            log_lines = server.stdout().count("\n")
    total = sum(r["n"] for r in (uncached, cached_api, cached_page, trivial))
    print(f"gunicorn -w 2 + Redis on 127.0.0.1, {CLIENTS} concurrent clients, {total} requests "
          f"({log_lines} request log lines)")
    print(_line("uncached (4 new models)", uncached) + f"  [p99 target 1000 ms, ratio {uncached['p99'] / 1.0:.2f}]")
    print(_line("cached API compare", cached_api))
    print(_line("cached page update", cached_page))
    print(_line("trivial (/healthz)", trivial))
    print(f"cached API throughput / trivial: {cached_api['rps'] / trivial['rps']:.2f} (target >= 0.80); "
          f"cached page update / trivial: {cached_page['rps'] / trivial['rps']:.2f}")
    print(f"cache outcomes: uncached {uncached['cache']}, cached API {cached_api['cache']}, "
          f"cached page {cached_page['cache']}")
    return {"uncached": uncached, "cached_api": cached_api, "cached_page": cached_page, "trivial": trivial}


if __name__ == "__main__":
    run()
