"""``python -m server [--host 127.0.0.1] [--port 8050] [--debug]``: serve the dashboard."""

from __future__ import annotations

import argparse

from server.app import create_app, settle_heap


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(prog="python -m server", description="Serve Friedmann Desk.")
    parser.add_argument("--host", default="127.0.0.1", help="interface to listen on (default 127.0.0.1)")
    parser.add_argument("--port", type=int, default=8050, help="port (default 8050)")
    parser.add_argument("--debug", action="store_true", help="Dash debug mode: reloader and dev tools")
    args = parser.parse_args(argv)
    app = create_app()
    settle_heap()
    app.run(host=args.host, port=args.port, debug=args.debug)


if __name__ == "__main__":
    main()
