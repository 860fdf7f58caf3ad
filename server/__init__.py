"""Friedmann Desk web server: app factory, configuration, cache, link codec, callbacks and API."""

from server.app import create_app

__all__ = ["create_app"]
