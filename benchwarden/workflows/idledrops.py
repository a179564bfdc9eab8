"""Idle drops: two readings of a supply that bracket a time with no session and no cylinder
change form an idle drop, which becomes a hold test (the same method, budget and record as
``hold``) when it can resolve the target leak or the pressure rose; stored once. Incremental: a
mark per supply says how far the readings were scanned.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from benchwarden.core import hold as hd
from benchwarden.errors import BenchwardenError
from benchwarden.storage.journal import Journal, ReadingRow
from benchwarden.storage.profile import Profile
from benchwarden.workflows.cylinder import current_change, readings_since_change, stamp
from benchwarden.workflows.holds import (
    HoldRecord,
    profile_gauge_spec,
    record_of,
    store,
    supply_target_sccm,
)
from benchwarden.workflows.kept import is_kept, keep
from benchwarden.workflows.model import Memo

__all__ = ["IdleDrop", "idle_drops", "idle_drop_result", "idle_drop_counts", "unresolved_idle_drop",
           "record_idle_drops"]



@dataclass(frozen=True)
class IdleDrop:
    """Two readings of a supply with no session and no cylinder change between them."""

    supply_id: str
    first: ReadingRow
    last: ReadingRow

    @property
    def key(self) -> str:
        return f"{self.first.id}-{self.last.id}"


class _Sessions:
    """The bench's session spans, read once per call: is a time span inside a session?"""

    def __init__(self, journal: Journal, bench: str, now: dt.datetime) -> None:
        self.spans = [(stamp(a), stamp(b) if b else now) for a, b in journal.session_spans(bench)]

    def overlap(self, a: dt.datetime, b: dt.datetime) -> bool:
        return any(start < b and stop > a for start, stop in self.spans)


def _is_idle(sessions: _Sessions, a: ReadingRow, b: ReadingRow) -> bool:
    ta, tb = stamp(a.at), stamp(b.at)
    if tb <= ta:
        return False
    # strictly inside the interval: a session that ended at the first reading or began at the last is fine
    inner_a, inner_b = ta + dt.timedelta(seconds=1), tb - dt.timedelta(seconds=1)
    return not (inner_b > inner_a and sessions.overlap(inner_a, inner_b))


def idle_drops(journal: Journal | None, prof: Profile, supply_id: str, now: dt.datetime) -> list[IdleDrop]:
    """Consecutive pressure readings of the supply's current cylinder that bracket a time with
    no session running (readings taken in a session may open or close one)."""
    if journal is None:
        return []
    rows = [r for r in readings_since_change(journal, prof.bench.name, supply_id) if r.pressure_abs_pa is not None]
    sessions = _Sessions(journal, prof.bench.name, now)
    return [IdleDrop(supply_id, a, b) for a, b in zip(rows, rows[1:], strict=False) if _is_idle(sessions, a, b)]


def _new_drops(journal: Journal, prof: Profile, supply_id: str, now: dt.datetime) -> tuple[list[IdleDrop], int]:
    """The idle drops that may be new since the last scan (see :func:`record_idle_drops`): the
    pairs each reading written since then forms with its neighbours on the current cylinder,
    and the pair that closes around each reading struck out since then. Returns them and the
    journal's newest reading id when the scan began (every reading up to it was looked at, so
    the next scan reads by id only what was written after: its cost is what changed, not the
    history). The first scan of a supply reads its current cylinder once."""
    bench = prof.bench.name
    mark = journal.mark(bench, supply_id, "idle-drops")
    newest = journal.last_reading_id()  # read first: a reading written meanwhile is after it
    if mark is None:
        rows = readings_since_change(journal, bench, supply_id, include_struck=True)
        return idle_drops(journal, prof, supply_id, now), max([newest] + [r.id for r in rows])
    last_id, scanned_at = mark
    change = current_change(journal, bench, supply_id)
    since = change.at if change is not None else ""
    fresh = journal.readings_after(bench, supply_id, last_id)
    touched = [r for r in fresh if not r.struck and r.pressure_abs_pa is not None and r.at >= since]
    touched += [r for r in journal.struck_readings(bench, supply_id, scanned_at) if r.at >= since]
    if not touched:
        return [], max([last_id, newest] + [r.id for r in fresh])
    sessions = _Sessions(journal, bench, now)
    pairs: dict[str, IdleDrop] = {}
    for r in touched:
        before = journal.neighbour_reading(bench, supply_id, r.at, r.id, after=False)
        after = journal.neighbour_reading(bench, supply_id, r.at, r.id, after=True)
        ends = [x for x in (before, after) if x is not None and x.at >= since]
        if r.struck:  # the pair closes around the struck reading
            candidates = [(ends[0], ends[1])] if len(ends) == 2 else []
        else:
            candidates = [(x, r) if x is before else (r, x) for x in ends]
        for a, b in candidates:
            if _is_idle(sessions, a, b):
                pairs[f"{a.id}-{b.id}"] = IdleDrop(supply_id, a, b)
    return list(pairs.values()), max([last_id, newest] + [r.id for r in fresh])


def idle_drop_result(prof: Profile, drop: IdleDrop) -> hd.HoldResult:
    """The hold test of an idle drop: :func:`benchwarden.core.hold.hold_two_readings` on the supply's
    water volume, gas and gauge, temperature-compensated with the readings' temperatures."""
    s = prof.supply(drop.supply_id)
    assert drop.first.pressure_abs_pa is not None and drop.last.pressure_abs_pa is not None
    amb = prof.ambient_pa
    duration = (stamp(drop.last.at) - stamp(drop.first.at)).total_seconds()
    return hd.hold_two_readings(s.gas, s.water_volume, drop.first.pressure_abs_pa, drop.last.pressure_abs_pa,
                                duration, drop.first.temperature_k, drop.last.temperature_k,
                                profile_gauge_spec(s.gauge), target_sccm=supply_target_sccm(s),
                                reserve_abs=s.reserve.abs_at(amb), ambient_pa=amb)


def idle_drop_counts(r: hd.HoldResult) -> bool:
    """An idle drop becomes a hold test only when its span could resolve the target leak with
    this gauge (expanded uncertainty below the target), or when it shows something regardless:
    a leak beyond the uncertainty, or a pressure that rose beyond it (always recorded). Two
    readings a minute apart tell nothing and are not stored as a test."""
    return r.verdict in ("leak", "pressure-rose") or r.smallest_resolvable_sccm < r.target_sccm


def unresolved_idle_drop(journal: Journal | None, prof: Profile, supply_id: str,
                         now: dt.datetime) -> hd.HoldResult | None:
    """The supply's latest idle drop when it was too short to resolve the target leak (so no
    hold test was stored from it): its result says how long a hold would need
    (``hold_needed_h``). None when the latest drop counted or there is none."""
    s = prof.supply(supply_id)
    if journal is None or (s.gas.sold_liquefied and s.gross is not None):
        return None
    bench = prof.bench.name
    change = current_change(journal, bench, supply_id)
    last = journal.latest_reading(bench, supply_id, change.at if change else None)
    if last is None:
        return None
    first = journal.neighbour_reading(bench, supply_id, last.at, last.id, after=False)
    if first is None or (change is not None and first.at < change.at):
        return None
    if not _is_idle(_Sessions(journal, bench, now), first, last):
        return None
    try:
        r = idle_drop_result(prof, IdleDrop(supply_id, first, last))
    except BenchwardenError:
        return None
    return None if idle_drop_counts(r) else r


def _stored_drops(journal: Journal, bench: str, supply_id: str, drops: list[IdleDrop]) -> set[str]:
    """The keys of those idle drops already stored as hold tests (a drop's test is filed at its
    last reading's time: those from two days before the earliest drop's first reading are read,
    so that times with other offsets still sort after it in text)."""
    first = min(stamp(d.first.at) for d in drops)
    return journal.idle_drop_keys(bench, supply_id, (first.date() - dt.timedelta(days=2)).isoformat())


def record_idle_drops(journal: Journal | None, prof: Profile, now: dt.datetime,
                      memo: Memo | None = None) -> list[HoldRecord]:
    """Turn every new idle drop of every supply into a stored hold test (once each, and only
    when it counts: :func:`idle_drop_counts`); returns the new records. Incremental: only the
    readings written or struck out since the last call are looked at (a mark per supply); with
    a ``memo`` (the app's), a supply whose record did not change since its last scan is not
    looked at (:func:`benchwarden.workflows.kept.is_kept`)."""
    if journal is None:
        return []
    new: list[HoldRecord] = []
    scanned_at = now.isoformat(timespec="seconds")
    for s in prof.supplies:
        if s.gas.sold_liquefied and s.gross is not None:
            continue  # a liquefied gas's pressure is its vapour pressure: no hold test from it
        if is_kept(memo, journal, prof.bench.name, s.id, "idle-drops", None):
            continue
        drops, newest = _new_drops(journal, prof, s.id, now)
        done = _stored_drops(journal, prof.bench.name, s.id, drops) if drops else set()
        for drop in drops:
            if drop.key in done:
                continue
            r = idle_drop_result(prof, drop)
            if not idle_drop_counts(r):
                continue
            rec = record_of(r, stamp(drop.last.at), prof.bench.name, s.id, "idle-drop")
            store(journal, rec, {"idle_drop": drop.key})
            new.append(rec)
        mark = journal.mark(prof.bench.name, s.id, "idle-drops")
        if mark is None or mark[0] != newest or drops:
            journal.set_mark(prof.bench.name, s.id, "idle-drops", newest, scanned_at)
        keep(memo, journal, prof.bench.name, s.id, "idle-drops", None)
    return new


