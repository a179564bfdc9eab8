"""The journal's record as immutable events, for shipping to a lab database.

Every entry a bench makes — a reading, a strike, a cylinder change, a session's start, record
and stop (with its accepted STOPs and notes), a hold test, an alarm, an hour of live samples
summarised — is also appended, in the same transaction, to the ``events`` table: a stable id
(a random UUID), a local sequence number, its kind, the bench's time and the entry as JSON.
Triggers in the database do it, so no way of writing can forget it; other triggers refuse any
UPDATE or DELETE of an event. Journals from before get their events (and ids) on migration.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from typing import Any

__all__ = ["EVENT_MIGRATION", "SAMPLES_LAST_MIGRATION", "Event", "EVENT_KINDS", "event_trigger"]

#: A random (version 4) UUID from SQLite's own random source.
_UUID = ("(lower(hex(randomblob(4))) || '-' || lower(hex(randomblob(2))) || '-4' || "
         "substr(lower(hex(randomblob(2))), 2) || '-' || substr('89ab', 1 + (abs(random()) % 4), 1) || "
         "substr(lower(hex(randomblob(2))), 2) || '-' || lower(hex(randomblob(6))))")

#: (kind, table, trigger event, bench expression, time expression, JSON payload expression).
_SOURCES: tuple[tuple[str, str, str, str, str, str], ...] = (
    ("reading", "readings", "INSERT", "NEW.bench", "NEW.at",
     "json_object('reading_id', NEW.id, 'session_id', NEW.session_id, 'supply_id', NEW.supply_id, 'at', NEW.at,"
     " 'pressure_abs_pa', NEW.pressure_abs_pa, 'pressure_text', NEW.pressure_text, 'temperature_k',"
     " NEW.temperature_k, 'weight_kg', NEW.weight_kg, 'ambient_pa', NEW.ambient_pa, 'note', NEW.note,"
     " 'entered_at', NEW.entered_at)"),
    ("strike", "readings", "UPDATE OF struck_at", "NEW.bench", "NEW.struck_at",
     "json_object('reading_id', NEW.id, 'supply_id', NEW.supply_id, 'reason', NEW.struck_reason)"),
    ("cylinder-change", "changes", "INSERT", "NEW.bench", "NEW.at",
     "json_object('change_id', NEW.id, 'supply_id', NEW.supply_id, 'at', NEW.at, 'pressure_abs_pa',"
     " NEW.pressure_abs_pa, 'pressure_text', NEW.pressure_text, 'weight_kg', NEW.weight_kg, 'temperature_k',"
     " NEW.temperature_k, 'label', NEW.label, 'retest_due', NEW.retest_due)"),
    ("session-start", "sessions", "INSERT", "NEW.bench", "NEW.started_at",
     "json_object('session_id', NEW.id, 'operator', NEW.operator)"),
    ("session-stop", "sessions", "UPDATE OF stopped_at", "NEW.bench", "NEW.stopped_at",
     "json_object('session_id', NEW.id, 'started_at', NEW.started_at)"),
    ("session-record", "sessions", "UPDATE OF operator, shots", "NEW.bench",
     "COALESCE(NEW.stopped_at, NEW.started_at)",
     "json_object('session_id', NEW.id, 'operator', NEW.operator, 'shots', NEW.shots)"),
    ("note", "notes", "INSERT", "(SELECT bench FROM sessions WHERE id = NEW.session_id)", "NEW.at",
     "json_object('session_id', NEW.session_id, 'text', NEW.text)"),
    ("stop-accepted", "accepted_stops", "INSERT", "(SELECT bench FROM sessions WHERE id = NEW.session_id)", "NEW.at",
     "json_object('session_id', NEW.session_id, 'operator', NEW.operator, 'code', NEW.code, 'subject',"
     " NEW.subject, 'text', NEW.text, 'reason', NEW.reason)"),
    ("hold-test", "hold_tests", "INSERT", "NEW.bench", "NEW.at",
     "json_object('hold_test_id', NEW.id, 'supply_id', NEW.supply_id, 'gas', NEW.gas, 'volume_m3', NEW.volume_m3,"
     " 'duration_s', NEW.duration_s, 'verdict', NEW.verdict, 'leak_rate_sccm', NEW.leak_rate_sccm,"
     " 'leak_rate_uncertainty_sccm', NEW.leak_rate_uncertainty_sccm, 'kind', NEW.kind, 'details',"
     " json(COALESCE(NULLIF(NEW.details, ''), '{}')))"),
    ("alarm", "alarms", "INSERT", "NEW.bench", "NEW.at",
     "json_object('alarm_id', NEW.id, 'supply_id', NEW.supply_id, 'code', NEW.code, 'text', NEW.text)"),
    ("samples-hour", "sample_blocks", "INSERT", "(SELECT bench FROM streams WHERE id = NEW.stream)",
     "strftime('%Y-%m-%dT%H:%M:%SZ', NEW.t0, 'unixepoch')",
     "json_object('supply_id', (SELECT supply_id FROM streams WHERE id = NEW.stream), 'quantity',"
     " (SELECT quantity FROM streams WHERE id = NEW.stream), 't0', NEW.t0, 't1', NEW.t1, 'n', NEW.n, 'bad', NEW.bad,"
     " 'min', NEW.vmin, 'max', NEW.vmax)"),
)

EVENT_KINDS = tuple(dict.fromkeys(k for k, *_ in _SOURCES))


def _trigger(kind: str, table: str, when: str, bench: str, at: str, payload: str) -> str:
    name = f"event_{kind.replace('-', '_')}"
    cond = ""
    if when.startswith("UPDATE OF struck_at"):
        cond = " WHEN OLD.struck_at IS NULL AND NEW.struck_at IS NOT NULL"
    elif when.startswith("UPDATE OF stopped_at"):
        cond = " WHEN OLD.stopped_at IS NULL AND NEW.stopped_at IS NOT NULL"
    elif when.startswith("UPDATE OF operator"):
        cond = " WHEN OLD.operator IS NOT NEW.operator OR OLD.shots IS NOT NEW.shots"
    return (f"CREATE TRIGGER {name} AFTER {when} ON {table}{cond} BEGIN "
            f"INSERT INTO events(event_id, bench, kind, at, payload) VALUES ({_UUID}, {bench}, '{kind}', {at}, "
            f"{payload}); END")


def _backfill(kind: str, table: str, when: str, bench: str, at: str, payload: str) -> str | None:
    """The events of rows written before the events table existed (ids given now)."""
    new = {"reading": "", "cylinder-change": "", "session-start": "", "note": "", "stop-accepted": "",
           "hold-test": "", "alarm": "", "samples-hour": ""}
    where = {"strike": " WHERE NEW.struck_at IS NOT NULL", "session-stop": " WHERE NEW.stopped_at IS NOT NULL",
             "session-record": " WHERE NEW.operator IS NOT NULL OR NEW.shots IS NOT NULL"}
    if kind not in new and kind not in where:
        return None
    return (f"INSERT INTO events(event_id, bench, kind, at, payload) SELECT {_UUID}, {bench}, '{kind}', {at}, "
            f"{payload} FROM {table} AS NEW{where.get(kind, '')} ORDER BY "
            + ("NEW.t0, NEW.stream" if table == "sample_blocks" else "NEW.rowid"))


def event_trigger(kind: str, table: str, when: str, bench: str, at: str, payload: str) -> str:
    """The trigger that appends an event of ``kind`` for each row written to ``table`` (for a
    later migration's new tables)."""
    return _trigger(kind, table, when, bench, at, payload)


#: The statements of the journal migration that adds the events (one transaction).
EVENT_MIGRATION: tuple[str, ...] = (
    "CREATE TABLE events (seq INTEGER PRIMARY KEY AUTOINCREMENT, event_id TEXT NOT NULL UNIQUE, bench TEXT,"
    " kind TEXT NOT NULL, at TEXT, recorded_at TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ', 'now')),"
    " payload TEXT NOT NULL)",
    "CREATE INDEX events_bench ON events(bench, seq)",
    *(b for src in _SOURCES if (b := _backfill(*src)) is not None),
    *(_trigger(*src) for src in _SOURCES),
    "CREATE TRIGGER events_immutable_update BEFORE UPDATE ON events BEGIN"
    " SELECT RAISE(ABORT, 'events are immutable'); END",
    "CREATE TRIGGER events_immutable_delete BEFORE DELETE ON events BEGIN"
    " SELECT RAISE(ABORT, 'events are immutable'); END",
)


#: Journal migration 9: an hour of samples also keeps its last good value (``vlast``), and its
#: event says it (``last``); blocks compressed before keep ``last`` null.
SAMPLES_LAST_MIGRATION: tuple[str, ...] = (
    "ALTER TABLE sample_blocks ADD COLUMN vlast REAL",
    "DROP TRIGGER event_samples_hour",
    _trigger("samples-hour", "sample_blocks", "INSERT", "(SELECT bench FROM streams WHERE id = NEW.stream)",
             "strftime('%Y-%m-%dT%H:%M:%SZ', NEW.t0, 'unixepoch')",
             "json_object('supply_id', (SELECT supply_id FROM streams WHERE id = NEW.stream), 'quantity',"
             " (SELECT quantity FROM streams WHERE id = NEW.stream), 't0', NEW.t0, 't1', NEW.t1, 'n', NEW.n,"
             " 'bad', NEW.bad, 'min', NEW.vmin, 'max', NEW.vmax, 'last', NEW.vlast)"),
)


@dataclass(frozen=True)
class Event:
    """One immutable entry of a bench's record."""

    seq: int
    event_id: str
    bench: str | None
    kind: str
    at: str | None
    recorded_at: str
    payload: dict[str, Any]

    @classmethod
    def of_row(cls, row: tuple[Any, ...]) -> Event:
        seq, eid, bench, kind, at, recorded, payload = row
        return cls(int(seq), str(eid), bench, str(kind), at, str(recorded), json.loads(payload))
