"""The session journal: an embedded SQLite store of sessions, readings, notes and hold tests.

Every write is its own committed transaction (WAL mode, ``synchronous=FULL``), so a reading
that was acknowledged survives the app or the laptop dying. The schema carries a version
(``PRAGMA user_version``) and is migrated forward on open. A session without a stop time was
left running (a crash or a closed terminal) and is offered for resumption.
"""

from __future__ import annotations

import os
import sqlite3
import threading
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from benchwarden.errors import JournalError
from benchwarden.storage import journal_file as jf
from benchwarden.storage.journal_queries import RecordQueries
from benchwarden.storage.journal_rows import (  # noqa: F401 - re-exported: the journal's public rows
    AcceptedStop,
    AlarmRow,
    ChangeRow,
    HoldRow,
    HoldStartRow,
    PurgeRow,
    ReadingRow,
    SessionRow,
)
from benchwarden.storage.journal_schema import _MIGRATIONS, APPLICATION_ID, SCHEMA_VERSION  # noqa: F401


def default_path(explicit: str | os.PathLike[str] | None = None) -> Path:
    """Journal location: ``explicit``, else ``$BENCHWARDEN_JOURNAL``, else the user data directory
    (``~`` expanded)."""
    if explicit:
        return Path(explicit).expanduser()
    env = os.environ.get("BENCHWARDEN_JOURNAL")
    if env:
        return Path(env).expanduser()
    from platformdirs import user_data_dir

    return Path(user_data_dir("benchwarden", appauthor=False)) / "journal.sqlite3"


class Journal(RecordQueries):
    """One open journal file; ``check``: True (see :func:`journal_file.structure_problem`; the full
    check when the file was not closed cleanly), ``"full"`` (``PRAGMA quick_check``) or False."""

    def __init__(self, path: str | os.PathLike[str], check: bool | str = True, readonly: bool = False) -> None:
        self.path = Path(path).expanduser()
        self._full_check, check = check == "full" or not jf.closed_cleanly(self.path), bool(check)
        #: one connection shared by the app's threads (the screen, the plan, the live gauges): a
        #: transaction and a read never interleave with another thread's
        self.lock = threading.RLock()
        #: why this journal cannot be written (None: it can); reading works either way
        self.read_only: str | None = None
        try:
            if self.path.exists() and not self.path.is_file():
                raise JournalError(f"journal {self.path} is not a regular file")
            # whose file is it: from its header, before anything opens it for writing
            jf.identify(self.path, APPLICATION_ID, SCHEMA_VERSION)
            if check and not self._full_check:  # before this process connects; the full check confirms
                self._full_check = jf.structure_problem(self.path) is not None
            if readonly or (self.path.exists() and not jf.writable(self.path)):
                # reading only (sessions, export), or a file that cannot be written (a read-only
                # mount): reading commands work, writes say why not
                if self._open_readonly(check) == SCHEMA_VERSION:
                    return
                self.db.close()
                if not jf.writable(self.path):
                    raise JournalError(f"journal {self.path} is from an older benchwarden and read-only: open it once "
                                       "where it can be written (it is upgraded), then it reads here too")
            self.read_only = None  # an older schema is opened for writing, so that it is migrated
            try:
                self._open_writable(check)
            except jf.JournalFailure as exc:
                self._readable_anyway(exc, check)
            except JournalError:
                raise
            except (sqlite3.Error, OSError) as exc:
                self._readable_anyway(jf.failure(self.path, exc), check)
        except JournalError:
            if hasattr(self, "db"):
                self.db.close()
            raise
        except (sqlite3.Error, OSError) as exc:
            if hasattr(self, "db"):
                self.db.close()
            raise jf.failure(self.path, exc, writing=not readonly) from None

    def _connect(self, query: str = "") -> sqlite3.Connection:
        if not query:
            return sqlite3.connect(self.path, timeout=10.0, isolation_level=None, check_same_thread=False)
        return sqlite3.connect(f"{self.path.resolve().as_uri()}?{query}", uri=True, timeout=10.0,
                               isolation_level=None, check_same_thread=False)

    def _readable_anyway(self, err: jf.JournalFailure, check: bool) -> None:
        """A journal that cannot be opened for writing (a full disk, a read-only file) is still
        read: reading commands work, and every write says why not. Anything else is raised."""
        if hasattr(self, "db"):
            self.db.close()
        if err.kind not in ("full", "read-only") or not self.path.exists():
            raise err
        if self._open_readonly(check, str(err)) != SCHEMA_VERSION:
            raise err

    def _open_readonly(self, check: bool, why: str | None = None) -> int:
        """Open for reading only; the schema version. A WAL journal whose ``-shm`` cannot be made
        (a read-only folder, a full disk) is read as an immutable file: nobody writes there."""
        self.read_only = why or jf.read_only_words(self.path)
        self.db = self._connect("mode=ro")
        try:
            self._identify()
        except jf.JournalFailure as exc:
            if exc.kind not in ("full", "read-only", "other"):
                raise
            self.db.close()
            self.db = self._connect("mode=ro&immutable=1")
            self._identify()
        if check:
            self._check_integrity()
        return int(self.db.execute("PRAGMA user_version").fetchone()[0])

    def _open_writable(self, check: bool) -> None:
        new = not self.path.exists() or self.path.stat().st_size == 0
        self.path.parent.mkdir(parents=True, exist_ok=True)
        self.db = self._connect()
        if new:  # the first write marks the file ours, so a crash before the schema leaves it ours
            self.db.execute(f"PRAGMA application_id = {APPLICATION_ID}")
        self._identify()  # before anything is changed: a foreign or newer file stays untouched
        self.db.execute("PRAGMA journal_mode=WAL")
        self.db.execute("PRAGMA synchronous=FULL")
        self.db.execute("PRAGMA foreign_keys=ON")
        if check:
            self._check_integrity()
        self._migrate()

    def _identify(self) -> None:
        """Refuse a SQLite file that is not a benchwarden journal, or one from a newer benchwarden,
        before touching it (on the open connection: what the write-ahead log holds counts too)."""
        try:
            app_id = self.db.execute("PRAGMA application_id").fetchone()[0]
            version = self.db.execute("PRAGMA user_version").fetchone()[0]
            tables = {r[0] for r in self.db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
        except sqlite3.DatabaseError as exc:
            raise jf.failure(self.path, exc, writing=False) from None
        if not (jf.owned(app_id, APPLICATION_ID, version, tables) or (app_id == version == 0 and not tables)):
            raise jf.foreign(self.path)
        if version > SCHEMA_VERSION:
            raise JournalError(f"journal {self.path} has schema {version}, newer than this benchwarden "
                               f"({SCHEMA_VERSION}): update benchwarden; the file was left untouched")

    def _check_integrity(self) -> None:
        """A damaged file is refused (nothing written to it), with how to recover (the full check, when owed)."""
        if not self._full_check:
            return
        try:
            result = self.db.execute("PRAGMA quick_check").fetchone()[0]
        except sqlite3.DatabaseError as exc:
            if not str(getattr(exc, "sqlite_errorname", "")).startswith(("SQLITE_CORRUPT", "SQLITE_NOTADB")):
                raise
            result = str(exc)
        if result != "ok":
            raise jf.damaged(self.path, str(result))

    def _migrate(self) -> None:
        version = self.db.execute("PRAGMA user_version").fetchone()[0]
        if version > SCHEMA_VERSION:
            raise JournalError(f"journal {self.path} has schema {version}, newer than this benchwarden ({SCHEMA_VERSION})")
        if 0 < version < SCHEMA_VERSION:
            # a copy of the journal as it was, before the migration changes it
            backup = self.path.with_name(f"{self.path.name}.v{version}.bak")
            if not backup.exists():
                dst = sqlite3.connect(backup)
                try:
                    self.db.backup(dst)
                finally:
                    dst.close()
        if version == 0 or self.db.execute("PRAGMA application_id").fetchone()[0] != APPLICATION_ID:
            self.db.execute(f"PRAGMA application_id = {APPLICATION_ID}")
        for v in range(version + 1, SCHEMA_VERSION + 1):
            self.db.execute("BEGIN IMMEDIATE")
            try:
                m = _MIGRATIONS[v]
                for stmt in (m if isinstance(m, tuple) else filter(str.strip, m.split(";"))):
                    self.db.execute(stmt)
                self.db.execute(f"PRAGMA user_version = {v}")
                self.db.execute("COMMIT")
            except sqlite3.Error:
                self.db.execute("ROLLBACK")
                raise
            # each step into the file at once: the write-ahead log never holds every step (a new
            # journal on a small or nearly full disk needs about the final size, not twice it)
            self.db.execute("PRAGMA wal_checkpoint(TRUNCATE)")

    def close(self) -> None:
        self.db.close()

    def __enter__(self) -> Journal:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    # -- writes: each one committed on its own

    def _write(self, fn: Callable[[sqlite3.Connection], Any]) -> Any:
        with self.lock:
            return self._write_locked(fn)

    def _write_locked(self, fn: Callable[[sqlite3.Connection], Any]) -> Any:
        if self.read_only is not None:
            raise JournalError(self.read_only)
        try:
            self.db.execute("BEGIN IMMEDIATE")
            try:
                out = fn(self.db)
                self.db.execute("COMMIT")
                return out
            except BaseException:
                try:
                    self.db.execute("ROLLBACK")
                except sqlite3.Error:
                    pass  # SQLite already rolled back (a full disk does that)
                raise
        except sqlite3.Error as exc:
            raise jf.failure(self.path, exc) from None

    def write(self, fn: Callable[[sqlite3.Connection], Any]) -> Any:
        """Run ``fn(db)`` as one committed transaction (for the sample store)."""
        return self._write(fn)

    def read(self, sql: str, args: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
        """Rows of a query (for the sample store); a failure is a :class:`JournalError`."""
        return self._read(sql, args)

    def start_session(self, bench: str, profile_path: str | None, at: str, operator: str | None = None,
                      accepted: Sequence[tuple[str, str, str]] = (), reason: str | None = None) -> int:
        """Start a session; ``accepted``: the STOP findings (code, subject, words) that stood and
        that ``operator`` accepted for ``reason`` — recorded in the same transaction."""
        def insert(db: sqlite3.Connection) -> int:
            sid = int(db.execute("INSERT INTO sessions(bench, profile_path, started_at, operator) VALUES (?, ?, ?, ?)",
                                 (bench, profile_path, at, operator)).lastrowid or 0)
            db.executemany("INSERT INTO accepted_stops(session_id, at, operator, code, subject, text, reason)"
                           " VALUES (?, ?, ?, ?, ?, ?, ?)",
                           [(sid, at, operator, c, s, t, reason or "") for c, s, t in accepted])
            return sid
        return int(self._write(insert))

    def stop_session(self, session_id: int, at: str) -> None:
        self._write(lambda db: db.execute("UPDATE sessions SET stopped_at = ? WHERE id = ?", (at, session_id)))

    def add_reading(self, session_id: int | None, supply_id: str, at: str, pressure_abs_pa: float | None,
                    pressure_text: str, temperature_k: float, entered_at: str, bench: str | None = None,
                    weight_kg: float | None = None, ambient_pa: float | None = None) -> int:
        """Record a reading: in a session, or an idle reading (``session_id`` None) filed under
        ``bench``; a pressure (absolute, with the ambient it was typed against) or a weight."""
        if bench is None and session_id is not None:
            row = self.db.execute("SELECT bench FROM sessions WHERE id = ?", (session_id,)).fetchone()
            bench = row[0] if row else None
        return int(self._write(lambda db: db.execute(
            "INSERT INTO readings(session_id, bench, supply_id, at, pressure_abs_pa, pressure_text, temperature_k,"
            " entered_at, weight_kg, ambient_pa) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (session_id, bench, supply_id, at, pressure_abs_pa, pressure_text, temperature_k, entered_at, weight_kg,
             ambient_pa)).lastrowid))

    def add_readings(self, rows: Sequence[tuple[Any, ...]]) -> int:
        """Record many idle readings in one transaction (all or none): each row is (bench,
        supply_id, at, pressure_abs_pa, pressure_text, temperature_k, entered_at, weight_kg,
        ambient_pa, note). Returns how many were written."""
        self._write(lambda db: db.executemany(
            "INSERT INTO readings(session_id, bench, supply_id, at, pressure_abs_pa, pressure_text, temperature_k,"
            " entered_at, weight_kg, ambient_pa, note) VALUES (NULL, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)", rows))
        return len(rows)

    def strike_reading(self, reading_id: int, at: str, reason: str) -> None:
        """Strike a reading out (kept, marked, with the reason): nothing is ever deleted."""
        if not reason.strip():
            raise JournalError("give a reason to strike a reading out")
        n = self._write(lambda db: db.execute(
            "UPDATE readings SET struck_at = ?, struck_reason = ? WHERE id = ? AND struck_at IS NULL",
            (at, reason, reading_id)).rowcount)
        if not n:
            raise JournalError(f"no reading {reading_id} to strike out (unknown or already struck)")

    def add_change(self, bench: str, supply_id: str, at: str, entered_at: str, pressure_abs_pa: float | None = None,
                   pressure_text: str | None = None, weight_kg: float | None = None,
                   temperature_k: float | None = None, label: str | None = None, retest_due: str | None = None) -> int:
        """Record a cylinder change (a new fill) on a supply."""
        return int(self._write(lambda db: db.execute(
            "INSERT INTO changes(bench, supply_id, at, pressure_abs_pa, pressure_text, weight_kg, temperature_k,"
            " label, retest_due, entered_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (bench, supply_id, at, pressure_abs_pa, pressure_text, weight_kg, temperature_k, label, retest_due,
             entered_at)).lastrowid))

    def set_session_record(self, session_id: int, operator: str | None = None, shots: int | None = None) -> None:
        self._write(lambda db: db.execute(
            "UPDATE sessions SET operator = COALESCE(?, operator), shots = COALESCE(?, shots) WHERE id = ?",
            (operator, shots, session_id)))

    def add_note(self, session_id: int, at: str, text: str) -> int:
        return int(self._write(lambda db: db.execute(
            "INSERT INTO notes(session_id, at, text) VALUES (?, ?, ?)", (session_id, at, text)).lastrowid))

    def add_hold_test(self, at: str, bench: str | None, supply_id: str | None, gas: str, volume_m3: float,
                      duration_s: float, verdict: str, rate_sccm: float, u_sccm: float, details: str = "",
                      kind: str | None = None) -> int:
        return int(self._write(lambda db: db.execute(
            "INSERT INTO hold_tests(at, bench, supply_id, gas, volume_m3, duration_s, verdict, leak_rate_sccm,"
            " leak_rate_uncertainty_sccm, details, kind) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (at, bench, supply_id, gas, volume_m3, duration_s, verdict, rate_sccm, u_sccm, details, kind)).lastrowid))

    def add_alarm(self, bench: str, supply_id: str | None, code: str, at: str, text: str, details: str = "") -> int:
        """Record an alarm (a condition that needed a person) as a line in the journal."""
        return int(self._write(lambda db: db.execute(
            "INSERT INTO alarms(bench, supply_id, code, at, text, details) VALUES (?, ?, ?, ?, ?, ?)",
            (bench, supply_id, code, at, text, details)).lastrowid))

    def add_purge(self, bench: str, supply_id: str, at: str, entered_at: str, method: str, cycles: int | None,
                  gas_standard_litres: float, operator: str | None = None, details: str = "") -> int:
        """Record a purge that was run (who, when, cycles or a flush, the gas it used)."""
        return int(self._write(lambda db: db.execute(
            "INSERT INTO purges(bench, supply_id, at, operator, method, cycles, gas_standard_litres, details,"
            " entered_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (bench, supply_id, at, operator, method, cycles, gas_standard_litres, details, entered_at)).lastrowid))

    def add_hold_start(self, bench: str, supply_id: str, at: str, pressure_abs_pa: float, pressure_text: str,
                       temperature_k: float, ambient_pa: float, hold_s: float, entered_at: str) -> int:
        """Record the start of a hold test to be finished later (its first reading)."""
        return int(self._write(lambda db: db.execute(
            "INSERT INTO hold_starts(bench, supply_id, at, pressure_abs_pa, pressure_text, temperature_k,"
            " ambient_pa, hold_s, entered_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (bench, supply_id, at, pressure_abs_pa, pressure_text, temperature_k, ambient_pa, hold_s,
             entered_at)).lastrowid))

    def add_finished_hold_test(self, start_id: int, at: str, bench: str | None, supply_id: str | None, gas: str,
                               volume_m3: float, duration_s: float, verdict: str, rate_sccm: float, u_sccm: float,
                               details: str = "", kind: str | None = None) -> int:
        """A hold test that finishes a started one (:meth:`add_hold_start`): stored like any
        hold test, with the start it closes."""
        return int(self._write(lambda db: db.execute(
            "INSERT INTO hold_tests(at, bench, supply_id, gas, volume_m3, duration_s, verdict, leak_rate_sccm,"
            " leak_rate_uncertainty_sccm, details, kind, start_id) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
            (at, bench, supply_id, gas, volume_m3, duration_s, verdict, rate_sccm, u_sccm, details, kind,
             start_id)).lastrowid))

    # -- reads

    def _read(self, sql: str, args: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
        try:
            with self.lock:
                return self.db.execute(sql, args).fetchall()
        except sqlite3.Error as exc:
            raise jf.failure(self.path, exc, writing=False) from None

    def sessions(self) -> list[SessionRow]:
        rows = self._read(
            "SELECT s.id, s.bench, s.profile_path, s.started_at, s.stopped_at, COUNT(r.id),"
            " (SELECT COUNT(*) FROM alarms a WHERE a.bench = s.bench AND a.at >= s.started_at"
            "  AND (s.stopped_at IS NULL OR a.at <= s.stopped_at)), s.operator, s.shots FROM sessions s"
            " LEFT JOIN readings r ON r.session_id = s.id GROUP BY s.id ORDER BY s.id")
        return [SessionRow(*r) for r in rows]

    def session(self, session_id: int) -> SessionRow | None:
        rows = self._read(
            "SELECT s.id, s.bench, s.profile_path, s.started_at, s.stopped_at,"
            " (SELECT COUNT(*) FROM readings r WHERE r.session_id = s.id),"
            " (SELECT COUNT(*) FROM alarms a WHERE a.bench = s.bench AND a.at >= s.started_at"
            "  AND (s.stopped_at IS NULL OR a.at <= s.stopped_at)), s.operator, s.shots FROM sessions s WHERE s.id = ?",
            (session_id,))
        return SessionRow(*rows[0]) if rows else None

    def unfinished_session(self, bench: str | None = None) -> SessionRow | None:
        """The latest session left running (no stop time), for resumption."""
        sql = "SELECT id FROM sessions WHERE stopped_at IS NULL"
        args: tuple[Any, ...] = ()
        if bench is not None:
            sql += " AND bench = ?"
            args = (bench,)
        rows = self._read(sql + " ORDER BY id DESC LIMIT 1", args)
        return self.session(int(rows[0][0])) if rows else None

    _READING_COLUMNS = ("id, session_id, supply_id, at, pressure_abs_pa, pressure_text, temperature_k, bench,"
                        " weight_kg, ambient_pa, struck_at, struck_reason, note")

    def supply_readings(self, bench: str, supply_id: str) -> list[ReadingRow]:
        """Every reading of a supply of a bench, in and out of sessions, struck ones included."""
        return [ReadingRow(*r) for r in self._read(
            f"SELECT {self._READING_COLUMNS} FROM readings WHERE bench = ? AND supply_id = ? ORDER BY at, id",
            (bench, supply_id))]

    def changes(self, bench: str, supply_id: str | None = None) -> list[ChangeRow]:
        sql = ("SELECT id, bench, supply_id, at, pressure_abs_pa, pressure_text, weight_kg, temperature_k, label,"
               " retest_due FROM changes WHERE bench = ?")
        args: tuple[Any, ...] = (bench,)
        if supply_id is not None:
            sql += " AND supply_id = ?"
            args += (supply_id,)
        return [ChangeRow(*r) for r in self._read(sql + " ORDER BY at, id", args)]

    def bench_sessions(self, bench: str) -> list[SessionRow]:
        return [s for s in self.sessions() if s.bench == bench]

    def hold_tests(self, bench: str | None = None) -> list[HoldRow]:
        sql = ("SELECT id, at, bench, supply_id, gas, verdict, leak_rate_sccm, leak_rate_uncertainty_sccm, kind,"
               " details FROM hold_tests")
        args: tuple[Any, ...] = ()
        if bench is not None:
            sql += " WHERE bench = ?"
            args = (bench,)
        return [HoldRow(*r) for r in self._read(sql + " ORDER BY at, id", args)]

    def readings(self, session_id: int, supply_id: str | None = None) -> list[ReadingRow]:
        sql = f"SELECT {self._READING_COLUMNS} FROM readings WHERE session_id = ?"
        args: tuple[Any, ...] = (session_id,)
        if supply_id is not None:
            sql += " AND supply_id = ?"
            args += (supply_id,)
        return [ReadingRow(*r) for r in self._read(sql + " ORDER BY at, id", args)]

    def notes(self, session_id: int) -> list[tuple[str, str]]:
        return [(a, t) for a, t in self._read("SELECT at, text FROM notes WHERE session_id = ? ORDER BY id", (session_id,))]

    def last_hold_test(self, bench: str | None = None) -> HoldRow | None:
        sql = ("SELECT id, at, bench, supply_id, gas, verdict, leak_rate_sccm, leak_rate_uncertainty_sccm, kind,"
               " details FROM hold_tests")
        args: tuple[Any, ...] = ()
        if bench is not None:
            sql += " WHERE bench = ?"
            args = (bench,)
        rows = self._read(sql + " ORDER BY at DESC, id DESC LIMIT 1", args)
        return HoldRow(*rows[0]) if rows else None

    def alarms(self, bench: str, since: str | None = None) -> list[AlarmRow]:
        sql = "SELECT id, bench, supply_id, code, at, text, details FROM alarms WHERE bench = ?"
        args: tuple[Any, ...] = (bench,)
        if since is not None:
            sql += " AND at >= ?"
            args += (since,)
        return [AlarmRow(*r) for r in self._read(sql + " ORDER BY at, id", args)]

    def integrity_ok(self) -> bool:
        return self._read("PRAGMA integrity_check")[0][0] == "ok"



def open_journal(path: str | os.PathLike[str] | None = None) -> Journal:
    return Journal(default_path(path))
