"""WSGI entry point: ``gunicorn --no-control-socket -w 2 -b 127.0.0.1:8050 server.wsgi:application``."""

from server.app import create_app, settle_heap

app = create_app()
application = app.server
settle_heap()
