"""Real servers on loopback for the hosting tests and the load benchmark: a throwaway
redis-server and gunicorn instances, each started and stopped by its own PID.

Everything binds to 127.0.0.1 on a free port chosen by the kernel. Nothing here is imported by
the app.
"""

from __future__ import annotations

import http.client
import json
import os
import signal
import socket
import subprocess
import sys
import tempfile
import time
from pathlib import Path

__all__ = ["ROOT", "LOOPBACK", "free_port", "get", "post", "RedisServer", "Gunicorn", "gunicorn_command",
           "page_update_payload", "DevServer", "chromium", "FOUR_MODELS"]

ROOT = Path(__file__).resolve().parent.parent
LOOPBACK = "127.0.0.1"
# The browser benchmarks' link: four invented candidates of a made-up survey team (the README's scenario).
FOUR_MODELS = [("m1.label", "Lantern baseline"), ("m2.label", "Candidate Ember"), ("m2.w0", "-0.88"),
               ("m2.wa", "-0.35"), ("m3.label", "Candidate Cinder"), ("m3.ok", "-0.015"),
               ("m4.label", "Candidate Ash"), ("m4.mnu", "0.15")]


def free_port() -> int:
    with socket.socket() as s:
        s.bind((LOOPBACK, 0))
        return s.getsockname()[1]


def _request(method: str, port: int, path: str, body: bytes | None = None, headers: dict | None = None,
             timeout: float = 30.0):
    conn = http.client.HTTPConnection(LOOPBACK, port, timeout=timeout)
    try:
        conn.request(method, path, body=body, headers=headers or {})
        response = conn.getresponse()
        return response.status, {k.lower(): v for k, v in response.getheaders()}, response.read()
    finally:
        conn.close()


def get(port: int, path: str, timeout: float = 30.0):
    """``(status, headers with lower-case names, body bytes)``."""
    return _request("GET", port, path, timeout=timeout)


def post(port: int, path: str, payload, timeout: float = 30.0):
    return _request("POST", port, path, json.dumps(payload).encode(), {"Content-Type": "application/json"},
                    timeout=timeout)


def _wait(condition, timeout: float, what: str) -> None:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if condition():
            return
        time.sleep(0.05)
    raise TimeoutError(f"{what} did not happen within {timeout} s")


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    try:  # a zombie child counts as gone
        return Path(f"/proc/{pid}/stat").read_text().split(") ", 1)[1][0] != "Z"
    except (OSError, IndexError):
        return False


class RedisServer:
    """``redis-server`` on 127.0.0.1 without persistence (``--save '' --appendonly no``),
    daemonized with a pidfile and stopped by that PID. `start` again reuses the same port."""

    def __init__(self, port: int | None = None):
        self.port = port or free_port()
        self.folder = Path(tempfile.mkdtemp(prefix="fdesk-redis-"))
        self.pid: int | None = None

    @property
    def url(self) -> str:
        return f"redis://{LOOPBACK}:{self.port}/0"

    def start(self) -> "RedisServer":
        pidfile = self.folder / "redis.pid"
        pidfile.unlink(missing_ok=True)
        subprocess.run(["redis-server", "--bind", LOOPBACK, "--port", str(self.port), "--save", "",
                        "--appendonly", "no", "--daemonize", "yes", "--pidfile", str(pidfile),
                        "--dir", str(self.folder), "--logfile", str(self.folder / "redis.log")],
                       check=True, stdout=subprocess.DEVNULL)
        _wait(lambda: pidfile.exists() and pidfile.read_text().strip(), 10, "redis-server pidfile")
        self.pid = int(pidfile.read_text())
        _wait(self.ping, 10, "redis-server answering")
        return self

    def ping(self) -> bool:
        try:
            with socket.create_connection((LOOPBACK, self.port), timeout=1) as s:
                s.sendall(b"PING\r\n")
                return s.recv(16).startswith(b"+PONG")
        except OSError:
            return False

    def client(self):
        import redis

        return redis.Redis.from_url(self.url, socket_timeout=2)

    def stop(self) -> None:
        if self.pid is not None and _alive(self.pid):
            os.kill(self.pid, signal.SIGTERM)
            _wait(lambda: not _alive(self.pid), 10, "redis-server exit")
        self.pid = None

    def __enter__(self):
        return self.start()

    def __exit__(self, *exc):
        self.stop()


def gunicorn_command(port: int, workers: int = 2) -> list[str]:
    """The README's production command (the venv's gunicorn, on 127.0.0.1)."""
    return [sys.executable, "-m", "gunicorn", "--no-control-socket", "-w", str(workers),
            "-b", f"{LOOPBACK}:{port}", "server.wsgi:application"]


class Gunicorn:
    """A gunicorn master started from the project folder with `env` added to the environment;
    its stdout and stderr go to files (`stdout()`, `stderr()`). Started and stopped by PID."""

    def __init__(self, env: dict | None = None, workers: int = 2, port: int | None = None,
                 command: list[str] | str | None = None, prefix: str = "/"):
        self.port = port or free_port()
        self.workers = workers
        self.prefix = prefix
        self.folder = Path(tempfile.mkdtemp(prefix="fdesk-gunicorn-"))
        self.env = {**os.environ, "FDESK_CACHE_DIR": str(self.folder / "cache"),
                    "FDESK_DATABASE_URL": f"sqlite:///{self.folder / 'data' / 'measurements.sqlite3'}", **(env or {})}
        self.command = command or gunicorn_command(self.port, workers)
        self.process: subprocess.Popen | None = None

    def start(self, timeout: float = 60.0) -> "Gunicorn":
        self._out = open(self.folder / "stdout.log", "wb")
        self._err = open(self.folder / "stderr.log", "wb")
        self.process = subprocess.Popen(self.command, cwd=ROOT, env=self.env, stdout=self._out, stderr=self._err,
                                        shell=isinstance(self.command, str))
        _wait(self._healthy, timeout, "gunicorn answering /healthz")
        _wait(lambda: len(self.worker_pids()) == self.workers, timeout, "all gunicorn workers up")
        return self

    def _healthy(self) -> bool:
        if self.process.poll() is not None:
            raise RuntimeError(f"gunicorn exited with {self.process.returncode}: {self.stderr()[-2000:]}")
        try:
            return get(self.port, f"{self.prefix}healthz", timeout=5)[0] == 200
        except OSError:
            return False

    def worker_pids(self) -> list[int]:
        pid = self.process.pid
        try:
            children = Path(f"/proc/{pid}/task/{pid}/children").read_text().split()
        except OSError:
            return []
        return [int(c) for c in children if _alive(int(c))]

    def stdout(self) -> str:
        self._out.flush()
        return (self.folder / "stdout.log").read_text(errors="replace")

    def stderr(self) -> str:
        self._err.flush()
        return (self.folder / "stderr.log").read_text(errors="replace")

    def stop(self) -> None:
        if self.process is not None and self.process.poll() is None:
            self.process.send_signal(signal.SIGTERM)
            try:
                self.process.wait(timeout=30)
            except subprocess.TimeoutExpired:
                self.process.kill()
                self.process.wait(timeout=10)
        for handle in (getattr(self, "_out", None), getattr(self, "_err", None)):
            if handle:
                handle.close()

    def __enter__(self):
        return self.start()

    def __exit__(self, *exc):
        self.stop()


class DevServer:
    """``python -m server`` on a free loopback port with a private cache folder and data home,
    for the browser benchmarks; a context manager that waits for ``/healthz``."""

    def __init__(self):
        self.port = free_port()
        self.base = f"http://{LOOPBACK}:{self.port}/"
        env = {**os.environ, "FDESK_CACHE_DIR": tempfile.mkdtemp(), "XDG_DATA_HOME": tempfile.mkdtemp()}
        self._process = subprocess.Popen([sys.executable, "-m", "server", "--port", str(self.port)], cwd=ROOT,
                                         env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)

    def _healthy(self) -> bool:
        try:
            return get(self.port, "/healthz", timeout=1)[0] == 200
        except OSError:
            return False

    def __enter__(self) -> "DevServer":
        _wait(self._healthy, 30.0, "the development server answering /healthz")
        return self

    def __exit__(self, *exc):
        self._process.terminate()
        self._process.wait(timeout=10)


def chromium(width: int = 1400, height: int = 900):
    """A headless Chromium (selenium) with the flags of ../shared/TOOLCHAIN.md and a viewport of
    `width` × `height` CSS pixels, with its own throwaway profile."""
    from selenium import webdriver
    from selenium.webdriver.chrome.options import Options

    options = Options()
    options.binary_location = "/usr/bin/chromium"
    for flag in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
                 "--disable-background-networking", "--disable-component-update",
                 "--disable-sync", "--no-first-run", f"--window-size={width},{height}",
                 f"--user-data-dir={tempfile.mkdtemp()}"):
        options.add_argument(flag)
    return webdriver.Chrome(options=options)


def page_update_payload(dependencies: list[dict], search: str, href: str = "http://127.0.0.1/") -> dict:
    """The body Dash's renderer POSTs to ``_dash-update-component`` when the link changes, for
    the callback that draws the open panel (read from ``_dash-dependencies``, so it follows the
    callback's current outputs and states)."""
    dep = next(d for d in dependencies if "fd-panel.children" in d["output"])

    def spec(text: str):
        ident, prop = text.rsplit(".", 1)
        # a pattern-matching output (the panel's figures) matches nothing in a fresh page
        return [] if ident.startswith("{") else {"id": ident, "property": prop}

    outputs = [spec(part) for part in dep["output"].strip(".").split("...")]
    # the panel listens to the whole address (server/callbacks.py), `href` with `search` in it
    values = {("fd-url", "search"): search, ("fd-url", "href"): href.split("?")[0] + search}
    inputs = [{**i, "value": values.get((i["id"], i["property"]))} for i in dep["inputs"]]
    state = [{**s, "value": values.get((s["id"], s["property"]))} for s in dep["state"]]
    return {"output": dep["output"], "outputs": outputs, "inputs": inputs, "state": state,
            "changedPropIds": [f"{i['id']}.{i['property']}" for i in dep["inputs"]]}
