"""The app factory. Nothing binds to an app at import time."""

from __future__ import annotations

import gc
import re
from pathlib import Path

import dash
from flask import Flask
from werkzeug.middleware.proxy_fix import ProxyFix

from server.cache import attach as attach_cache
from server.config import ENV_PREFIX, default_config, normalise_prefix
from server.guards import install_guards
from server.headers import SecurityHeaders, content_security_policy, install_cache_headers, security_headers
from server.limits import install_limits
from server.requestlog import RedactExceptions, RequestLog
from server.responses import install_response_cache

__all__ = ["create_app", "settle_heap"]

ASSETS = Path(__file__).resolve().parent.parent / "layouts" / "assets"

# Code nearly every panel needs that the components would otherwise fetch only once the first
# panel has arrived (plotly.js and dcc.Graph's chunk) or the view bar is drawn (dcc.Dropdown's),
# each behind three round trips and revalidated on every visit. As deferred scripts of the page
# they download with it, under fingerprinted URLs cached for a year, and run while the page
# waits for its first answers. AG Grid's build is left to load when a long table needs it.
# (namespace, path in that package); DEVELOPERS.md, "Keeping the page fast".
# The two small chunks come first: deferred scripts run in order, and the view bar's dropdowns
# are drawn before plotly.js (4.6 MB) is read and run, which made dcc fetch its chunk again.
EAGER_SCRIPTS = (("dash", "dcc/async-dropdown.js"), ("dash", "dcc/async-graph.js"),
                 ("plotly", "package_data/plotly.min.js"))

# Dash puts Babel's polyfill for old browsers (@babel/polyfill, core-js 2) before React. A
# browser that runs plotly.js 3 needs none of it but `regeneratorRuntime`, which
# layouts/assets/regenerator.js supplies; running it cost every draw about 0.06 s, and its
# replacements of native methods (String.prototype.trim among them) slowed Plotly's drawing.
_POLYFILL_TAG = re.compile(r'<script src="[^"]*/deps/polyfill@[^"]*"></script>\s*')


class _Dash(dash.Dash):
    """Dash, with the page's scripts less Babel's polyfill (`_POLYFILL_TAG`)."""

    def _generate_scripts_html(self) -> str:
        return _POLYFILL_TAG.sub("", super()._generate_scripts_html())


def create_app(config: dict | None = None) -> dash.Dash:
    """Build the Dash app (its Flask server is ``app.server``).

    Configuration order: `server.config.default_config`, then ``FDESK_*`` environment
    variables, then `config`. ``URL_PREFIX`` serves the page, the API and ``/healthz`` under a
    path such as ``/cosmo/``. Dash's debug mode and dev tools stay off (only
    ``python -m server --debug`` turns them on).
    """
    flask_app = Flask("server")
    flask_app.config.update(default_config())
    flask_app.config.from_prefixed_env(ENV_PREFIX)
    flask_app.config.update(config or {})
    prefix = normalise_prefix(flask_app.config["URL_PREFIX"])
    flask_app.config["URL_PREFIX"] = prefix
    attach_cache(flask_app)
    from server import data_store  # deferred: it imports the model
    data_store.attach(flask_app)  # the durable store of uploaded sets, opened (and migrated) now
    if not any(isinstance(f, RedactExceptions) for f in flask_app.logger.filters):
        flask_app.logger.addFilter(RedactExceptions())  # the logger is shared by name: add it once

    from server import api, callbacks, format_page  # deferred: they import the model
    from layouts.page import page

    install_limits(flask_app)
    flask_app.register_blueprint(api.make_blueprint(), url_prefix=prefix.rstrip("/") or None)
    app = _Dash(
        "server",
        server=flask_app,
        url_base_pathname=prefix,
        assets_folder=str(ASSETS),
        title="Friedmann Desk",
        update_title=None,
        suppress_callback_exceptions=True,
    )
    app.index_string = app.index_string.replace("<html>", '<html lang="en">', 1)  # for screen readers
    for namespace, path in EAGER_SCRIPTS:
        app.scripts.append_script({"namespace": namespace, "relative_package_path": path,
                                   "attributes": {"defer": "defer"}})
    options = callbacks.page_options()
    format_url = app.get_relative_path("/format")
    options["data_tools"] = {**options["data_tools"], "format_url": format_url}
    app.layout = page(options)
    format_page.register(flask_app, prefix, page_url=app.get_relative_path("/"))
    callbacks.register(app, options["data_tools"])
    install_guards(flask_app, app, prefix)
    install_response_cache(flask_app)
    install_cache_headers(flask_app, prefix)
    csp = content_security_policy(app.csp_hashes(), flask_app.config["FRAME_ANCESTORS"])
    wsgi = SecurityHeaders(flask_app.wsgi_app, security_headers(csp))
    proxies = int(flask_app.config.get("TRUSTED_PROXIES") or 0)
    if proxies > 0:
        # Behind that many reverse proxies, believe their X-Forwarded-For/-Proto/-Host/-Prefix
        # (FDESK_TRUSTED_PROXIES; README, "Hosting it for a group")
        wsgi = ProxyFix(wsgi, x_for=proxies, x_proto=proxies, x_host=proxies, x_prefix=proxies)
    flask_app.wsgi_app = RequestLog(wsgi)
    return app


def settle_heap() -> None:
    """Once a serving process has built its app: move everything alive (modules, the app, the
    layout) out of the collector's view with `gc.freeze`. Python's full collections otherwise
    walk those few hundred thousand long-lived objects and add tens of milliseconds to an
    update now and then. Only the process entry points call this, never tests."""
    gc.collect()
    gc.freeze()
