"""Slow clients cannot hold the production server: gunicorn.conf.py (read by gunicorn from the
working directory) runs threaded workers, so sockets that trickle their request headers leave
the rest of the server answering.

The bound on /healthz below is a liveness check, not a speed target: a server whose workers are
held answers only when a slow client gives up, tens of seconds later (seen with sync workers)."""

from __future__ import annotations

import socket
import threading
import time

from benchmarks._serving import LOOPBACK, Gunicorn, get

SLOW_SOCKETS = 4
HELD_FOR_S = 12.0  # each slow client trickles one header byte every 2 s for this long


def _trickle(port: int, stop: threading.Event) -> None:
    with socket.create_connection((LOOPBACK, port), timeout=30) as s:
        s.sendall(b"GET /healthz HTTP/1.1\r\nHost: x\r\n")
        while not stop.wait(2.0):
            try:
                s.sendall(b"X")
            except OSError:
                return


def test_four_slow_sockets_leave_healthz_answering_within_a_second():
    with Gunicorn(workers=2) as server:
        stop = threading.Event()
        threads = [threading.Thread(target=_trickle, args=(server.port, stop), daemon=True)
                   for _ in range(SLOW_SOCKETS)]
        for t in threads:
            t.start()
        try:
            time.sleep(1.0)  # the slow sockets are connected and have sent part of a request
            end = time.monotonic() + HELD_FOR_S
            worst = 0.0
            while time.monotonic() < end:
                start = time.monotonic()
                status, _, _ = get(server.port, "/healthz", timeout=10)
                worst = max(worst, time.monotonic() - start)
                assert status == 200
                time.sleep(0.5)
            assert worst < 1.0, f"/healthz took {worst:.2f} s while {SLOW_SOCKETS} slow clients were connected"
            assert len(server.worker_pids()) == 2  # no worker was killed for a missed heartbeat
            assert "WORKER TIMEOUT" not in server.stderr()
        finally:
            stop.set()
            for t in threads:
                t.join(timeout=5)
