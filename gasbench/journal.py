"""The session journal: an embedded SQLite store of sessions, readings, notes and hold tests.

Every write is its own committed transaction (WAL mode, ``synchronous=FULL``), so a reading
that was acknowledged survives the app or the laptop dying. The schema carries a version
(``PRAGMA user_version``) and is migrated forward on open. A session without a stop time was
left running (a crash or a closed terminal) and is offered for resumption.
"""

from __future__ import annotations

import csv
import io
import os
import sqlite3
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from gasbench.errors import JournalError

SCHEMA_VERSION = 2

_MIGRATIONS: dict[int, str] = {
    1: """
    CREATE TABLE sessions (
        id INTEGER PRIMARY KEY,
        bench TEXT NOT NULL,
        profile_path TEXT,
        started_at TEXT NOT NULL,
        stopped_at TEXT
    );
    CREATE TABLE readings (
        id INTEGER PRIMARY KEY,
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        supply_id TEXT NOT NULL,
        at TEXT NOT NULL,
        pressure_abs_pa REAL NOT NULL,
        pressure_text TEXT NOT NULL,
        temperature_k REAL NOT NULL,
        entered_at TEXT NOT NULL
    );
    CREATE INDEX readings_session ON readings(session_id, at);
    CREATE TABLE notes (
        id INTEGER PRIMARY KEY,
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        at TEXT NOT NULL,
        text TEXT NOT NULL
    );
    """,
    2: """
    CREATE TABLE hold_tests (
        id INTEGER PRIMARY KEY,
        at TEXT NOT NULL,
        bench TEXT,
        supply_id TEXT,
        gas TEXT NOT NULL,
        volume_m3 REAL NOT NULL,
        duration_s REAL NOT NULL,
        verdict TEXT NOT NULL,
        leak_rate_sccm REAL NOT NULL,
        leak_rate_uncertainty_sccm REAL NOT NULL,
        details TEXT
    );
    """,
}


def default_path(explicit: str | os.PathLike[str] | None = None) -> Path:
    """Journal location: ``explicit``, else ``$GASBENCH_JOURNAL``, else the user data directory."""
    if explicit:
        return Path(explicit)
    env = os.environ.get("GASBENCH_JOURNAL")
    if env:
        return Path(env)
    from platformdirs import user_data_dir

    return Path(user_data_dir("gasbench", appauthor=False)) / "journal.sqlite3"


@dataclass(frozen=True)
class SessionRow:
    id: int
    bench: str
    profile_path: str | None
    started_at: str
    stopped_at: str | None
    readings: int


@dataclass(frozen=True)
class ReadingRow:
    id: int
    session_id: int
    supply_id: str
    at: str
    pressure_abs_pa: float
    pressure_text: str
    temperature_k: float


@dataclass(frozen=True)
class HoldRow:
    id: int
    at: str
    bench: str | None
    supply_id: str | None
    gas: str
    verdict: str
    leak_rate_sccm: float
    leak_rate_uncertainty_sccm: float


class Journal:
    """One open journal file."""

    def __init__(self, path: str | os.PathLike[str]) -> None:
        self.path = Path(path)
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self.db = sqlite3.connect(self.path, timeout=10.0, isolation_level=None, check_same_thread=False)
            self.db.execute("PRAGMA journal_mode=WAL")
            self.db.execute("PRAGMA synchronous=FULL")
            self.db.execute("PRAGMA foreign_keys=ON")
            self._migrate()
        except (sqlite3.Error, OSError) as exc:
            raise JournalError(f"cannot open the journal {self.path}: {exc}") from None

    def _migrate(self) -> None:
        version = self.db.execute("PRAGMA user_version").fetchone()[0]
        if version > SCHEMA_VERSION:
            raise JournalError(f"journal {self.path} has schema {version}, newer than this gasbench ({SCHEMA_VERSION})")
        for v in range(version + 1, SCHEMA_VERSION + 1):
            self.db.execute("BEGIN IMMEDIATE")
            try:
                for stmt in filter(str.strip, _MIGRATIONS[v].split(";")):
                    self.db.execute(stmt)
                self.db.execute(f"PRAGMA user_version = {v}")
                self.db.execute("COMMIT")
            except sqlite3.Error:
                self.db.execute("ROLLBACK")
                raise

    def close(self) -> None:
        self.db.close()

    def __enter__(self) -> Journal:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    # -- writes: each one committed on its own

    def _write(self, fn: Callable[[sqlite3.Connection], Any]) -> Any:
        try:
            self.db.execute("BEGIN IMMEDIATE")
            try:
                out = fn(self.db)
                self.db.execute("COMMIT")
                return out
            except BaseException:
                self.db.execute("ROLLBACK")
                raise
        except sqlite3.Error as exc:
            raise JournalError(f"journal {self.path}: write failed ({exc}); nothing was recorded") from None

    def start_session(self, bench: str, profile_path: str | None, at: str) -> int:
        return int(self._write(lambda db: db.execute(
            "INSERT INTO sessions(bench, profile_path, started_at) VALUES (?, ?, ?)", (bench, profile_path, at)).lastrowid))

    def stop_session(self, session_id: int, at: str) -> None:
        self._write(lambda db: db.execute("UPDATE sessions SET stopped_at = ? WHERE id = ?", (at, session_id)))

    def add_reading(self, session_id: int, supply_id: str, at: str, pressure_abs_pa: float, pressure_text: str,
                    temperature_k: float, entered_at: str) -> int:
        return int(self._write(lambda db: db.execute(
            "INSERT INTO readings(session_id, supply_id, at, pressure_abs_pa, pressure_text, temperature_k, entered_at)"
            " VALUES (?, ?, ?, ?, ?, ?, ?)",
            (session_id, supply_id, at, pressure_abs_pa, pressure_text, temperature_k, entered_at)).lastrowid))

    def add_note(self, session_id: int, at: str, text: str) -> int:
        return int(self._write(lambda db: db.execute(
            "INSERT INTO notes(session_id, at, text) VALUES (?, ?, ?)", (session_id, at, text)).lastrowid))

    def add_hold_test(self, at: str, bench: str | None, supply_id: str | None, gas: str, volume_m3: float,
                      duration_s: float, verdict: str, rate_sccm: float, u_sccm: float, details: str = "") -> int:
        return int(self._write(lambda db: db.execute(
            "INSERT INTO hold_tests(at, bench, supply_id, gas, volume_m3, duration_s, verdict, leak_rate_sccm,"
            " leak_rate_uncertainty_sccm, details) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (at, bench, supply_id, gas, volume_m3, duration_s, verdict, rate_sccm, u_sccm, details)).lastrowid))

    # -- reads

    def _read(self, sql: str, args: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
        try:
            return self.db.execute(sql, args).fetchall()
        except sqlite3.Error as exc:
            raise JournalError(f"journal {self.path}: read failed ({exc})") from None

    def sessions(self) -> list[SessionRow]:
        rows = self._read(
            "SELECT s.id, s.bench, s.profile_path, s.started_at, s.stopped_at, COUNT(r.id) FROM sessions s"
            " LEFT JOIN readings r ON r.session_id = s.id GROUP BY s.id ORDER BY s.id")
        return [SessionRow(*r) for r in rows]

    def session(self, session_id: int) -> SessionRow | None:
        return next((s for s in self.sessions() if s.id == session_id), None)

    def unfinished_session(self, bench: str | None = None) -> SessionRow | None:
        """The latest session left running (no stop time), for resumption."""
        rows = [s for s in self.sessions() if s.stopped_at is None and (bench is None or s.bench == bench)]
        return rows[-1] if rows else None

    def readings(self, session_id: int, supply_id: str | None = None) -> list[ReadingRow]:
        sql = ("SELECT id, session_id, supply_id, at, pressure_abs_pa, pressure_text, temperature_k FROM readings"
               " WHERE session_id = ?")
        args: tuple[Any, ...] = (session_id,)
        if supply_id is not None:
            sql += " AND supply_id = ?"
            args += (supply_id,)
        return [ReadingRow(*r) for r in self._read(sql + " ORDER BY at, id", args)]

    def notes(self, session_id: int) -> list[tuple[str, str]]:
        return [(a, t) for a, t in self._read("SELECT at, text FROM notes WHERE session_id = ? ORDER BY id", (session_id,))]

    def last_hold_test(self, bench: str | None = None) -> HoldRow | None:
        sql = ("SELECT id, at, bench, supply_id, gas, verdict, leak_rate_sccm, leak_rate_uncertainty_sccm"
               " FROM hold_tests")
        args: tuple[Any, ...] = ()
        if bench is not None:
            sql += " WHERE bench = ?"
            args = (bench,)
        rows = self._read(sql + " ORDER BY at DESC, id DESC LIMIT 1", args)
        return HoldRow(*rows[0]) if rows else None

    def integrity_ok(self) -> bool:
        return self._read("PRAGMA integrity_check")[0][0] == "ok"

    def export_csv(self, session_id: int, ambient_pa: float = 101325.0) -> str:
        """One session's readings as CSV (SI columns plus the text as typed)."""
        s = self.session(session_id)
        if s is None:
            raise JournalError(f"no session {session_id} in {self.path}")
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(["session", "bench", "supply", "time", "pressure_abs_pa", "pressure_gauge_pa", "typed",
                    "temperature_k"])
        for r in self.readings(session_id):
            w.writerow([s.id, s.bench, r.supply_id, r.at, f"{r.pressure_abs_pa:.1f}",
                        f"{r.pressure_abs_pa - ambient_pa:.1f}", r.pressure_text, f"{r.temperature_k:.2f}"])
        return buf.getvalue()


def open_journal(path: str | os.PathLike[str] | None = None) -> Journal:
    return Journal(default_path(path))
