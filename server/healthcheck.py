"""``python server/healthcheck.py``: exit 0 when the local server answers ``/healthz``.

The container's HEALTHCHECK runs it every 30 s, so it imports only the standard library (not
the app, whose imports take a second or more of CPU). It reads the same environment as the
start command: ``HOST`` (default 127.0.0.1), ``PORT`` (default 8050) and ``FDESK_URL_PREFIX``
(default ``/``).
"""

from __future__ import annotations

import json
import os
import sys
import urllib.request


def _prefix(text: str) -> str:
    # the rule of server.config.normalise_prefix (a test checks that the two agree)
    parts = [p for p in str(text or "/").split("/") if p]
    return "/" + "/".join(parts) + ("/" if parts else "")


def health_url(environ=os.environ) -> str:
    host = environ.get("HOST", "127.0.0.1")
    port = int(environ.get("PORT", "8050"))
    return f"http://{host}:{port}{_prefix(environ.get('FDESK_URL_PREFIX', '/'))}healthz"


def main() -> int:
    try:
        with urllib.request.urlopen(health_url(), timeout=5) as response:
            ok = response.status == 200 and json.load(response).get("status") == "ok"
    except (OSError, ValueError) as err:
        print(f"unhealthy: {type(err).__name__}", file=sys.stderr)
        return 1
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
