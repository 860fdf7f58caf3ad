"""The one cache extension, created without an app and attached in `create_app`."""

from __future__ import annotations

import hashlib
from pathlib import Path

from flask_caching import Cache

__all__ = ["cache", "code_fingerprint"]

cache = Cache()


def code_fingerprint() -> str:
    """Short hash of the model and computation source, so cached results from older code are
    never served after an upgrade (it becomes part of the cache key prefix)."""
    root = Path(__file__).resolve().parent.parent
    digest = hashlib.sha256()
    for folder in ("model", "server"):
        for path in sorted((root / folder).glob("*.py")):
            if folder == "server" and path.name not in ("compute.py", "codec.py"):
                continue
            digest.update(path.name.encode())
            digest.update(path.read_bytes())
    return digest.hexdigest()[:12]
