"""``python -m server.admin data list|remove|prune|stats``: look after the stored measurement sets.

Reads the same configuration as the server (defaults, then ``FDESK_*`` environment variables:
``FDESK_DATABASE_URL``, ``FDESK_DATA_MAX_BYTES``), so run it with the service's environment::

    python -m server.admin data list                      # hash, uploaded (UTC), bytes, rows, file name
    python -m server.admin data stats                     # sets, bytes used of the bound
    python -m server.admin data remove 0123abcd...        # links to it then say it was removed
    python -m server.admin data prune --older-than 365d   # --dry-run to see what would go

Durations are a number and a unit: ``d`` (days), ``h`` (hours), ``w`` (weeks). Exit status 0
on success, 1 when the store cannot be opened, 2 for a malformed command line.
"""

from __future__ import annotations

import argparse
import datetime as dt
import re
import sys

from flask import Flask

from server.config import ENV_PREFIX, default_config
from server.set_store import SetStore, StoreError

__all__ = ["main", "parse_duration"]

_UNITS = {"h": 3600, "d": 86400, "w": 7 * 86400}


def parse_duration(text: str) -> dt.timedelta:
    """``365d`` -> 365 days; ``12h``, ``2w`` likewise. Raises `argparse.ArgumentTypeError`."""
    found = re.fullmatch(r"\s*(\d+(?:\.\d+)?)\s*([hdw])\s*", str(text))
    if not found:
        raise argparse.ArgumentTypeError(f"--older-than: {text!r} is not a duration; expected a number and a "
                                         "unit h, d or w, e.g. 365d")
    return dt.timedelta(seconds=float(found.group(1)) * _UNITS[found.group(2)])


def _store() -> SetStore:
    config = Flask("admin").config
    config.update(default_config())
    config.from_prefixed_env(ENV_PREFIX)
    return SetStore(config["DATABASE_URL"] or None, max_bytes=int(config["DATA_MAX_BYTES"]),
                    timeout=float(config["DATA_STORE_TIMEOUT_SECONDS"]))


def _print_rows(rows, out) -> None:
    print(f"{'hash':24}  {'uploaded (UTC)':19}  {'bytes':>9}  {'rows':>5}  file name", file=out)
    for r in rows:
        name = r.file_name.replace("\n", " ").replace("\r", " ")
        print(f"{r.hash:24}  {r.uploaded_at:%Y-%m-%d %H:%M:%S}  {r.byte_size:9d}  {r.row_count:5d}  {name}", file=out)


def main(argv: list[str] | None = None, out=None) -> int:
    out = out or sys.stdout
    parser = argparse.ArgumentParser(prog="python -m server.admin",
                                     description="Look after the measurement sets this server stores.")
    topics = parser.add_subparsers(dest="topic", required=True)
    data = topics.add_parser("data", help="the stored measurement sets")
    actions = data.add_subparsers(dest="action", required=True)
    actions.add_parser("list", help="every stored set, oldest first")
    actions.add_parser("stats", help="how many sets and bytes, and the bound")
    remove = actions.add_parser("remove", help="remove sets by hash")
    remove.add_argument("hashes", nargs="+", metavar="HASH")
    prune = actions.add_parser("prune", help="remove sets uploaded longer ago than a duration")
    prune.add_argument("--older-than", required=True, type=parse_duration, metavar="DURATION",
                       help="e.g. 365d, 12w, 48h")
    prune.add_argument("--dry-run", action="store_true", help="list what would be removed, remove nothing")
    args = parser.parse_args(argv)

    store = _store()
    try:
        if args.action == "list":
            _print_rows(store.listing(), out)
        elif args.action == "stats":
            s = store.stats()
            bound = f"{s['max_bytes']} bytes" if s["max_bytes"] else "no bound"
            print(f"{s['engine']} store {store.where}: {s['sets']} sets, {s['bytes']} bytes (bound: {bound})",
                  file=out)
        elif args.action == "remove":
            gone = store.remove(args.hashes)
            for h in args.hashes:
                print(f"{h}: {'removed' if h in gone else 'not stored, nothing to remove'}", file=out)
        else:
            old = store.prune(args.older_than, dry_run=args.dry_run)
            _print_rows(old, out)
            print(f"{len(old)} sets {'would be' if args.dry_run else 'were'} removed "
                  f"(uploaded before {dt.datetime.now(dt.timezone.utc) - args.older_than:%Y-%m-%d %H:%M} UTC)",
                  file=out)
    except StoreError as err:
        print(f"python -m server.admin: {err}", file=sys.stderr)
        return 1
    finally:
        store.close()
    return 0


if __name__ == "__main__":
    sys.exit(main())
