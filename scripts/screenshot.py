"""Make the README screenshot: serve the app, open a four-model link in headless Chromium, save
docs/screenshot.png. ``.venv/bin/python scripts/screenshot.py [out.png]``."""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import tempfile
import time
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
# A made-up survey team's four candidate models (the README's scenario).
LINK = ("m1.label=Baseline&m2.label=Thawing%20w0wa&m2.w0=-0.85&m2.wa=-0.4&m3.label=Mildly%20closed"
        "&m3.ok=-0.02&m4.label=Heavy%20neutrinos&m4.mnu=0.2,0.1&tab=distances")


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def main(out: str) -> None:
    port = free_port()
    env = {**os.environ, "FDESK_CACHE_DIR": tempfile.mkdtemp()}
    server = subprocess.Popen([sys.executable, "-m", "server", "--port", str(port)], cwd=ROOT, env=env)
    try:
        for _ in range(100):
            try:
                urllib.request.urlopen(f"http://127.0.0.1:{port}/healthz", timeout=1)
                break
            except OSError:
                time.sleep(0.2)
        subprocess.run(["chromium", "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
                        f"--user-data-dir={tempfile.mkdtemp()}", "--virtual-time-budget=10000",
                        "--window-size=1280,800", f"--screenshot={Path(out).resolve()}",
                        f"http://127.0.0.1:{port}/?{LINK}"], check=True, capture_output=True)
    finally:
        server.terminate()
        server.wait(timeout=10)


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else str(ROOT / "docs" / "screenshot.png"))
