"""A throwaway PostgreSQL server for the store's tests and benchmark: apt's PostgreSQL 15
binaries, a fresh cluster in a temporary folder, listening only on a Unix socket in that folder
(no TCP), started and stopped by its own PID.

initdb and pg_ctl refuse to run as root, so as root they run as the ``postgres`` user
(``runuser -u postgres``), which then owns the folder (../shared/TOOLCHAIN.md). Nothing here is
imported by the app.
"""

from __future__ import annotations

import glob
import os
import shutil
import signal
import subprocess
import tempfile
import time
from pathlib import Path

__all__ = ["PostgresServer", "postgres_binaries"]


def postgres_binaries() -> Path | None:
    """The folder holding initdb and pg_ctl (the newest installed version), or None."""
    for folder in sorted(glob.glob("/usr/lib/postgresql/*/bin"), key=lambda p: int(p.split("/")[-2]),
                         reverse=True):
        if os.access(os.path.join(folder, "pg_ctl"), os.X_OK):
            return Path(folder)
    found = shutil.which("pg_ctl")
    return Path(found).parent if found else None


class PostgresServer:
    """``PostgresServer(port).start()``; `url(database)` is its SQLAlchemy URL; `stop` ends the
    postmaster by the PID in its pidfile. `start` again reuses the same cluster."""

    def __init__(self, port: int):
        self.port = port
        self.bin = postgres_binaries()
        if self.bin is None:
            raise RuntimeError("PostgreSQL is not installed (apt-get install postgresql)")
        self._as_postgres = os.geteuid() == 0
        # as root, in /tmp: the postgres user cannot enter a private TMPDIR (CI's is mode 700)
        self.folder = Path(tempfile.mkdtemp(prefix="fdesk-pg-", dir="/tmp" if self._as_postgres else None))
        self.data = self.folder / "data"
        self.pid: int | None = None
        if self._as_postgres:
            shutil.chown(self.folder, "postgres")
            self.folder.chmod(0o700)
        self._run("initdb", "-D", str(self.data), "-A", "trust", "-U", "fdesk", "--no-sync")

    def _run(self, tool: str, *args: str, check: bool = True):
        command = [str(self.bin / tool), *args]
        if self._as_postgres:
            command = ["runuser", "-u", "postgres", "--", *command]
        return subprocess.run(command, check=check, capture_output=True, text=True)

    def url(self, database: str = "postgres") -> str:
        return f"postgresql+psycopg://fdesk@/{database}?host={self.folder}&port={self.port}"

    def start(self) -> "PostgresServer":
        self._run("pg_ctl", "-D", str(self.data), "-w", "-t", "30", "-l", str(self.folder / "log"),
                  "-o", f"-k {self.folder} -p {self.port} -c listen_addresses='' -c fsync=on", "start")
        self.pid = int((self.data / "postmaster.pid").read_text().split()[0])
        return self

    def connect(self, database: str = "postgres"):
        import psycopg

        return psycopg.connect(host=str(self.folder), port=self.port, user="fdesk", dbname=database,
                               autocommit=True)

    def create_database(self, name: str) -> str:
        """A new empty database; returns its URL."""
        with self.connect() as conn:
            conn.execute(f'CREATE DATABASE "{name}"')
        return self.url(name)

    def stop(self) -> None:
        """SIGINT to the postmaster's PID (PostgreSQL's "fast" shutdown), then wait for it."""
        if self.pid is None:
            return
        try:
            os.kill(self.pid, signal.SIGINT)
        except ProcessLookupError:
            self.pid = None
            return
        end = time.monotonic() + 30
        while time.monotonic() < end:
            try:
                os.kill(self.pid, 0)
            except ProcessLookupError:
                break
            if (self.data / "postmaster.pid").exists() is False:
                break
            time.sleep(0.05)
        self.pid = None

    def remove(self) -> None:
        self.stop()
        shutil.rmtree(self.folder, ignore_errors=True)

    def __enter__(self):
        return self.start()

    def __exit__(self, *exc):
        self.remove()
