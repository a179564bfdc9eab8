"""The journal's queries for the record's derived figures (the latest reading, neighbours for the
idle-drop scan, struck readings, session spans, marks, figures kept with the key of what they were
computed from, events, purges and started hold tests): one mixin of :class:`benchwarden.storage.journal.Journal`, which provides ``_read``, ``_write``
and ``_READING_COLUMNS``. Each query reads only what the figure needs (indexed), never the
whole history."""

from __future__ import annotations

import sqlite3
from collections.abc import Callable
from typing import Any

from benchwarden.storage.events import Event
from benchwarden.storage.journal_rows import (
    AcceptedStop,
    ChangeRow,
    HoldStartRow,
    PurgeRow,
    ReadingRow,
)

__all__ = ["RecordQueries"]


class RecordQueries:
    """Indexed queries of the journal (mixed into :class:`~benchwarden.storage.journal.Journal`)."""

    _READING_COLUMNS: str
    read_only: str | None

    def _read(self, sql: str, args: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:  # pragma: no cover
        raise NotImplementedError

    def _write(self, fn: Callable[[sqlite3.Connection], Any]) -> Any:  # pragma: no cover
        raise NotImplementedError

    def purges(self, bench: str, supply_id: str | None = None) -> list[PurgeRow]:
        sql = ("SELECT id, bench, supply_id, at, operator, method, cycles, gas_standard_litres, details FROM purges"
               " WHERE bench = ?")
        args: tuple[Any, ...] = (bench,)
        if supply_id is not None:
            sql += " AND supply_id = ?"
            args += (supply_id,)
        return [PurgeRow(*r) for r in self._read(sql + " ORDER BY at, id", args)]

    def hold_starts(self, bench: str, supply_id: str | None = None) -> list[HoldStartRow]:
        """Hold tests started, each with the hold test that finished it (None while open)."""
        sql = ("SELECT s.id, s.bench, s.supply_id, s.at, s.pressure_abs_pa, s.pressure_text, s.temperature_k,"
               " s.ambient_pa, s.hold_s, (SELECT MIN(h.id) FROM hold_tests h WHERE h.start_id = s.id)"
               " FROM hold_starts s WHERE s.bench = ?")
        args: tuple[Any, ...] = (bench,)
        if supply_id is not None:
            sql += " AND s.supply_id = ?"
            args += (supply_id,)
        return [HoldStartRow(*r) for r in self._read(sql + " ORDER BY s.at, s.id", args)]

    def latest_reading(self, bench: str, supply_id: str, since: str | None = None, kind: str = "pressure",
                       before: str | None = None) -> ReadingRow | None:
        """The supply's latest reading that is not struck out (``kind``: ``pressure`` or
        ``weight``), at or after ``since`` and at or before ``before`` when given."""
        col = {"pressure": "pressure_abs_pa", "weight": "weight_kg"}[kind]
        sql = (f"SELECT {self._READING_COLUMNS} FROM readings WHERE bench = ? AND supply_id = ? AND struck_at IS NULL"
               f" AND {col} IS NOT NULL")
        args: tuple[Any, ...] = (bench, supply_id)
        if since is not None:
            sql += " AND at >= ?"
            args += (since,)
        if before is not None:
            sql += " AND at <= ?"
            args += (before,)
        rows = self._read(sql + " ORDER BY at DESC, id DESC LIMIT 1", args)
        return ReadingRow(*rows[0]) if rows else None

    def recent_readings(self, bench: str, supply_id: str, limit: int) -> list[ReadingRow]:
        """The supply's newest ``limit`` readings that are not struck out, oldest first."""
        rows = self._read(f"SELECT {self._READING_COLUMNS} FROM readings WHERE bench = ? AND supply_id = ?"
                          " AND struck_at IS NULL ORDER BY at DESC, id DESC LIMIT ?", (bench, supply_id, limit))
        return [ReadingRow(*r) for r in reversed(rows)]

    def readings_after(self, bench: str, supply_id: str, reading_id: int) -> list[ReadingRow]:
        """Readings of the supply written after reading ``reading_id`` (by id), struck ones included.
        Read by id range (the ``+`` keeps the bench and supply index out of the plan): the cost is
        that of the readings written since, not of the supply's history."""
        return [ReadingRow(*r) for r in self._read(
            f"SELECT {self._READING_COLUMNS} FROM readings WHERE id > ? AND +bench = ? AND +supply_id = ? ORDER BY id",
            (reading_id, bench, supply_id))]

    def last_reading_id(self) -> int:
        """The newest reading id in the journal, any bench or supply (0 without readings)."""
        return int(self._read("SELECT COALESCE(MAX(id), 0) FROM readings")[0][0])

    _CHANGE_COLUMNS = ("id, bench, supply_id, at, pressure_abs_pa, pressure_text, weight_kg, temperature_k, label,"
                       " retest_due")

    def latest_change(self, bench: str, supply_id: str) -> ChangeRow | None:
        """The supply's latest cylinder change (the last of ``changes(bench, supply_id)``), or None."""
        rows = self._read(f"SELECT {self._CHANGE_COLUMNS} FROM changes WHERE bench = ? AND supply_id = ?"
                          " ORDER BY at DESC, id DESC LIMIT 1", (bench, supply_id))
        return ChangeRow(*rows[0]) if rows else None

    def changes_from(self, bench: str, supply_id: str, at: str) -> list[ChangeRow]:
        """The supply's cylinder changes whose time text sorts at or after ``at``, oldest first."""
        return [ChangeRow(*r) for r in self._read(
            f"SELECT {self._CHANGE_COLUMNS} FROM changes WHERE bench = ? AND supply_id = ? AND at >= ?"
            " ORDER BY at, id", (bench, supply_id, at))]

    def idle_drop_keys(self, bench: str, supply_id: str, since: str) -> set[str]:
        """The keys (``first-last`` reading ids) of the supply's idle-drop hold tests whose time
        text sorts at or after ``since``."""
        return {str(k) for (k,) in self._read(
            "SELECT json_extract(details, '$.idle_drop') FROM hold_tests WHERE bench = ? AND supply_id = ?"
            " AND kind = 'idle-drop' AND at >= ? AND json_valid(details)", (bench, supply_id, since)) if k is not None}

    def last_event_seq(self, bench: str) -> int | None:
        """The sequence number of the bench's newest event (0 without any; None on a journal
        opened read-only before its events existed): it changes whenever the bench's record does."""
        if not self._read("SELECT 1 FROM sqlite_master WHERE name = 'events'"):
            return None
        rows = self._read("SELECT seq FROM events WHERE bench = ? ORDER BY seq DESC LIMIT 1", (bench,))
        return int(rows[0][0]) if rows else 0

    def event_supplies(self, bench: str, after_seq: int, kinds: tuple[str, ...]) -> set[str | None]:
        """The supplies named by the bench's events of ``kinds`` after ``after_seq`` (None for an
        event that names none)."""
        marks = ", ".join("?" * len(kinds))
        return {r[0] for r in self._read(
            f"SELECT DISTINCT json_extract(payload, '$.supply_id') FROM events WHERE bench = ? AND seq > ?"
            f" AND kind IN ({marks})", (bench, after_seq, *kinds))}

    def neighbour_reading(self, bench: str, supply_id: str, at: str, reading_id: int, after: bool) -> ReadingRow | None:
        """The pressure reading (not struck out) just before or just after (``at``, ``reading_id``)."""
        op, order = (">", "ASC") if after else ("<", "DESC")
        rows = self._read(f"SELECT {self._READING_COLUMNS} FROM readings WHERE bench = ? AND supply_id = ?"
                          f" AND struck_at IS NULL AND pressure_abs_pa IS NOT NULL AND (at, id) {op} (?, ?)"
                          f" ORDER BY at {order}, id {order} LIMIT 1", (bench, supply_id, at, reading_id))
        return ReadingRow(*rows[0]) if rows else None

    def struck_readings(self, bench: str, supply_id: str | None = None, since: str | None = None) -> list[ReadingRow]:
        """The readings struck out (of one supply, struck at or after ``since`` when given)."""
        sql = f"SELECT {self._READING_COLUMNS} FROM readings WHERE bench = ? AND struck_at IS NOT NULL"
        args: tuple[Any, ...] = (bench,)
        if supply_id is not None:
            sql += " AND supply_id = ?"
            args += (supply_id,)
        if since is not None:
            sql += " AND struck_at >= ?"
            args += (since,)
        return [ReadingRow(*r) for r in self._read(sql + " ORDER BY id", args)]

    def session_spans(self, bench: str) -> list[tuple[str, str | None]]:
        """(start, stop) of every session of the bench, oldest first (stop None: left running)."""
        return [(a, b) for a, b in self._read(
            "SELECT started_at, stopped_at FROM sessions WHERE bench = ? ORDER BY started_at", (bench,))]

    def mark(self, bench: str, supply_id: str, what: str) -> tuple[int, str] | None:
        """How far a derived record was computed: (last reading id, when)."""
        if not self._read("SELECT 1 FROM sqlite_master WHERE name = 'marks'"):
            return None
        rows = self._read("SELECT reading_id, at FROM marks WHERE bench = ? AND supply_id = ? AND what = ?",
                          (bench, supply_id, what))
        return (int(rows[0][0]), str(rows[0][1])) if rows else None

    def set_mark(self, bench: str, supply_id: str, what: str, reading_id: int, at: str) -> None:
        if self.read_only is not None:
            return  # a mark only saves work: a journal that cannot be written is read in full instead
        self._write(lambda db: db.execute(
            "INSERT INTO marks(bench, supply_id, what, reading_id, at) VALUES (?, ?, ?, ?, ?)"
            " ON CONFLICT (bench, supply_id, what) DO UPDATE SET reading_id = excluded.reading_id, at = excluded.at",
            (bench, supply_id, what, reading_id, at)))

    def derived(self, bench: str, supply_id: str, what: str) -> tuple[str, str] | None:
        """A kept derived figure: (the key of what it was computed from, its value as text)."""
        if not self._read("SELECT 1 FROM sqlite_master WHERE name = 'derived'"):
            return None  # a journal opened read-only before its migration
        rows = self._read("SELECT key, value FROM derived WHERE bench = ? AND supply_id = ? AND what = ?",
                          (bench, supply_id, what))
        return (str(rows[0][0]), str(rows[0][1])) if rows else None

    def keep_derived(self, bench: str, supply_id: str, what: str, key: str, value: str) -> None:
        """Keep a derived figure with its key (nothing on a journal that cannot be written: a kept
        figure only saves work)."""
        if self.read_only is not None:
            return
        self._write(lambda db: db.execute(
            "INSERT INTO derived(bench, supply_id, what, key, value) VALUES (?, ?, ?, ?, ?)"
            " ON CONFLICT (bench, supply_id, what) DO UPDATE SET key = excluded.key, value = excluded.value",
            (bench, supply_id, what, key, value)))

    def events(self, bench: str, after_seq: int = 0, limit: int = 1000) -> list[Event]:
        """The bench's events after sequence number ``after_seq``, oldest first (at most ``limit``)."""
        return [Event.of_row(r) for r in self._read(
            "SELECT seq, event_id, bench, kind, at, recorded_at, payload FROM events WHERE bench = ? AND seq > ?"
            " ORDER BY seq LIMIT ?", (bench, after_seq, limit))]

    def accepted_stops(self, session_id: int | None = None) -> list[AcceptedStop]:
        if not self._read("SELECT 1 FROM sqlite_master WHERE name = 'accepted_stops'"):
            return []  # a journal opened read-only before its migration
        sql = "SELECT session_id, at, operator, code, subject, text, reason FROM accepted_stops"
        args: tuple[Any, ...] = ()
        if session_id is not None:
            sql += " WHERE session_id = ?"
            args = (session_id,)
        return [AcceptedStop(*r) for r in self._read(sql + " ORDER BY id", args)]

    def reading_keys(self, bench: str, supply_id: str) -> set[tuple[str, float | None, float | None]]:
        """(time, absolute pressure, weight) of every reading of a supply: what a bulk import
        compares with so that importing a file twice adds nothing."""
        return {(a, p, w) for a, p, w in self._read(
            "SELECT at, pressure_abs_pa, weight_kg FROM readings WHERE bench = ? AND supply_id = ?", (bench, supply_id))}
