"""Talking to the lab database (psycopg 3): connect, ship events and snapshots, read the latest.

Idempotent and resumable: every event carries its UUID, inserted with ``ON CONFLICT (event_id)
DO NOTHING`` in one transaction per batch, so a push cut off half-way is simply repeated.
"""

from __future__ import annotations

import json
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from typing import Any

from benchwarden.errors import LabError, LabUnreachable
from benchwarden.storage.events import Event

__all__ = ["connect", "insert_events", "insert_snapshot", "latest_snapshots", "recent_alarms", "safe_url",
           "CONNECT_TIMEOUT_S"]

#: How long a connection attempt waits before the server counts as unreachable [s].
CONNECT_TIMEOUT_S = 5


def safe_url(url: str) -> str:
    """The URL without a password, for messages."""
    import re

    return re.sub(r"(://[^:/@]+):[^@]*@", r"\1:***@", url)


@contextmanager
def connect(url: str) -> Iterator[Any]:
    """A connection to the lab database; a server that cannot be reached is :class:`LabUnreachable`."""
    import psycopg

    try:
        conn = psycopg.connect(url, connect_timeout=CONNECT_TIMEOUT_S, autocommit=True)
    except psycopg.OperationalError as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise LabUnreachable(f"lab database {safe_url(url)} cannot be reached: {first}") from None
    except psycopg.ProgrammingError as exc:
        raise LabError(f"lab database URL {safe_url(url)!r}: {exc}") from None
    try:
        yield conn
    except psycopg.OperationalError as exc:
        raise LabUnreachable(f"lab database {safe_url(url)}: the connection was lost ({str(exc).strip()[:120]})") from None
    except psycopg.errors.InsufficientPrivilege as exc:
        raise LabError(f"lab database {safe_url(url)} refused: {str(exc).strip()[:160]}") from None
    finally:
        conn.close()


def _finite(obj: Any) -> Any:
    """The document with every non-finite number (an endless time, NaN) as null: PostgreSQL's
    jsonb, like JSON itself, has no infinity.

    >>> _finite({"days_of_gas": float("inf"), "x": [1.5, float("nan")], "n": 3})
    {'days_of_gas': None, 'x': [1.5, None], 'n': 3}
    """
    import math

    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: _finite(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_finite(v) for v in obj]
    return obj


def _dumps(obj: Any) -> str:
    return json.dumps(_finite(obj), allow_nan=False)


def insert_events(conn: Any, bench_id: str, events: Sequence[Event]) -> int:
    """Insert a batch of events in one transaction; returns how many were new to the server."""
    if not events:
        return 0
    with conn.transaction():
        cur = conn.cursor()
        cur.executemany("INSERT INTO lab_events(event_id, bench_id, seq, kind, bench_at, recorded_at, payload)"
                        " VALUES (%s, %s, %s, %s, %s, %s, %s) ON CONFLICT (event_id) DO NOTHING",
                        [(e.event_id, bench_id, e.seq, e.kind, e.at, e.recorded_at, _dumps(e.payload))
                         for e in events])
        return max(0, int(cur.rowcount))  # psycopg 3: the rows the whole batch inserted


def insert_snapshot(conn: Any, bench_id: str, taken_at: str, status: dict[str, Any], profile_text: str | None,
                    profile_sha256: str | None) -> str:
    """Insert a status snapshot; returns when the server received it (its own clock, ISO 8601)."""
    with conn.transaction():
        row = conn.execute("INSERT INTO lab_snapshots(bench_id, taken_at, status, profile_text, profile_sha256)"
                           " VALUES (%s, %s, %s, %s, %s) RETURNING received_at",
                           (bench_id, taken_at, _dumps(status), profile_text, profile_sha256)).fetchone()
    return str(row[0].isoformat())


def latest_snapshots(conn: Any) -> list[tuple[str, str, float, dict[str, Any]]]:
    """(bench id, taken at, age [s] by the server's clock, status) of each bench's latest snapshot."""
    rows = conn.execute(
        "SELECT DISTINCT ON (bench_id) bench_id, taken_at, EXTRACT(EPOCH FROM now() - received_at), status"
        " FROM lab_snapshots ORDER BY bench_id, id DESC").fetchall()
    return [(b, t.isoformat(), float(age), st) for b, t, age, st in rows]


def recent_alarms(conn: Any, within_s: float) -> list[tuple[str, str | None, dict[str, Any]]]:
    """(bench id, the bench's time, payload) of the alarm events received in the last ``within_s``."""
    return [(b, at, p) for b, at, p in conn.execute(
        "SELECT bench_id, bench_at, payload FROM lab_events WHERE kind = 'alarm'"
        " AND received_at > now() - make_interval(secs => %s) ORDER BY bench_id, seq", (within_s,)).fetchall()]


def registered_benches(conn: Any) -> list[str]:
    return [r[0] for r in conn.execute("SELECT bench_id FROM lab_benches ORDER BY bench_id").fetchall()]
