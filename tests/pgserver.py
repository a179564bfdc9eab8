"""A throwaway PostgreSQL server for the lab tests, from the system's own server binaries.

``initdb`` and ``pg_ctl`` in a temporary folder, on a free loopback port, with trust
authentication on 127.0.0.1 only (test data, nothing else listens), run as the unprivileged
``postgres`` (or ``nobody``) user when the tests run as root. Stopped at the end. Where no
binaries are found the tests are skipped with one line saying how to enable them — except under
CI (``CI=true``), where that is a failure.
"""

from __future__ import annotations

import glob
import os
import pwd
import shutil
import socket
import subprocess
import tempfile
from pathlib import Path

import pytest

ENABLE = ("the lab tests need a PostgreSQL server's binaries (initdb, pg_ctl): install the Debian "
          "package 'postgresql' or set BENCHWARDEN_PG_BIN to their folder")


def bin_dir() -> Path | None:
    env = os.environ.get("BENCHWARDEN_PG_BIN")
    cands = [env] if env else []
    cands += sorted(glob.glob("/usr/lib/postgresql/*/bin"), key=lambda p: int(p.split("/")[-2]), reverse=True)
    which = shutil.which("initdb")
    if which:
        cands.append(str(Path(which).resolve().parent))
    for c in cands:
        if c and (Path(c) / "initdb").exists() and (Path(c) / "pg_ctl").exists():
            return Path(c)
    return None


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


class PgServer:
    def __init__(self, bindir: Path) -> None:
        self.bindir = bindir
        self.root = Path(tempfile.mkdtemp(prefix="bw-pg-"))
        self.data = self.root / "data"
        self.port = _free_port()
        self.user: str | None = None
        if os.geteuid() == 0:
            for name in ("postgres", "nobody"):
                try:
                    pw = pwd.getpwnam(name)
                except KeyError:
                    continue
                self.user = name
                os.chown(self.root, pw.pw_uid, pw.pw_gid)
                break
        os.chmod(self.root, 0o700)

    def _run(self, *argv: str) -> None:
        # no timeout here: pg_ctl bounds its own waits (-t), and subprocess's timed wait polls
        # with time.sleep, which under libfaketime (the date-independence check) can fail with
        # EINVAL when the real monotonic clock is kept
        subprocess.run([str(self.bindir / argv[0]), *argv[1:]], check=True, capture_output=True,
                       user=self.user, cwd=self.root)

    def start(self) -> None:
        self._run("initdb", "-D", str(self.data), "-U", "lab_owner", "--auth=trust", "-E", "UTF8", "--no-sync")
        opts = f"-p {self.port} -k {self.root} -c listen_addresses=127.0.0.1 -c fsync=off"
        self._run("pg_ctl", "-D", str(self.data), "-o", opts, "-l", str(self.root / "log"), "-w", "-t", "60", "start")

    def stop(self) -> None:
        try:
            self._run("pg_ctl", "-D", str(self.data), "-m", "immediate", "-w", "-t", "60", "stop")
        except subprocess.CalledProcessError:
            pass

    def restart(self) -> None:
        opts = f"-p {self.port} -k {self.root} -c listen_addresses=127.0.0.1 -c fsync=off"
        self._run("pg_ctl", "-D", str(self.data), "-o", opts, "-l", str(self.root / "log"), "-w", "-t", "60", "start")

    def url(self, user: str = "lab_owner", db: str = "postgres") -> str:
        return f"postgresql://{user}@127.0.0.1:{self.port}/{db}"

    def cleanup(self) -> None:
        self.stop()
        shutil.rmtree(self.root, ignore_errors=True)


def server_or_skip() -> PgServer:
    b = bin_dir()
    if b is None:
        if os.environ.get("CI") == "true":
            pytest.fail(ENABLE + " (CI=true: a skip would hide the lab tests)")
        pytest.skip(ENABLE)
    srv = PgServer(b)
    srv.start()
    return srv
