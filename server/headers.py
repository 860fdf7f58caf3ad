"""Security headers on every response, added by a WSGI wrapper (so refusals and error pages
carry them too).

The Content-Security-Policy allows scripts from this server only, plus the hashes of the inline
scripts Dash writes into its page (`dash.Dash.csp_hashes`: the renderer start-up line). Styles
allow ``'unsafe-inline'`` because Plotly and Dash's components insert ``<style>`` elements and
style attributes at run time; images allow ``data:`` and ``blob:`` for Plotly's PNG export.
``frame-ancestors`` (default ``'self'``; ``FRAME_ANCESTORS`` to list the sites that may embed
the page, e.g. a group's wiki) governs framing.
"""

from __future__ import annotations

from typing import Callable, Iterable

__all__ = ["content_security_policy", "security_headers", "SecurityHeaders"]


def content_security_policy(script_hashes: Iterable[str], frame_ancestors: str = "'self'") -> str:
    directives = {
        "default-src": "'self'",
        "script-src": " ".join(["'self'", *script_hashes]),
        "style-src": "'self' 'unsafe-inline'",
        "img-src": "'self' data: blob:",
        "font-src": "'self' data:",
        "connect-src": "'self'",
        "object-src": "'none'",
        "base-uri": "'self'",
        "form-action": "'self'",
        "frame-ancestors": frame_ancestors,
    }
    return "; ".join(f"{name} {value}" for name, value in directives.items())


def security_headers(csp: str) -> list[tuple[str, str]]:
    return [
        ("Content-Security-Policy", csp),
        ("X-Content-Type-Options", "nosniff"),
        ("Referrer-Policy", "no-referrer"),
        ("X-Frame-Options", "SAMEORIGIN"),  # for browsers that predate frame-ancestors
        ("Cross-Origin-Opener-Policy", "same-origin"),
    ]


class SecurityHeaders:
    """WSGI middleware: sets `headers` on every response (replacing any of the same name)."""

    def __init__(self, wsgi_app: Callable, headers: list[tuple[str, str]]):
        self.wsgi_app = wsgi_app
        self.headers = headers
        self._names = {name.lower() for name, _ in headers}

    def __call__(self, environ, start_response):
        def start(status, response_headers, exc_info=None):
            kept = [(k, v) for k, v in response_headers if k.lower() not in self._names]
            return start_response(status, kept + self.headers, exc_info)

        return self.wsgi_app(environ, start)
