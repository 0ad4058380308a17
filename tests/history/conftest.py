"""Fixtures for the history tests: a throw-away PostgreSQL server, and one store URL per backend.

The PostgreSQL server is a real one: initdb into a temporary folder, started with pg_ctl on a Unix socket only
(no TCP), as an unprivileged user (the `postgres` system user when the tests run as root). Its tests skip
only when the PostgreSQL server binaries are not installed.
"""

from __future__ import annotations

import glob
import os
import pwd
import shutil
import subprocess
import tempfile
import uuid
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import pytest

PG_PORT = 54329  # only names the socket file (.s.PGSQL.PORT) in a private folder: no TCP listener


def _pg_bindir() -> Path | None:
    found = shutil.which("initdb")
    if found:
        return Path(found).resolve().parent
    # Debian installs the server binaries outside PATH, one folder per major version.
    candidates = sorted(glob.glob("/usr/lib/postgresql/*/bin/initdb"), key=lambda p: int(p.split("/")[-3]))
    return Path(candidates[-1]).parent if candidates else None


@dataclass(frozen=True)
class PgServer:
    socket_dir: str
    port: int
    user: str

    def url(self, dbname: str) -> str:
        return f"postgresql+psycopg://{self.user}@/{dbname}?host={self.socket_dir}&port={self.port}"


@pytest.fixture(scope="session")
def pg_server() -> Iterator[PgServer]:
    bindir = _pg_bindir()
    if bindir is None or not (bindir / "pg_ctl").exists():
        pytest.skip("PostgreSQL server binaries (initdb, pg_ctl) are not installed: "
                    "apt-get install -y postgresql")
    run_as: dict = {}
    if os.geteuid() == 0:
        try:
            pw = pwd.getpwnam("postgres")
        except KeyError:
            pytest.fail("running as root, the PostgreSQL test server needs the unprivileged 'postgres' user "
                        "(Debian's postgresql package creates it)")
        run_as = {"user": pw.pw_uid, "group": pw.pw_gid, "extra_groups": []}
    base = tempfile.mkdtemp(prefix="gendertrace-pg-")
    data, sockets = os.path.join(base, "data"), os.path.join(base, "run")
    log = os.path.join(base, "server.log")
    os.mkdir(sockets)
    if run_as:
        for p in (base, sockets):
            os.chown(p, run_as["user"], run_as["group"])
    env = {"PATH": f"{bindir}:{os.environ.get('PATH', '')}", "LC_ALL": "C", "HOME": base}
    try:
        subprocess.run([str(bindir / "initdb"), "-D", data, "-A", "trust", "-U", "postgres", "-E", "UTF8",
                        "--no-sync"], check=True, capture_output=True, cwd=base, env=env, **run_as)
        subprocess.run([str(bindir / "pg_ctl"), "-D", data, "-l", log, "-w", "-t", "60", "-o",
                        f"-k {sockets} -p {PG_PORT} -c listen_addresses='' -c fsync=off", "start"],
                       check=True, capture_output=True, cwd=base, env=env, **run_as)
    except subprocess.CalledProcessError as exc:
        detail = (exc.stderr or b"").decode(errors="replace")
        if os.path.exists(log):
            detail += Path(log).read_text(errors="replace")
        shutil.rmtree(base, ignore_errors=True)
        pytest.fail(f"could not start the PostgreSQL test server: {detail}")
    try:
        yield PgServer(sockets, PG_PORT, "postgres")
    finally:
        subprocess.run([str(bindir / "pg_ctl"), "-D", data, "-m", "immediate", "stop"], capture_output=True,
                       cwd=base, env=env, **run_as)
        shutil.rmtree(base, ignore_errors=True)


@pytest.fixture
def pg_url(pg_server: PgServer) -> Iterator[str]:
    """A fresh, empty database on the test server."""
    import psycopg

    name = f"t_{uuid.uuid4().hex[:12]}"
    conninfo = f"host={pg_server.socket_dir} port={pg_server.port} user={pg_server.user} dbname=postgres"
    with psycopg.connect(conninfo, autocommit=True) as conn:
        conn.execute(f'CREATE DATABASE "{name}"')
    yield pg_server.url(name)
    with psycopg.connect(conninfo, autocommit=True) as conn:
        conn.execute(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')


@pytest.fixture(params=["sqlite", "postgresql"])
def store_url(request, tmp_path: Path) -> str:
    """A store location on each backend: a SQLite file path, or a PostgreSQL URL."""
    if request.param == "sqlite":
        return str(tmp_path / "store" / "history.db")
    return request.getfixturevalue("pg_url")
