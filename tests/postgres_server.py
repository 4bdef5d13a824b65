"""A real PostgreSQL server for the archive tests, started from the installed server binaries.

``postgres_server`` (session-wide) runs ``initdb`` and ``pg_ctl`` in a temporary folder, on a free
port of 127.0.0.1, trusting local connections; as root it runs them as the ``postgres`` user (or
``nobody``), since initdb refuses to run as root. Without the binaries it skips, saying so.
``pg_url`` (per test) creates an empty database on that server and gives its URL.

Import the fixtures into a test module: ``from tests.postgres_server import pg_url, postgres_server``.
One server serves every module that imports them.
"""

from __future__ import annotations

import glob
import os
import pwd
import shutil
import socket
import subprocess
import tempfile
import uuid
from dataclasses import dataclass
from pathlib import Path

import pytest

ADMIN = "cwtest"


@dataclass
class Server:
    folder: Path
    bin: Path
    port: int
    run_as: list[str]

    def url(self, database: str = "postgres", user: str = ADMIN) -> str:
        return f"postgresql://{user}@127.0.0.1:{self.port}/{database}"

    def psql(self, sql: str, database: str = "postgres") -> str:
        """Run SQL as the server's superuser (through the PostgreSQL client library)."""
        import psycopg

        with psycopg.connect(f"host=127.0.0.1 port={self.port} user={ADMIN} dbname={database}",
                             autocommit=True) as conn:
            cursor = conn.execute(sql)
            return "" if cursor.description is None else "\n".join(str(r) for r in cursor.fetchall())

    def stop(self) -> None:
        subprocess.run(self.run_as + [str(self.bin / "pg_ctl"), "-D", str(self.folder / "data"), "-m", "fast", "-w",
                                      "stop"], capture_output=True, timeout=60)
        shutil.rmtree(self.folder, ignore_errors=True)


def server_binaries() -> Path | None:
    """The folder holding initdb and pg_ctl: PostgreSQL's Debian layout, else the PATH."""
    found = sorted(glob.glob("/usr/lib/postgresql/*/bin/initdb"), key=lambda p: int(Path(p).parts[4]) if Path(p).parts[4].isdigit() else 0)
    if found:
        return Path(found[-1]).parent
    initdb = shutil.which("initdb")
    if initdb and shutil.which("pg_ctl"):
        return Path(initdb).resolve().parent
    return None


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


_SERVERS: dict[str, Server] = {}


def _start() -> Server:
    binaries = server_binaries()
    if binaries is None:
        pytest.skip("PostgreSQL server binaries (initdb, pg_ctl) are not installed, so the tests against a real "
                    "PostgreSQL server are skipped; install them (Debian: apt-get install postgresql) to run them.")
    folder = Path(tempfile.mkdtemp(prefix="curvewright-pg-"))
    run_as: list[str] = []
    if os.geteuid() == 0:  # initdb refuses root: run the server as an unprivileged user
        user = next((u for u in ("postgres", "nobody") if _has_user(u)), None)
        if user is None:
            pytest.skip("running as root with no 'postgres' or 'nobody' user to run the PostgreSQL server as")
        entry = pwd.getpwnam(user)
        os.chown(folder, entry.pw_uid, entry.pw_gid)
        run_as = ["runuser", "-u", user, "--"] if shutil.which("runuser") else [
            "setpriv", f"--reuid={entry.pw_uid}", f"--regid={entry.pw_gid}", "--clear-groups"]
    port = _free_port()
    init = subprocess.run(run_as + [str(binaries / "initdb"), "-D", str(folder / "data"), "-U", ADMIN, "--auth=trust",
                                    "-E", "UTF8", "--no-locale"], capture_output=True, text=True, timeout=180)
    if init.returncode != 0:
        shutil.rmtree(folder, ignore_errors=True)
        pytest.fail(f"initdb failed: {init.stderr[-2000:]}")
    options = f"-p {port} -k {folder} -c listen_addresses=127.0.0.1 -c max_connections=60 -c fsync=off"
    start = subprocess.run(run_as + [str(binaries / "pg_ctl"), "-D", str(folder / "data"), "-o", options, "-l",
                                     str(folder / "server.log"), "-w", "-t", "60", "start"],
                           capture_output=True, text=True, timeout=120)
    if start.returncode != 0:
        log = (folder / "server.log").read_text(errors="replace") if (folder / "server.log").exists() else ""
        shutil.rmtree(folder, ignore_errors=True)
        pytest.fail(f"the PostgreSQL server did not start: {start.stderr[-1000:]}\n{log[-2000:]}")
    return Server(folder, binaries, port, run_as)


def _has_user(name: str) -> bool:
    try:
        pwd.getpwnam(name)
        return True
    except KeyError:
        return False


@pytest.fixture(scope="session")
def postgres_server():  # type: ignore[no-untyped-def]
    if "server" not in _SERVERS:
        _SERVERS["server"] = _start()
    yield _SERVERS["server"]
    server = _SERVERS.pop("server", None)
    if server is not None:
        server.stop()


@pytest.fixture
def pg_url(postgres_server):  # type: ignore[no-untyped-def]
    """A new, empty database on the test server, as an archive URL."""
    name = f"archive_{uuid.uuid4().hex[:12]}"
    postgres_server.psql(f"CREATE DATABASE {name}")
    yield postgres_server.url(name)
    postgres_server.psql(f"DROP DATABASE IF EXISTS {name} WITH (FORCE)")
