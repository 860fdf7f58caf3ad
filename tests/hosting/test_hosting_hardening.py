"""The production server (the README's command, gunicorn.conf.py read from the working
directory) against careless and hostile clients: slow sockets that trickle their request headers
leave the rest of the server answering, and an over-large chunked upload is refused as such.

The bound on /healthz below is a liveness check, not a speed target: a server whose workers are
held answers only when a slow client gives up, tens of seconds later (seen with sync workers)."""

from __future__ import annotations

import json
import socket
import threading
import time

import pytest

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


@pytest.fixture(scope="module")
def server():
    with Gunicorn(workers=2) as running:
        yield running


def test_four_slow_sockets_leave_healthz_answering_within_a_second(server):
    if True:
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


def test_an_over_large_chunked_upload_is_refused_as_more_than_the_limit(server):
    from server import data_store

    limit = data_store.LIMITS.max_bytes
    chunk = b"0.5,hubble_parameter,90,5\n" * 40_000  # about 1 MB a chunk, 12 chunks
    with socket.create_connection((LOOPBACK, server.port), timeout=60) as s:
        s.sendall(b"POST /api/v1/data HTTP/1.1\r\nHost: x\r\nContent-Type: text/csv\r\n"
                  b"Transfer-Encoding: chunked\r\nConnection: close\r\n\r\n")
        try:  # the server may answer and close before the client has sent everything
            for _ in range(12):
                s.sendall(b"%x\r\n" % len(chunk) + chunk + b"\r\n")
            s.sendall(b"0\r\n\r\n")
        except (BrokenPipeError, ConnectionResetError):
            pass
        answer = b""
        try:
            while part := s.recv(65536):
                answer += part
        except ConnectionResetError:
            pass
    head, _, payload = answer.partition(b"\r\n\r\n")
    status = int(head.split()[1])
    error = json.loads(payload)["error"]
    assert status == 400 and error["field"] == "measurements"
    assert f"more than {limit} bytes" in error["message"] and "8388608" not in error["message"]
