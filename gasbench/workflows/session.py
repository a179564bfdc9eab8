"""A running session: the profile, its plan, the readings typed so far and the journal.

This is the app's model (no widgets, no formulas): it parses what a person typed with the same
parser as the command line, stores each reading in the journal the moment it is accepted, and
asks the core for the plan, the observed draw and the live findings.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from gasbench.errors import InputError, JournalError
from gasbench.journal import Journal
from gasbench.profile import Profile, load_profile, with_reading
from gasbench.units import parse_pressure, parse_temperature
from gasbench.workflows import build as pl
from gasbench.workflows.bench import Assessment, findings_of, journal_state
from gasbench.workflows.findings import Finding
from gasbench.workflows.holds import LastHold, last_hold_test, profile_gauge_spec
from gasbench.workflows.model import Observed, Plan


def now_local() -> dt.datetime:
    return dt.datetime.now().astimezone().replace(microsecond=0)


@dataclass
class Reading:
    supply_id: str
    at: dt.datetime
    pressure_abs_pa: float
    pressure_text: str
    temperature_k: float
    saved: bool = True


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

    # -- profile and plan

    def load(self) -> None:
        """Load the profile and compute the plan (blocking: CoolProp; call from a worker)."""
        self.profile = load_profile(self.profile_path)
        self.recompute()

    def reload(self) -> None:
        """Reload the edited profile; on error the old one stays in use and the error is raised."""
        new = load_profile(self.profile_path)
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
        assert self.profile is not None
        prof = journal_state(self.profile, self.journal, self.clock())
        for r in sorted(self.unsaved, key=lambda r: r.at):
            prof = with_reading(prof, r.supply_id, parse_pressure(f"{r.pressure_abs_pa} Pa(a)"), r.temperature_k)
        return prof

    def recompute(self) -> None:
        now = self.clock()
        latest = max((r.at for rs in self.readings.values() for r in rs), default=None)
        self.plan_at = latest or now
        self.plan = pl.build_plan(self.effective_profile(), now=self.plan_at, start_at=self.plan_at)
        self._observe()

    def _observe(self) -> None:
        assert self.profile is not None and self.plan is not None
        self.observed = {}
        for s in self.profile.supplies:
            rs = sorted(self.readings.get(s.id, []), key=lambda r: r.at)
            sp = next(x for x in self.plan.supplies if x.id == s.id)
            if len(rs) < 2 or sp.liquefied:
                continue
            gauge = profile_gauge_spec(s.gauge)
            u_p = gauge.u_reading_pa if gauge is not None else 0.0
            ob = pl.observed_draw(s.gas, s.water_volume, sp.reserve_abs_pa, sp.draw_kg_s,
                                  [(r.at, r.pressure_abs_pa, r.temperature_k) for r in rs], u_p, s.id)
            if ob is not None:
                self.observed[s.id] = ob

    # -- session

    @property
    def running(self) -> bool:
        return self.session_id is not None

    @property
    def session_end(self) -> dt.datetime | None:
        if self.started_at is None or self.profile is None:
            return None
        return self.started_at + dt.timedelta(seconds=self.profile.session.duration)

    def start(self) -> int:
        assert self.profile is not None
        self.started_at = self.clock()
        self.readings = {}
        self.observed = {}
        if self.journal is not None:
            self.session_id = self.journal.start_session(self.profile.bench.name, str(self.profile_path),
                                                         self.started_at.isoformat(timespec="seconds"))
        else:
            self.session_id = 0
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
                Reading(r.supply_id, dt.datetime.fromisoformat(r.at), r.pressure_abs_pa, r.pressure_text, r.temperature_k))

    def parse_reading(self, supply_id: str, pressure: str, temperature: str, when: str) -> Reading:
        """Check a typed reading (same parser as the command line). Raises InputError, changes nothing."""
        assert self.profile is not None
        ids = {s.id: s for s in self.profile.supplies}
        if supply_id not in ids:
            raise InputError(f"choose a supply ({', '.join(ids)})")
        amb = self.profile.ambient_pa
        p = parse_pressure(pressure, amb)
        s = ids[supply_id]
        p_abs = p.abs_at(amb)
        if s.test_pressure is not None and p_abs > s.test_pressure.abs_at(amb):
            raise InputError(f"{pressure} is above the cylinder's test pressure {s.test_pressure.text}: check the gauge and unit")
        if s.gauge is not None and p_abs > s.gauge.range.abs_at(amb) * 1.0001:
            raise InputError(f"{pressure} is above the gauge range {s.gauge.range.text}")
        T = parse_temperature(temperature)
        if not 200.0 < T < 350.0:
            raise InputError(f"temperature {temperature} is outside −73 °C to 77 °C; check the unit")
        at = self.parse_time(when)
        return Reading(supply_id, at, p_abs, p.text, T)

    def parse_time(self, text: str) -> dt.datetime:
        now = self.clock()
        t = text.strip().lower()
        if t in ("", "now"):
            return now
        try:
            if len(t) <= 8 and ":" in t:
                parts = [int(x) for x in t.split(":")]
                hh, mm, ss = (parts + [0, 0])[:3]
                at = now.replace(hour=hh, minute=mm, second=ss)
            else:
                at = dt.datetime.fromisoformat(text.strip())
                if at.tzinfo is None:
                    at = at.replace(tzinfo=now.tzinfo)
        except ValueError:
            raise InputError(f"time {text!r}: use HH:MM, HH:MM:SS, an ISO date-time, or leave it for now") from None
        if at > now + dt.timedelta(minutes=1):
            raise InputError(f"time {text} is in the future")
        if self.started_at is not None and at < self.started_at - dt.timedelta(hours=24):
            raise InputError(f"time {text} is more than a day before the session started")
        return at

    def add_reading(self, reading: Reading) -> Reading:
        """Record a checked reading: journal first (committed), then memory. If the journal write
        fails the reading is kept in memory, marked unsaved, and the JournalError is raised."""
        if not self.running:
            raise InputError("start a session before entering readings")
        assert self.session_id is not None
        self.readings.setdefault(reading.supply_id, []).append(reading)
        if self.journal is not None:
            try:
                self.journal.add_reading(self.session_id, reading.supply_id, reading.at.isoformat(timespec="seconds"),
                                         reading.pressure_abs_pa, reading.pressure_text, reading.temperature_k,
                                         self.clock().isoformat(timespec="seconds"),
                                         bench=self.profile.bench.name if self.profile else None,
                                         ambient_pa=self.profile.ambient_pa if self.profile else None)
            except JournalError:
                reading.saved = False
                self.unsaved.append(reading)
                raise
        return reading

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

    def last_hold_test(self) -> LastHold | None:
        """The bench's latest hold test in the journal (with its age now)."""
        if self.profile is None:
            return None
        return last_hold_test(self.journal, self.profile.bench.name, self.clock())

    def assessment(self) -> Assessment:
        """The bench now, as the command line's ``plan`` and ``checklist`` see it."""
        assert self.plan is not None
        last = self.last_hold_test()
        return Assessment(self.plan, last, findings_of(self.plan, last, self.observed, self.session_end,
                                                       self.running))

    def findings(self) -> list[Finding]:
        """Every finding now: the plan's, the last hold test's and, in a session, the live ones."""
        assert self.plan is not None
        return list(findings_of(self.plan, self.last_hold_test(), self.observed, self.session_end, self.running))
