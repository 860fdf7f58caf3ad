"""Friedmann Desk web server: app factory, configuration, cache, link codec, callbacks and API.

Importing the package loads nothing heavy: `server.codec`, `server.state` and `server.fields`
read and write links without Dash; `create_app` imports the app on first use.
"""

__all__ = ["create_app"]


def __getattr__(name):
    if name == "create_app":
        from server.app import create_app

        return create_app
    raise AttributeError(f"module 'server' has no attribute {name!r}")
