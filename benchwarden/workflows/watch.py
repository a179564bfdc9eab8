"""Live gauges as a workflow: poll the profile's sources, store every sample, watch for leaks,
and keep the alarms.

:class:`Watcher` reads each supply's pressure source (and temperature source, the supply's own
or the room's) when it is due, passes the values through the range-and-spike filter, and
commits them to the journal's sample store at once. A source that fails is retried with a
back-off (interval × 2ⁿ, at most a minute); no good sample for :data:`SILENT_INTERVALS`
intervals makes the gauge **silent**.

:func:`leak_watch` is the continuous hold test: while a supply stands idle (no session since
its last cylinder change or the end of the last session), the real-gas mass of its samples is
fitted against time with :func:`benchwarden.core.hold.hold_from_log` — the very function of
``benchwarden hold --log`` — temperature-compensated with the temperature samples. When the data
resolve the leak against the target, :func:`record_leak_watch` stores one hold test (kind
``leak-watch``, the same record as every other). During a session :func:`live_draw` fits the
same samples for the observed draw (:func:`benchwarden.workflows.build.observed_draw`).

:class:`AlarmBook` keeps the alarms of :func:`benchwarden.workflows.findings.alarm_findings`
and writes a line to the journal when one appears.
"""

from __future__ import annotations

import datetime as dt
import json
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from typing import Any

from benchwarden.core import hold as hd
from benchwarden.core.hold import U_T_DEFAULT
from benchwarden.errors import BenchwardenError, JournalError
from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import Profile
from benchwarden.storage.samples import SampleStore
from benchwarden.workflows import build as pl
from benchwarden.workflows.cylinder import current_change
from benchwarden.workflows.feeds import (
    BACKOFF_MAX_S,
    SILENT_INTERVALS,
    Feed,
    Watcher,
    sample_tolerance,
)
from benchwarden.workflows.findings import Finding
from benchwarden.workflows.holds import (
    HoldRecord,
    record_of,
    source_gauge_spec,
    store,
    supply_target_sccm,
)
from benchwarden.workflows.model import Observed

__all__ = ["SILENT_INTERVALS", "BACKOFF_MAX_S", "sample_tolerance", "Feed", "Watcher", "LeakWatch", "leak_watch",
           "record_leak_watch", "leak_watch_recorded", "last_bad_sample", "live_draw", "AlarmBook"]

#: The leak watch needs this many samples over at least this span [s] before it says anything.
LEAK_MIN_SAMPLES, LEAK_MIN_SPAN_S = 10, 60.0
#: The leak watch looks back at most this far [s].
LEAK_MAX_SPAN_S = 14 * 86400.0
#: An alarm already in the journal this recently (from another watcher) is not written again [s].
ALARM_DEDUP_S = 120.0
#: At most this many samples go into a fit (evenly spaced by index beyond it).
FIT_MAX_POINTS = 20_000


def _ts(at: dt.datetime) -> float:
    return at.timestamp()


def _dt(t: float, tz: dt.tzinfo | None) -> dt.datetime:
    return dt.datetime.fromtimestamp(t, tz).replace(microsecond=0)


def _iso(text: str, tz: dt.tzinfo | None) -> dt.datetime:
    at = dt.datetime.fromisoformat(text)
    return at.replace(tzinfo=tz) if at.tzinfo is None else at


# ----------------------------------------------------------------------------- what the samples say


def _temperatures(store: SampleStore, prof: Profile, supply_id: str, t: Any, fallback: float) -> tuple[Any, bool]:
    """Temperatures at the sample times: the supply's sensor, else the room's, else ``fallback``."""
    import numpy as np

    tt = np.asarray(t)
    for owner in (supply_id, "room"):
        sid = store.stream(prof.bench.name, owner, "temperature")
        if sid is None:
            continue
        ts, vs = store.points(sid, float(tt[0]) - 3600.0, float(tt[-1]) + 3600.0)
        if len(ts) >= 1:
            return np.interp(tt, ts, vs), True
    return np.full(len(tt), fallback), False


def _thin(n: int, most: int) -> Any:
    import numpy as np

    return np.unique(np.linspace(0, n - 1, most).round().astype(int)) if n > most else np.arange(n)


@dataclass(frozen=True)
class LeakWatch:
    """The leak watch of one supply: the fit over its idle samples so far."""

    supply_id: str
    since: dt.datetime
    until: dt.datetime
    n: int
    verdict: str
    leak_rate_sccm: float
    leak_rate_uncertainty_sccm: float
    target_sccm: float
    temperature_measured: bool
    result: hd.HoldResult

    @property
    def resolved(self) -> bool:
        return self.verdict in ("leak", "no-leak-resolved")


def _idle_since(journal: Journal, prof: Profile, supply_id: str, now: dt.datetime) -> dt.datetime | None:
    """Start of the supply's current idle stretch (None while a session runs)."""
    tz = now.tzinfo
    start = now - dt.timedelta(seconds=LEAK_MAX_SPAN_S)
    change = current_change(journal, prof.bench.name, supply_id)
    if change is not None:
        start = max(start, _iso(change.at, tz))
    for s in journal.bench_sessions(prof.bench.name):
        if s.stopped_at is None:
            return None
        start = max(start, _iso(s.stopped_at, tz))
    return start


def leak_watch(journal: Journal | None, prof: Profile, supply_id: str, now: dt.datetime) -> LeakWatch | None:
    """The continuous hold test of a supply's idle samples (None while a session runs, for a
    liquefied gas, or with too few samples yet)."""
    if journal is None:
        return None
    s = prof.supply(supply_id)
    if s.gas.sold_liquefied and s.gross is not None:
        return None  # its pressure is the vapour pressure: nothing to fit
    store = SampleStore(journal)
    sid = store.stream(prof.bench.name, supply_id, "pressure")
    since = _idle_since(journal, prof, supply_id, now) if sid is not None else None
    if sid is None or since is None:
        return None
    t, p = store.points(sid, _ts(since), _ts(now))
    # a rise no temperature explains (a new cylinder nobody recorded, a regulator opened back
    # into it): the idle stretch starts after it
    rise = max(5.0 * sample_tolerance(s), 0.01 * float(p[-1])) if len(p) else 0.0
    jumps = [int(i) for i in (p[1:] - p[:-1] > rise).nonzero()[0]] if len(p) > 1 else []
    if jumps:
        t, p = t[jumps[-1] + 1:], p[jumps[-1] + 1:]
    if len(t) < LEAK_MIN_SAMPLES or t[-1] - t[0] < LEAK_MIN_SPAN_S:
        return None
    keep = _thin(len(t), FIT_MAX_POINTS)
    t, p = t[keep], p[keep]
    T, measured = _temperatures(store, prof, supply_id, t, s.reading_temperature or prof.ambient.temperature)
    amb = prof.ambient_pa
    log = hd.HoldLog(t - t[0], p, T if measured else None)
    try:
        fit = hd.hold_from_log(s.gas, s.water_volume, log, source_gauge_spec(s),
                               T_default=float(T[0]), target_sccm=supply_target_sccm(s),
                               reserve_abs=s.reserve.abs_at(amb), ambient_pa=amb)
    except BenchwardenError:
        return None
    r = fit.result
    return LeakWatch(supply_id, _dt(float(t[0]), now.tzinfo), _dt(float(t[-1]), now.tzinfo), fit.n, r.verdict,
                     r.leak_rate_sccm, r.leak_rate_uncertainty_sccm, r.target_sccm, measured, r)


def record_leak_watch(journal: Journal, prof: Profile, lw: LeakWatch) -> HoldRecord | None:
    """Store the leak watch as a hold test once it resolves the leak (once per idle stretch and
    verdict); returns the new record, or None."""
    if not lw.resolved:
        return None
    key = f"{lw.supply_id}@{lw.since.isoformat()}"
    for h in journal.hold_tests(prof.bench.name):
        if h.kind == "leak-watch" and h.details and h.verdict == lw.verdict:
            try:
                if json.loads(h.details).get("leak_watch") == key:
                    return None
            except ValueError:
                continue
    rec = record_of(lw.result, lw.until, prof.bench.name, lw.supply_id, "leak-watch")
    store(journal, rec, {"leak_watch": key, "samples": str(lw.n)})
    return rec


def leak_watch_recorded(journal: Journal | None, prof: Profile, supply_id: str,
                        now: dt.datetime) -> LeakWatch | None:
    """:func:`leak_watch`, stored as a hold test once it resolves (:func:`record_leak_watch`); a
    journal that cannot be written still gives the estimate."""
    lw = leak_watch(journal, prof, supply_id, now)
    if lw is not None and journal is not None:
        try:
            record_leak_watch(journal, prof, lw)
        except JournalError:
            pass
    return lw


def last_bad_sample(journal: Journal | None, prof: Profile, supply_id: str,
                    tz: dt.tzinfo | None = None) -> dict[str, str] | None:
    """The supply's latest pressure sample that was not good — ``at``, ``status`` (``bad`` or
    ``implausible``) and ``reason`` — or None."""
    if journal is None:
        return None
    store = SampleStore(journal)
    try:
        sid = store.stream(prof.bench.name, supply_id, "pressure")
        got = store.last_not_good(sid) if sid is not None else None
    except JournalError:
        return None
    if got is None:
        return None
    return {"at": dt.datetime.fromtimestamp(got[0], tz).isoformat(timespec="seconds"), "status": got[1],
            "reason": got[2]}


def live_draw(journal: Journal | None, prof: Profile, supply_id: str, since: dt.datetime, now: dt.datetime,
              planned_kg_s: float, reserve_abs_pa: float) -> Observed | None:
    """The observed draw of a supply from its samples since ``since`` (a session's start): the
    same least-squares fit as typed readings (:func:`benchwarden.workflows.build.observed_draw`) on
    at most 200 samples spread over the session."""
    if journal is None:
        return None
    s = prof.supply(supply_id)
    store = SampleStore(journal)
    sid = store.stream(prof.bench.name, supply_id, "pressure")
    if sid is None:
        return None
    t, p = store.points(sid, _ts(since), _ts(now))
    if len(t) < 2:
        return None
    keep = _thin(len(t), 200)
    t, p = t[keep], p[keep]
    T, _ = _temperatures(store, prof, supply_id, t, s.reading_temperature or prof.ambient.temperature)
    spec = source_gauge_spec(s)
    rows = [(_dt(float(a), now.tzinfo), float(b), float(c)) for a, b, c in zip(t, p, T, strict=True)]
    try:
        return pl.observed_draw(s.gas, s.water_volume, reserve_abs_pa, planned_kg_s, rows,
                                spec.u_difference_pa if spec is not None else 0.0, supply_id, U_T_DEFAULT)
    except BenchwardenError:
        return None


# ----------------------------------------------------------------------------- alarms


@dataclass
class AlarmBook:
    """The alarms showing now; each new one is written to the journal as a line (its words come
    from ``describe``, the presentation layer's)."""

    journal: Journal | None
    bench: str
    describe: Callable[[Finding], str]
    active: dict[tuple[str, str], Finding] = field(default_factory=dict)

    def update(self, alarms: Iterable[Finding], now: dt.datetime) -> list[Finding]:
        """Take the alarms now; returns those that are new (ring the bell for them)."""
        current = {(a.code, a.subject): a for a in alarms}
        new = [a for k, a in current.items() if k not in self.active]
        self.active = current
        recent: set[tuple[str, str | None]] = set()
        if new and self.journal is not None:
            try:  # another watcher on this journal (the app and `watch`) wrote it a moment ago
                since = (now - dt.timedelta(seconds=ALARM_DEDUP_S)).isoformat(timespec="seconds")
                recent = {(r.code, r.supply_id) for r in self.journal.alarms(self.bench, since)}
            except JournalError:
                pass
        for a in new:
            if self.journal is None or (a.code, a.subject) in recent:
                continue
            try:
                self.journal.add_alarm(self.bench, a.subject, a.code, now.isoformat(timespec="seconds"),
                                       self.describe(a), json.dumps({k: v for k, v in a.values.items()},
                                                                    default=str, sort_keys=True))
            except JournalError:
                pass  # the banner still shows it; the journal's own error is shown elsewhere
        return new
