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

__all__ = ["content_security_policy", "security_headers", "SecurityHeaders", "install_cache_headers",
           "MODEL_ANSWER_MAX_AGE"]

# Seconds a browser or proxy may reuse a pure model answer without asking again: short, so a
# server upgrade shows within minutes; the ETag then makes the re-check cheap (judgement).
MODEL_ANSWER_MAX_AGE = 300


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


def install_cache_headers(flask_app, api_prefix: str) -> None:
    """``Cache-Control`` on the API and page updates: a compare answer that depends on the link
    alone (no ``data=``) may be kept `MODEL_ANSWER_MAX_AGE` seconds and carries an ETag of its
    body (a repeat with ``If-None-Match`` gets a 304); everything that depends on uploaded data,
    page updates, uploads, catalogue files and the health check are ``no-store``."""
    from flask import request

    compare = api_prefix.rstrip("/") + "/api/v1/compare"
    dynamic = (api_prefix.rstrip("/") + "/api/", api_prefix.rstrip("/") + "/healthz",
               api_prefix + "_dash-update-component")

    @flask_app.after_request
    def _cache_control(response):
        if request.path == compare and request.method == "GET" and response.status_code == 200 \
                and b"data=" not in request.query_string and not response.is_streamed:
            response.headers["Cache-Control"] = f"public, max-age={MODEL_ANSWER_MAX_AGE}"
            response.add_etag()
            return response.make_conditional(request)
        if request.path.startswith(dynamic):
            response.headers["Cache-Control"] = "no-store"
        return response


class SecurityHeaders:
    """WSGI middleware: sets `headers` on every response (replacing any of the same name), and
    writes the Location of a redirect to this same server as a path, so a redirect seen behind a
    TLS-terminating proxy never downgrades the scheme."""

    def __init__(self, wsgi_app: Callable, headers: list[tuple[str, str]]):
        self.wsgi_app = wsgi_app
        self.headers = headers
        self._names = {name.lower() for name, _ in headers}

    def __call__(self, environ, start_response):
        origin = f"{environ.get('wsgi.url_scheme', 'http')}://{environ.get('HTTP_HOST', '')}"

        def start(status, response_headers, exc_info=None):
            kept = [(k, v) for k, v in response_headers if k.lower() not in self._names]
            if status.startswith("3"):
                kept = [(k, v[len(origin):] or "/" if k.lower() == "location" and v.startswith(origin + "/")
                         else v) for k, v in kept]
            return start_response(status, kept + self.headers, exc_info)

        return self.wsgi_app(environ, start)
