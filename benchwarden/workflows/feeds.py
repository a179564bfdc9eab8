"""Polling a profile's live sources: every sample stored with its status, and only confirmed
samples good.

:class:`Watcher` reads each supply's pressure source (and temperature source, the supply's own
or the room's) when it is due and commits its samples to the journal's sample store at once.
Before a sample counts it is checked: a time stamp more than :data:`FUTURE_S` ahead of the clock,
or before the stream's latest sample, makes it bad with that reason; then the plausibility
filter (:class:`benchwarden.live.sample.Plausibility`) keeps a value that departs from the trend
by more than the supply could physically change (:func:`blowdown_rate`) until the next
samples confirm it, else stores it as ``implausible``. A source that fails is retried with a
back-off (interval × 2ⁿ, at most a minute); no good sample for :data:`SILENT_INTERVALS` intervals
makes the gauge **silent**.
"""

from __future__ import annotations

import datetime as dt
import math
import time
from collections.abc import Callable
from dataclasses import dataclass

from benchwarden.errors import BenchwardenError, InputError
from benchwarden.live.sample import Plausibility, Sample
from benchwarden.live.sources import LiveSource, make_source
from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import Profile, Supply
from benchwarden.storage.profile_fields import SourceBase
from benchwarden.storage.samples import SampleStore
from benchwarden.workflows.holds import source_gauge_spec

__all__ = ["SILENT_INTERVALS", "BACKOFF_MAX_S", "FUTURE_S", "VALVE_BORE_M", "sample_tolerance",
           "blowdown_rate", "Feed", "Watcher"]

#: A gauge is silent after this many intervals without a good sample.
SILENT_INTERVALS = 5
#: Longest wait between reconnection attempts [s].
BACKOFF_MAX_S = 60.0
#: Temperature samples are kept within this [K] (a good Pt100 resolves 0.01 K; benchwarden default).
TEMPERATURE_TOLERANCE_K = 0.05
#: Pressure transducers read far finer than their accuracy: without a stated resolution the
#: samples are kept within 0.01 % of the span (a 4½-digit display; benchwarden default).
SPAN_RESOLUTION = 1e-4
#: A poll stops starting further sources after this long [s] (they are read at the next poll,
#: first): with sources that time out, ``watch --for D`` still ends within a few seconds of D.
POLL_BUDGET_S = 1.0
#: A sample dated more than this ahead of the computer's clock is bad [s].
FUTURE_S = 60.0
#: The widest opening a cylinder empties through: its valve's bore, taken generously (cylinder
#: valve bores are a few millimetres, from memory of common valve data; benchwarden's bound) [m].
VALVE_BORE_M = 6e-3
#: Noise allowed around the trend: this many resolution steps, and at least this share of the
#: transducer's top pressure (benchwarden defaults).
BAND_STEPS, BAND_SHARE = 10.0, 0.005
#: A temperature sample may depart by this much plus :data:`TEMPERATURE_RATE_K_S` per second.
TEMPERATURE_BAND_K, TEMPERATURE_RATE_K_S = 2.0, 0.5


def sample_tolerance(s: Supply) -> float:
    """How close [Pa] the stored trace of a supply's pressure stays to every sample: the
    transducer's (or gauge's) resolution, else 0.01 % of its span (or of the transducer's
    range), else 100 Pa."""
    if s.source is not None and s.source.resolution is not None:
        return s.source.resolution.typed_pa
    spec = source_gauge_spec(s)
    if spec is not None and spec.resolution_pa is not None:
        return spec.resolution_pa
    if spec is not None:
        return spec.span_pa * SPAN_RESOLUTION
    if s.source is not None and s.source.range is not None:
        return s.source.range.typed_pa * SPAN_RESOLUTION
    return 100.0


def blowdown_rate(s: Supply, p_abs: float, T: float, ambient_pa: float) -> float:
    """The fastest a supply's pressure can physically fall, as a share of itself per second
    [1/s]: the cylinder at ``p_abs`` emptying through its valve's whole bore
    (:data:`VALVE_BORE_M`, discharge coefficient 1) into the room — a choked real-gas nozzle
    (:func:`benchwarden.core.flow.orifice_flow`) — gives (dp/dt)/p ≈ ṁ/m, nearly the same at
    every pressure since the choked flow and the contents both scale with it (isothermal
    blow-down; its adiabatic cooling makes the fall faster by at most the ratio of heat
    capacities, so the bound is doubled). The same bound serves a rise (a warming cylinder rises
    far slower; a new cylinder is a step the next samples confirm)."""
    from benchwarden.core import gas as g
    from benchwarden.core.flow import orifice_flow

    m = g.density(s.gas, T, p_abs) * s.water_volume
    mdot = orifice_flow(s.gas, VALVE_BORE_M, p_abs, ambient_pa, T, cd=1.0).mass_flow_kg_s
    return 2.0 * mdot / m


def _ts(at: dt.datetime) -> float:
    return at.timestamp()


@dataclass
class Feed:
    """One source being read: a supply's pressure, or a temperature."""

    supply_id: str
    quantity: str  # "pressure" | "temperature"
    config: SourceBase
    stream: int
    interval_s: float
    source: LiveSource | None = None
    filter: Plausibility | None = None
    due: float = 0.0
    failures: int = 0
    last_good: dt.datetime | None = None
    started: dt.datetime | None = None
    why: str = ""
    why_at: dt.datetime | None = None
    stored: int = 0
    latest: float | None = None

    def silent(self, now: dt.datetime) -> bool:
        since = self.last_good or self.started
        return since is not None and (now - since).total_seconds() > SILENT_INTERVALS * self.interval_s



def early_s(interval_s: float) -> float:
    """How early a source counts as due [s]: a tenth of its interval, at most 0.2 s. A timer
    ticking at the source's own interval fires a little before or after the due time; without
    this slack every tick that comes a millisecond early is skipped and a 1 s gauge is read
    every 2 s.

    >>> early_s(1.0), early_s(60.0), early_s(0.1)
    (0.1, 0.2, 0.01)
    """
    return min(0.2, 0.1 * interval_s)

class Watcher:
    """Polls the sources of a profile and stores every sample (see module docstring).

    ``open_source`` builds a source from its profile section (tests pass their own);
    ``monotonic`` is the clock for scheduling, ``wallclock`` the time of a sample read."""

    def __init__(self, prof: Profile, journal: Journal,
                 open_source: Callable[[SourceBase, float], LiveSource] = make_source,
                 monotonic: Callable[[], float] = time.monotonic,
                 wallclock: Callable[[], dt.datetime] = lambda: dt.datetime.now().astimezone()) -> None:
        self.prof, self.journal, self.open_source, self.monotonic = prof, journal, open_source, monotonic
        #: the time a sample without its own timestamp gets (to the microsecond: two samples in
        #: one second are two samples)
        self.wallclock = wallclock
        self.store = SampleStore(journal)
        self.feeds: list[Feed] = []
        self.turn = 0
        bench = prof.bench.name
        room_t = prof.room.temperature_source if prof.room is not None else None
        for s in prof.supplies:
            if s.source is not None:
                sid = self.store.stream(bench, s.id, "pressure", sample_tolerance(s))
                assert sid is not None
                self.feeds.append(Feed(s.id, "pressure", s.source, sid, s.source.interval))
            if s.temperature_source is not None:
                sid = self.store.stream(bench, s.id, "temperature", TEMPERATURE_TOLERANCE_K)
                assert sid is not None
                self.feeds.append(Feed(s.id, "temperature", s.temperature_source, sid, s.temperature_source.interval))
        if room_t is not None:
            sid = self.store.stream(bench, "room", "temperature", TEMPERATURE_TOLERANCE_K)
            assert sid is not None
            self.feeds.append(Feed("room", "temperature", room_t, sid, room_t.interval))

    def _filter(self, f: Feed, now: dt.datetime) -> Plausibility:
        """The feed's plausibility filter, continuing from the stream's latest good sample (the
        trend it judges against when that sample is recent: within :data:`SILENT_INTERVALS`
        intervals, at least a minute)."""
        got = self.store.latest(f.stream)
        last = Sample(dt.datetime.fromtimestamp(got[0], dt.UTC), got[1], True) if got is not None else None
        f.latest = max(f.latest or -math.inf, got[0]) if got is not None else f.latest
        recent = got is not None and 0 <= _ts(now) - got[0] <= max(60.0, SILENT_INTERVALS * f.interval_s)
        flt = self._plausibility(f, last)
        flt.started = recent
        return flt

    def _plausibility(self, f: Feed, last: Sample | None) -> Plausibility:
        if f.quantity == "temperature":  # a cylinder or a room: −120 to +125 °C
            return Plausibility(150.0, 400.0, TEMPERATURE_BAND_K, TEMPERATURE_RATE_K_S, last)
        amb = self.prof.ambient_pa
        s = self.prof.supply(f.supply_id)
        hi = s.test_pressure.abs_at(amb) if s.test_pressure is not None else s.service_pressure.abs_at(amb) * 1.5
        if s.source is not None and s.source.range is not None:
            hi = min(hi, s.source.range.abs_at(amb))
        T = s.reading_temperature or self.prof.ambient.temperature
        try:
            rel = blowdown_rate(s, s.service_pressure.abs_at(amb), T, amb)
        except BenchwardenError:  # a state outside the fluid's range: a fifth of the pressure per second
            rel = 0.2
        band = max(BAND_STEPS * sample_tolerance(s), BAND_SHARE * hi)
        return Plausibility(0.0, hi * 1.0001, band, 0.0, last, rel)

    def next_due(self) -> float:
        """Seconds until the next source is due (0 when one is due now)."""
        if not self.feeds:
            return math.inf
        return max(0.0, min(f.due - early_s(f.interval_s) for f in self.feeds) - self.monotonic())

    def _dated(self, f: Feed, s: Sample, now: dt.datetime) -> Sample:
        """The sample, or a bad one when its time stamp cannot be right."""
        t = _ts(s.at)
        if t > _ts(now) + FUTURE_S:
            return Sample(s.at, s.value, False, f"dated {s.at.isoformat(timespec='seconds')}, more than "
                                                f"{FUTURE_S:g} s after the computer's clock")
        if f.latest is not None and t < f.latest:
            when = dt.datetime.fromtimestamp(f.latest, s.at.tzinfo).isoformat(timespec="seconds")
            return Sample(s.at, s.value, False, f"dated {s.at.isoformat(timespec='seconds')}, before the "
                                                f"stream's latest sample ({when})")
        if s.good:
            f.latest = t
        return s

    def _store(self, f: Feed, decided: list[Sample]) -> tuple[int, bool]:
        rows: list[tuple[float, float | None, str, str]] = []
        good = False
        for smp in decided:
            rows.append((_ts(smp.at), smp.value, smp.status, smp.why))
            if smp.good:
                good = True
                f.last_good = smp.at if f.last_good is None else max(f.last_good, smp.at)
            else:
                f.why, f.why_at = smp.why, smp.at
        added = self.store.add(f.stream, rows) if rows else 0  # JournalError goes up: the interface says so
        f.stored += added
        return added, good

    def poll(self, now: dt.datetime) -> int:
        """Read every source that is due, store its samples (committed before returning);
        returns how many were stored. Never raises for a source's failure: it becomes a bad
        sample, the back-off and, in time, a silent gauge."""
        stored = 0
        mono = self.monotonic()
        began = time.monotonic()
        n = len(self.feeds)
        for k in range(n):
            f = self.feeds[(self.turn + k) % n]
            if f.started is None:
                f.started = now
            if mono < f.due - early_s(f.interval_s):
                continue
            if time.monotonic() - began > POLL_BUDGET_S:
                self.turn = (self.turn + k) % n  # this one first next time
                break
            samples: list[Sample] = []
            try:
                if f.source is None:
                    f.source = self.open_source(f.config, self.prof.ambient_pa)
                    f.filter = f.filter or self._filter(f, now)
                samples = f.source.poll(self.wallclock())
            except InputError as exc:
                f.why = str(exc)
                f.source = None
            assert f.filter is not None or not samples
            decided = [d for raw in samples for d in f.filter(self._dated(f, raw, now))] if f.filter else []
            added, good = self._store(f, decided)
            stored += added
            # the source answered (a sample held for confirmation, or one out of range, was read)
            read = good or any(x.reached for x in samples)
            if read or (samples and f.config.kind == "file"):
                f.failures = 0
                f.due = mono + f.interval_s
            elif not samples and f.source is not None and f.config.kind in ("file", "serial"):
                f.due = mono + f.interval_s  # a log or a line with nothing new yet is not a failure
            else:
                f.failures += 1
                f.due = mono + min(BACKOFF_MAX_S, f.interval_s * 2 ** min(f.failures - 1, 10))
        return stored

    def compact(self, now: dt.datetime) -> int:
        """Compress samples older than the raw window (call now and then, e.g. hourly)."""
        return sum(self.store.compact(f.stream, _ts(now)) for f in self.feeds)

    def silent(self, now: dt.datetime) -> dict[str, str]:
        """Supplies whose pressure gauge is silent, with the last reason."""
        return {f.supply_id: f.why or "no sample" for f in self.feeds if f.quantity == "pressure" and f.silent(now)}

    def last_reasons(self, now: dt.datetime) -> dict[str, str]:
        """Each pressure feed's reason for its latest sample that was not good, while recent
        (within :data:`SILENT_INTERVALS` intervals, at least a minute)."""
        def recent(f: Feed) -> bool:
            return f.why_at is not None and abs((now - f.why_at).total_seconds()) <= max(
                60.0, SILENT_INTERVALS * f.interval_s)

        return {f.supply_id: f.why for f in self.feeds if f.quantity == "pressure" and f.why and recent(f)}

    def close(self) -> None:
        """Let go of every source; samples still held for confirmation are stored implausible."""
        for f in self.feeds:
            if f.filter is not None:
                try:
                    self._store(f, f.filter.flush())
                except BenchwardenError:
                    pass
            if f.source is not None:
                try:
                    f.source.close()
                except Exception:  # noqa: BLE001 - closing a dead line must not stop the others
                    pass
                f.source = None
