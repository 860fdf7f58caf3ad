"""One line per request on stdout, and error logs without the values a client sent.

The line is ``<UTC time> <method> <path> <status> <ms> ms cache=<hit|hit-shared|miss|-> pid=<n>``:
the path only, percent-encoded (so no typed text, newline or label of the query reaches the
log), and the cache outcome of the request's model look-ups (`server.cache.request_cache_status`),
which is also sent as the ``X-Fdesk-Cache`` response header. The time is until the app hands
back its response: for a streamed answer (the catalogue CSV) that is the time to its first byte.

`RedactExceptions` (a filter on the app's logger) renders exception tracebacks with the
exception's type but without its message, since messages can quote what a user typed (a label,
a malformed number); every handler then prints that rendering.
"""

from __future__ import annotations

import logging
import os
import sys
import time
import traceback
import urllib.parse
from typing import Callable

from server.cache import request_cache_status

__all__ = ["RequestLog", "RedactExceptions", "redacted_traceback", "request_logger", "CACHE_HEADER"]

CACHE_HEADER = "X-Fdesk-Cache"
_PATH_SAFE = "/._-~:@!$&'()*+,;="


class _Stdout(logging.StreamHandler):
    """A handler on whatever `sys.stdout` is when a line is written."""

    def __init__(self):
        super().__init__(sys.stdout)

    @property
    def stream(self):
        return sys.stdout

    @stream.setter
    def stream(self, _value):
        pass


def request_logger() -> logging.Logger:
    """The ``fdesk.requests`` logger (to stdout, not propagated), configured once per process."""
    logger = logging.getLogger("fdesk.requests")
    if not any(isinstance(h, _Stdout) for h in logger.handlers):
        logger.addHandler(_Stdout())
        logger.setLevel(logging.INFO)
        logger.propagate = False
    return logger


def redacted_traceback(exc_info) -> str:
    """The stack and the exception's type, without its message (nor those of its causes)."""
    kind, _value, tb = exc_info
    lines = traceback.format_list(traceback.extract_tb(tb))
    name = getattr(kind, "__qualname__", str(kind))
    return "Traceback (most recent call last):\n" + "".join(lines) + f"{name}: <message withheld>"


class RedactExceptions(logging.Filter):
    """Pre-renders a record's traceback with `redacted_traceback` (logging's formatters print
    ``record.exc_text`` when it is set instead of formatting the exception themselves)."""

    def filter(self, record: logging.LogRecord) -> bool:
        if record.exc_info and record.exc_info[0] is not None:
            record.exc_text = redacted_traceback(record.exc_info)
        return True


def _clean_path(environ) -> str:
    path = (environ.get("SCRIPT_NAME", "") + environ.get("PATH_INFO", "")) or "/"
    path = urllib.parse.quote(path.encode("latin-1", errors="replace"), safe=_PATH_SAFE)
    return path if len(path) <= 200 else path[:200] + "…"


class RequestLog:
    """WSGI middleware: the request line above, and the cache header on the response."""

    def __init__(self, wsgi_app: Callable):
        self.wsgi_app = wsgi_app
        self.logger = request_logger()

    def __call__(self, environ, start_response):
        started = time.perf_counter()
        seen = {"status": "500"}

        def start(status, headers, exc_info=None):
            seen["status"] = status.split(" ", 1)[0]
            headers = [(k, v) for k, v in headers if k.lower() != CACHE_HEADER.lower()]
            headers.append((CACHE_HEADER, request_cache_status(environ)))
            return start_response(status, headers, exc_info)

        try:
            return self.wsgi_app(environ, start)
        finally:
            ms = (time.perf_counter() - started) * 1e3
            method = environ.get("REQUEST_METHOD", "-")
            method = method if method.isalpha() and len(method) <= 10 else "-"
            self.logger.info("%s %s %s %s %.1f ms cache=%s pid=%d",
                             time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime()), method, _clean_path(environ),
                             seen["status"], ms, request_cache_status(environ), os.getpid())
