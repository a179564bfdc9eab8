"""A running session: the profile, its plan, the readings typed so far and the journal.

This is the app's model (no widgets, no formulas): it parses what a person typed with the same
parser as the command line, stores each reading in the journal the moment it is accepted, and
asks the core for the plan, the observed draw and the live findings.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from benchwarden.errors import InputError, JournalError
from benchwarden.storage.journal import Journal, ReadingRow
from benchwarden.storage.profile_view import ProfileView, kept_view
from benchwarden.storage.samples import Columns
from benchwarden.units import parse_mass, parse_pressure, parse_temperature
from benchwarden.units.quantities import check_text
from benchwarden.workflows.cylinder import (
    Entry,
    Question,
    check_reading,
    parse_at,
    readings_since_change,
    record_change,
    record_reading,
)
from benchwarden.workflows.holds import (
    JudgedHold,
    LastHold,
    judged_hold_tests,
    last_hold_test,
    reading_step_pa,
    standing_leaks,
)

if TYPE_CHECKING:  # the plan, the findings, the live gauges and the lab load when first used: the app draws first
    from benchwarden.storage.profile import Profile
    from benchwarden.workflows.bench import Assessment
    from benchwarden.workflows.findings import Finding
    from benchwarden.workflows.lab import LabLink, Shipper
    from benchwarden.workflows.model import Memo, Observed, Plan
    from benchwarden.workflows.session_live import LiveSupply
    from benchwarden.workflows.watch import AlarmBook, Watcher


def now_local() -> dt.datetime:
    return dt.datetime.now().astimezone().replace(microsecond=0)


@dataclass
class Reading:
    """A reading typed in the app: a pressure, or a weight (``weight_kg``) of a liquefied supply."""

    supply_id: str
    at: dt.datetime
    pressure_abs_pa: float | None
    pressure_text: str
    temperature_k: float
    saved: bool = True
    weight_kg: float | None = None
    journal_id: int | None = None

    def entry(self) -> Entry:
        return Entry(self.supply_id, self.at, self.temperature_k, self.pressure_abs_pa, self.pressure_text,
                     self.weight_kg)


@dataclass
class SessionState:
    """Everything the app shows, kept outside the widgets."""

    profile_path: Path
    journal: Journal | None
    clock: Callable[[], dt.datetime] = now_local
    profile: Profile | None = None
    plan: Plan | None = None
    plan_at: dt.datetime | None = None
    session_id: int | None = None
    started_at: dt.datetime | None = None
    readings: dict[str, list[Reading]] = field(default_factory=dict)
    observed: dict[str, Observed] = field(default_factory=dict)
    unsaved: list[Reading] = field(default_factory=list)
    watcher: Watcher | None = None
    live: dict[str, LiveSupply] = field(default_factory=dict)
    alarm_book: AlarmBook | None = None
    _compacted: dt.datetime | None = None
    _leak_at: dt.datetime | None = None
    _life: list[Finding] = field(default_factory=list)
    #: property results kept between refreshes (a premix's flashes are not repeated)
    _memo: Memo | None = None
    #: the background push to the profile's lab (made on the first poll_lab)
    shipper: Shipper | None = None

    # -- profile and plan

    def load(self, plan: bool = True) -> None:
        """Load the profile and compute the plan (blocking: CoolProp; call from a worker)."""
        self.profile = self._validated()
        if plan:
            self.recompute()

    def _validated(self) -> Profile:
        """The profile, validated; what the first frame needs of it is kept for the next start."""
        from benchwarden.storage.profile import parse_profile
        from benchwarden.storage.profile_view import keep_view, read_profile_text
        from benchwarden.workflows.cylinder import profile_view

        text = read_profile_text(self.profile_path)
        prof = parse_profile(text, str(self.profile_path))
        keep_view(self.journal, self.profile_path, text, profile_view(prof))
        return prof

    def first_view(self) -> ProfileView | None:
        """What the first frame needs of the profile, kept when this exact profile text was last
        validated (no profile parse), else None."""
        return kept_view(self.journal, self.profile_path)

    def reload(self) -> None:
        """Reload the edited profile; on error the old one stays in use and the error is raised."""
        new = self._validated()
        old = self.profile
        self.profile = new
        try:
            self.recompute()
        except Exception:
            self.profile = old
            raise

    def effective_profile(self) -> Profile:
        """The profile as the journal records it (every supply's latest reading or fill, new idle
        drops stored as hold tests), with readings not yet saved applied on top."""
        from benchwarden.storage.profile import with_reading
        from benchwarden.workflows.bench import journal_state
        assert self.profile is not None
        prof = journal_state(self.profile, self.journal, self.clock(), self._memo)
        for r in sorted(self.unsaved, key=lambda r: r.at):
            prof = with_reading(prof, r.supply_id, parse_pressure(f"{r.pressure_abs_pa} Pa(a)"), r.temperature_k)
        return prof

    def recompute(self) -> None:
        from benchwarden.workflows import build as pl
        from benchwarden.workflows.bench import orders_of
        from benchwarden.workflows.findings import life_findings
        from benchwarden.workflows.model import Memo
        self._memo = self._memo if self._memo is not None else Memo()  # made with the first plan
        now = self.clock()
        latest = max((r.at for rs in self.readings.values() for r in rs), default=None)
        self.plan_at = latest or now
        prof = self.effective_profile()
        self.plan = pl.build_plan(prof, now=self.plan_at, start_at=self.plan_at,
                                  leaks_sccm=standing_leaks(self.journal, prof.bench.name, self._memo), memo=self._memo)
        # retest and service dates, and when to order: the same rule as the plan and status
        orders = orders_of(prof, self.plan, self.journal, now, self._memo)
        self._life = life_findings(prof, now.date(), {k: (o.order_by, o.days_of_gas) for k, o in orders.items()})
        self._observe()

    def _observe(self) -> None:
        from benchwarden.workflows import session_live
        self.observed = session_live.observed_draws(self)

    # -- session

    @property
    def running(self) -> bool:
        return self.session_id is not None

    @property
    def session_end(self) -> dt.datetime | None:
        if self.started_at is None or self.profile is None:
            return None
        return self.started_at + dt.timedelta(seconds=self.profile.session.duration)

    def standing_stops(self) -> list[Finding]:
        """The STOP findings that stand now (a session starts over them only when accepted)."""
        from benchwarden.workflows.record import standing_stops
        return standing_stops(self.findings()) if self.plan is not None else []

    def start(self, describe: Callable[[Finding], str] = lambda f: f.code, operator: str | None = None,
              accept_reason: str | None = None) -> int:
        """Start a session now. While a STOP stands it is refused (:class:`StopsStand`) unless
        ``accept_reason`` is given; the acceptance is recorded with the operator."""
        from benchwarden.workflows.record import StopsStand, start_session
        assert self.profile is not None
        now = self.clock()
        if self.journal is not None:
            self.session_id = start_session(self.journal, self.profile, self.findings(), now, describe, operator,
                                            accept_reason, str(self.profile_path))
        else:
            stops = self.standing_stops()
            if stops and not (accept_reason or "").strip():
                raise StopsStand(stops, [describe(f) for f in stops])
            self.session_id = 0
        self.started_at = now
        self.readings = {}
        self.observed = {}
        return self.session_id

    def stop(self) -> None:
        if self.session_id is not None and self.journal is not None:
            self.journal.stop_session(self.session_id, self.clock().isoformat(timespec="seconds"))
        self.session_id = None

    def resume(self, session_id: int) -> None:
        """Continue a session left running (its readings come back from the journal)."""
        assert self.journal is not None
        row = self.journal.session(session_id)
        if row is None:
            raise InputError(f"no session {session_id} in the journal")
        self.session_id = row.id
        self.started_at = dt.datetime.fromisoformat(row.started_at)
        self.readings = {}
        for r in self.journal.readings(row.id):
            if r.struck or r.pressure_abs_pa is None:
                continue
            self.readings.setdefault(r.supply_id, []).append(
                Reading(r.supply_id, dt.datetime.fromisoformat(r.at), r.pressure_abs_pa, r.pressure_text, r.temperature_k,
                        journal_id=r.id))

    def parse_reading(self, supply_id: str, value: str, temperature: str, when: str) -> Reading:
        """Check a typed reading (same parsers as the command line): a gauge pressure, or a gross
        weight (``74.1 kg``) for a supply with a tare weight. Raises InputError, changes nothing."""
        assert self.profile is not None
        ids = {s.id: s for s in self.profile.supplies}
        if supply_id not in ids:
            raise InputError(f"choose a supply ({', '.join(ids)})")
        amb = self.profile.ambient_pa
        T = parse_temperature(temperature)
        at = self.parse_time(when)
        if re.search(r"(kg|lb)\s*$", value.strip(), re.IGNORECASE):
            w = parse_mass(value, "weight")
            reading = Reading(supply_id, at, None, value.strip(), T, weight_kg=w)
        else:
            p = parse_pressure(value, amb)
            reading = Reading(supply_id, at, p.abs_at(amb), p.text, T)
        check_reading(self.profile, None, reading.entry())  # the supply's limits
        return reading

    def parse_time(self, text: str) -> dt.datetime:
        """A typed time: a date and time, ``yesterday 18:00``, or ``HH:MM`` (its most recent past
        occurrence); never in the future (:func:`benchwarden.workflows.cylinder.parse_at`)."""
        return parse_at(text, self.clock())

    def in_session(self, reading: Reading) -> bool:
        """Whether a reading counts in the running session: taken after it started (a time
        before the start is an idle reading, whatever moment it was typed)."""
        return self.running and (self.started_at is None or reading.at >= self.started_at)

    def questions(self, reading: Reading) -> list[Question]:
        """What is implausible about a checked reading (a rise without a change, a drop far faster
        than planned, a unit that looks swapped): ask before :meth:`add_reading`."""
        assert self.profile is not None and self.plan is not None
        planned = next((s.draw_kg_s for s in self.plan.supplies if s.id == reading.supply_id), None)
        return check_reading(self.profile, self.journal, reading.entry(), planned)

    def add_reading(self, reading: Reading) -> Reading:
        """Record a checked reading, in the running session or as an idle reading: journal first
        (committed), then memory. If the journal write fails the reading is kept in memory,
        marked unsaved (retried by :meth:`retry_unsaved`), and the JournalError is raised."""
        assert self.profile is not None
        if self.in_session(reading) and reading.pressure_abs_pa is not None:
            self.readings.setdefault(reading.supply_id, []).append(reading)
        if self.journal is not None:
            try:
                self._write_reading(reading)
            except JournalError:
                reading.saved = False
                self.unsaved.append(reading)
                raise
        return reading

    def _write_reading(self, reading: Reading) -> None:
        assert self.journal is not None and self.profile is not None
        reading.journal_id = record_reading(self.journal, self.profile, reading.entry(),
                                            self.session_id if self.in_session(reading) else None, self.clock())

    def retry_unsaved(self) -> int:
        """Write the readings the journal refused before; returns how many are still unsaved."""
        if self.journal is None:
            return len(self.unsaved)
        still: list[Reading] = []
        for r in self.unsaved:
            try:
                self._write_reading(r)
                r.saved = True
            except JournalError:
                still.append(r)
        self.unsaved = still
        return len(still)

    def change_cylinder(self, reading: Reading, label: str | None, retest_due: dt.date | None) -> None:
        """Record a cylinder change on the reading's supply (the new fill)."""
        assert self.profile is not None
        if self.journal is None:
            raise JournalError("no journal: a cylinder change cannot be recorded")
        record_change(self.journal, self.profile, reading.entry(), self.clock(), label, retest_due)
        self.readings.pop(reading.supply_id, None)

    def history(self, supply_id: str) -> list[ReadingRow]:
        """The readings of the supply's current cylinder, struck ones included (newest last)."""
        assert self.profile is not None
        return readings_since_change(self.journal, self.profile.bench.name, supply_id, include_struck=True)

    def strike(self, reading_id: int, reason: str) -> None:
        """Strike a reading out (kept, marked, with the reason)."""
        from benchwarden.workflows.cylinders import strike
        if self.journal is None:
            raise JournalError("no journal")
        assert self.profile is not None
        strike(self.journal, self.profile, reading_id, reason, self.clock())
        for rs in self.readings.values():
            rs[:] = [r for r in rs if r.journal_id != reading_id]

    def close_left_running(self, session_id: int) -> None:
        """Close a session left running (not resumed): it ends at its last reading, or its start."""
        if self.journal is None:
            return
        rows = self.journal.readings(session_id)
        row = self.journal.session(session_id)
        end = rows[-1].at if rows else (row.started_at if row else self.clock().isoformat(timespec="seconds"))
        self.journal.stop_session(session_id, end)

    def record_session(self, operator: str | None, shots: int | None, note: str | None) -> None:
        """The session's record: operator, shots fired and a note (in the journal)."""
        if self.journal is None or self.session_id is None:
            return
        operator = check_text(operator or "", "operator", 100)
        note = check_text(note or "", "note", 1000)
        self.journal.set_session_record(self.session_id, operator or None, shots)
        if note:
            self.journal.add_note(self.session_id, self.clock().isoformat(timespec="seconds"), note)

    def reading_step(self, supply_id: str) -> float | None:
        """The pressure step the supply's gauge resolves [Pa] (figures are shown to it)."""
        if self.profile is None:
            return None
        lv = self.live.get(supply_id)
        return reading_step_pa(self.profile.supply(supply_id), live=lv is not None and lv.sample is not None)

    def last_reading(self, supply_id: str) -> Reading | None:
        rs = self.readings.get(supply_id)
        return max(rs, key=lambda r: r.at) if rs else None

    # -- what the overview shows

    def hours_left(self, supply_id: str, now: dt.datetime | None = None) -> float:
        """Hours to the reserve now: the observed projection where there is one, else the plan's,
        counted down from when it was made."""
        assert self.plan is not None and self.plan_at is not None
        now = now or self.clock()
        ob = self.observed.get(supply_id)
        if ob is not None and ob.reserve_at is not None:
            return (dt.datetime.fromisoformat(ob.reserve_at) - now).total_seconds() / 3600.0
        sp = next(x for x in self.plan.supplies if x.id == supply_id)
        if not math.isfinite(sp.hours_to_reserve):
            return math.inf
        return sp.hours_to_reserve - (now - self.plan_at).total_seconds() / 3600.0

    def judged_hold_tests(self) -> list[JudgedHold]:
        """The bench's hold tests, each marked withdrawn or of an earlier cylinder (oldest first)."""
        if self.journal is None or self.profile is None:
            return []
        return judged_hold_tests(self.journal, self.profile.bench.name)

    def last_hold_test(self) -> LastHold | None:
        """The bench's latest hold test in the journal (with its age now)."""
        if self.profile is None:
            return None
        return last_hold_test(self.journal, self.profile.bench.name, self.clock(), self._memo)

    def assessment(self) -> Assessment:
        """The bench now, as the command line's ``plan`` and ``checklist`` see it."""
        from benchwarden.workflows.bench import Assessment, findings_of
        from benchwarden.workflows.purges import purge_states
        assert self.plan is not None
        last = self.last_hold_test()
        assert self.profile is not None
        return Assessment(self.plan, last, findings_of(self.plan, last, self.observed, self.session_end,
                                                       self.running), purges=purge_states(self.journal, self.profile),
                          steps={s.id: self.reading_step(s.id) for s in self.profile.supplies})

    def findings(self) -> list[Finding]:
        """Every finding now: the plan's, the last hold test's and, in a session, the live ones."""
        from benchwarden.workflows.bench import findings_of
        from benchwarden.workflows.findings import ranked
        assert self.plan is not None
        return ranked(list(findings_of(self.plan, self.last_hold_test(), self.observed, self.session_end,
                                       self.running)) + self._life)

    # -- live gauges

    def start_watching(self, describe: Callable[[Finding], str]) -> bool:
        """Poll the profile's sources from now on (needs a journal and at least one source);
        ``describe`` words an alarm for its journal line."""
        from benchwarden.workflows.watch import AlarmBook, Watcher
        if self.profile is None or self.journal is None:
            return False
        if not any(s.source or s.temperature_source for s in self.profile.supplies) and not (
                self.profile.room is not None and self.profile.room.temperature_source is not None):
            return False
        self.stop_watching()
        self.watcher = Watcher(self.profile, self.journal)
        self.alarm_book = AlarmBook(self.journal, self.profile.bench.name, describe)
        return True

    def stop_watching(self) -> None:
        if self.watcher is not None:
            self.watcher.close()
        self.watcher = None

    def poll_sources(self) -> int:
        """Read the sources that are due and store their samples; hourly, compress the old (blocking)."""
        from benchwarden.workflows import session_live
        return session_live.poll_sources(self)

    def poll_lab(self, mono: float) -> LabLink | None:
        """Push to the profile's ``[lab]`` in the background when due; how the link stands, or None."""
        from benchwarden.workflows import session_live
        return session_live.poll_lab(self, mono)

    def refresh_live(self) -> None:
        """The plan from the latest samples, each idle supply's leak watch, silent gauges (blocking)."""
        from benchwarden.workflows import session_live
        session_live.refresh_live(self)

    def alarms(self, now: dt.datetime, finding_codes: set[str]) -> list[Finding]:
        """The alarms now (the rule is :func:`benchwarden.workflows.findings.alarm_findings`)."""
        from benchwarden.workflows import session_live
        return session_live.alarms_now(self, now, finding_codes)

    def new_alarms(self, alarms: list[Finding], now: dt.datetime, describe: Callable[[Finding], str]) -> list[Finding]:
        """Keep the alarms showing; those that are new get a line in the journal (ring for them)."""
        from benchwarden.workflows.watch import AlarmBook
        if self.alarm_book is None:
            self.alarm_book = AlarmBook(self.journal, self.profile.bench.name if self.profile else "", describe)
        return self.alarm_book.update(alarms, now)

    def live_trace(self, supply_id: str, since: dt.datetime, until: dt.datetime, columns: int) -> Columns | None:
        """The supply's live pressure between two times, min and max per plot column (Pa, or None)."""
        from benchwarden.workflows import session_live
        return session_live.live_trace(self, supply_id, since, until, columns)
