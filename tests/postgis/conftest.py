"""A throwaway PostgreSQL + PostGIS cluster for the PostGIS tests (issue 17).

The cluster lives in a temporary folder, listens on a free loopback port and
is stopped and removed at the end of the session.  The server refuses to run
as root, so under root (CI) it runs as the ``postgres`` system user that
Debian's package creates.  Without the server binaries or the PostGIS
extension the tests skip -- and fail when ``CI`` is set, like the browser tests.

Access: password authentication (scram-sha-256) over TCP for the user
``neve_test`` with the password below, handed to libpq through ``PGPASSWORD``
in the tests, never in a URL.
"""

from __future__ import annotations

import contextlib
import glob
import os
import pwd
import shutil
import socket
import subprocess
import tempfile
import time
from pathlib import Path

import pytest

USER = "neve_test"
PASSWORD = "test-only-pw"  # the throwaway cluster's; not a secret
DB = "neve"


def _bindir() -> Path | None:
    for cand in sorted(glob.glob("/usr/lib/postgresql/*/bin"), reverse=True):
        if Path(cand, "initdb").is_file() and Path(cand, "pg_ctl").is_file():
            return Path(cand)
    found = shutil.which("pg_ctl")
    return Path(found).parent if found and shutil.which("initdb") else None


def _has_postgis() -> bool:
    return bool(glob.glob("/usr/share/postgresql/*/extension/postgis.control"))


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _as_server_user(cmd: list[str], **kw):
    if os.geteuid() == 0:
        cmd = ["runuser", "-u", "postgres", "--", *cmd]
    return subprocess.run(cmd, check=True, capture_output=True, text=True, **kw)


@pytest.fixture(scope="session")
def pg_server():
    """``dict(host, port, user, db, password)`` of a running throwaway cluster."""
    bindir = _bindir()
    missing = []
    if bindir is None:
        missing.append("the PostgreSQL server (initdb, pg_ctl)")
    if not _has_postgis():
        missing.append("the PostGIS extension")
    if os.geteuid() == 0:
        try:
            pwd.getpwnam("postgres")
        except KeyError:
            missing.append("the postgres system user (to run the server as non-root)")
    if missing:
        if os.environ.get("CI"):
            pytest.fail(f"PostGIS tests need {', '.join(missing)} (CI is set, so not skipping)")
        pytest.skip(f"needs {', '.join(missing)}")
    with throwaway_cluster(bindir) as info:
        yield info


@contextlib.contextmanager
def throwaway_cluster(bindir: Path | None = None):
    """Start a cluster in a temporary folder; yield its connection facts; stop and remove it."""
    bindir = bindir or _bindir()
    root = Path(tempfile.mkdtemp(prefix="neve-pg-"))
    data, sock = root / "data", root / "sock"
    sock.mkdir()
    pwfile = root / "pw"
    pwfile.write_text(PASSWORD + "\n")
    if os.geteuid() == 0:
        shutil.chown(root, "postgres")
        shutil.chown(sock, "postgres")
        shutil.chown(pwfile, "postgres")
    port = _free_port()
    _as_server_user([str(bindir / "initdb"), "-D", str(data), "-U", USER, "--pwfile", str(pwfile),
                     "--auth-local=trust", "--auth-host=scram-sha-256", "-E", "UTF8",
                     "--locale=C.UTF-8"])  # fmt: skip
    opts = f"-c listen_addresses=127.0.0.1 -c port={port} -c unix_socket_directories={sock} -c fsync=off"
    _as_server_user([str(bindir / "pg_ctl"), "-D", str(data), "-o", opts, "-l", str(root / "log"),
                     "-w", "-t", "60", "start"])  # fmt: skip
    try:
        env = dict(os.environ, PGPASSWORD=PASSWORD)
        psql = shutil.which("psql") or str(bindir / "psql")
        base = [psql, "-h", "127.0.0.1", "-p", str(port), "-U", USER, "-v", "ON_ERROR_STOP=1", "-q"]
        subprocess.run([*base, "-d", "postgres", "-c", f"CREATE DATABASE {DB}"], env=env, check=True)
        subprocess.run([*base, "-d", DB, "-c", "CREATE EXTENSION postgis"], env=env, check=True)
        subprocess.run([*base, "-d", "postgres", "-c", "CREATE DATABASE plain"], env=env, check=True)
        yield {"host": "127.0.0.1", "port": port, "user": USER, "db": DB, "password": PASSWORD,
               "psql": base, "bindir": bindir}  # fmt: skip
    finally:
        try:
            _as_server_user([str(bindir / "pg_ctl"), "-D", str(data), "-m", "immediate", "-w", "stop"])
        except subprocess.CalledProcessError:
            pass
        time.sleep(0.2)
        shutil.rmtree(root, ignore_errors=True)


@pytest.fixture()
def pg_env(pg_server, monkeypatch):
    """The password through libpq's environment (never in a URL), for the calling test."""
    monkeypatch.setenv("PGPASSWORD", pg_server["password"])
    return pg_server


def db_url(server, table=None, query=None, db=None, **more) -> str:
    from urllib.parse import quote, urlencode

    keys = {}
    if table is not None:
        keys["table"] = table
    if query is not None:
        keys["query"] = query
    keys.update(more)
    q = urlencode(keys, quote_via=quote, safe=".,*=")
    return f"postgresql://{server['user']}@{server['host']}:{server['port']}/{db or server['db']}" + (
        f"?{q}" if q else ""
    )
