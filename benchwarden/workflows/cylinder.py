"""A cylinder's whole life, with the journal as the record.

The profile holds the bench's design and the first fill; the journal holds what happened
since: readings (in a session or idle), struck readings, cylinder changes and hold tests.

* :func:`journal_profile` — the profile with each supply's state from the journal: the last
  reading not struck out since the last cylinder change, else that change's fill — or the
  latest live sample of its transducer when that is newer (:func:`latest_state`).
* :func:`check_reading` — a typed reading against the supply's limits, and the questions an
  implausible one raises (a rise without a change, a drop far faster than planned, a unit that
  looks swapped), each a code with numbers for the interfaces to ask.
* :func:`record_reading`, :func:`record_change` — write them (journal first).
Idle drops are in :mod:`benchwarden.workflows.idledrops`, consumption and order-by dates in
:mod:`benchwarden.workflows.orders`.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

from benchwarden.core import gas as g
from benchwarden.errors import KELVIN, PA_GAUGE, InputError, JournalError, RangeError
from benchwarden.storage.journal import ChangeRow, Journal, ReadingRow
from benchwarden.storage.profile_view import ProfileView, SupplyView
from benchwarden.storage.samples import SampleStore
from benchwarden.units import PSI_PA, Pressure
from benchwarden.units.constants import BAR_PA
from benchwarden.units.limits import EARLIEST_RECORD, check_quantity_text, within_dates
from benchwarden.units.quantities import check_text
from benchwarden.workflows.holds import profile_gauge_spec, reading_step_pa
from benchwarden.workflows.kept import kept_figure

if TYPE_CHECKING:  # the profile's models load with the plan: the first frame needs only its view
    from benchwarden.storage.profile import Profile, Supply
    from benchwarden.workflows.model import Memo

__all__ = ["stamp", "Entry", "Question", "current_change", "readings_since_change", "last_reading", "journal_profile",
           "check_reading", "check_limits", "questions_after", "record_reading", "record_change", "parse_at",
           "latest_state", "live_is_state", "LatestSample", "Recorded", "recorded", "profile_view", "first_readings",
           "ProfileView"]

#: Temperatures a cylinder reading may carry [K] (−73 °C to 77 °C): beyond, the unit slipped.
READING_T_RANGE = (200.0, 350.0)
#: A drop this many times faster than planned asks for confirmation (benchwarden rule).
FAST_DROP_FACTOR = 5.0


def stamp(text: str) -> dt.datetime:
    """A time as the journal stores it (ISO 8601) as a datetime."""
    return dt.datetime.fromisoformat(text)


_CLOCK = re.compile(r"(\d{1,2}):(\d{2})(?::(\d{2}))?")
_DAY_WORDS = {"today": 0, "yesterday": 1}


def _clock_time(text: str) -> dt.time:
    m = _CLOCK.fullmatch(text)
    if m is None:
        raise ValueError(text)
    return dt.time(int(m[1]), int(m[2]), int(m[3] or 0))


def parse_at(text: str | None, now: dt.datetime) -> dt.datetime:
    """A time a person typed, never in the future: ``None``/``now``; ``HH:MM`` — its most recent
    past occurrence (09:25 typed at 09:30 is today, 11:25 typed at 09:30 is yesterday);
    ``yesterday 18:00`` or ``today 08:05``; a date and time, ``2026-12-01 09:30`` or ISO 8601
    (``2026-12-01T09:30+01:00``). A time within a minute ahead of the clock is taken as now's.

    >>> n = dt.datetime(2026, 12, 2, 9, 30)
    >>> parse_at("11:25", n), parse_at("yesterday 18:00", n)
    (datetime.datetime(2026, 12, 1, 11, 25), datetime.datetime(2026, 12, 1, 18, 0))
    """
    if text:
        check_quantity_text(text, "time")  # digits 0-9 only: int() would read '٠٩:٣٠' as 09:30
    t = " ".join((text or "").strip().lower().split())
    if t in ("", "now"):
        return now
    try:
        words = t.split(" ", 1)
        if words[0] in _DAY_WORDS:
            clock = _clock_time(words[1] if len(words) > 1 else "")
            day = now.date() - dt.timedelta(days=_DAY_WORDS[words[0]])
            at = dt.datetime.combine(day, clock, now.tzinfo)
        elif _CLOCK.fullmatch(t):
            at = dt.datetime.combine(now.date(), _clock_time(t), now.tzinfo)
            if at > now + dt.timedelta(minutes=1):
                at -= dt.timedelta(days=1)  # the most recent past occurrence
        else:
            at = dt.datetime.fromisoformat(" ".join((text or "").split()).upper().replace(" ", "T", 1))
            if at.tzinfo is None:
                at = at.replace(tzinfo=now.tzinfo)
            elif now.tzinfo is None:
                at = at.astimezone().replace(tzinfo=None)
    except ValueError:
        raise InputError(f"time {text!r}: write HH:MM, 'yesterday 18:00', a date and time (2026-12-01 09:30) "
                         "or 'now'") from None
    if at > now + dt.timedelta(minutes=1):
        raise InputError(f"time {text} is in the future (now is {now:%Y-%m-%d %H:%M})")
    within_dates(at, "time", EARLIEST_RECORD, None, text=text,
                 why="a paper logbook's dates are fine; 1970 or 1900 is a clock or a default, not a reading")
    return at


def current_change(journal: Journal | None, bench: str, supply_id: str) -> ChangeRow | None:
    """The latest cylinder change of the supply, or None (still the profile's first fill)."""
    if journal is None:
        return None
    return journal.latest_change(bench, supply_id)


def readings_since_change(journal: Journal | None, bench: str, supply_id: str,
                          include_struck: bool = False) -> list[ReadingRow]:
    """The supply's readings on its current cylinder (after the latest change), oldest first."""
    if journal is None:
        return []
    change = current_change(journal, bench, supply_id)
    rows = journal.supply_readings(bench, supply_id)
    if change is not None:
        rows = [r for r in rows if r.at >= change.at]
    return [r for r in rows if include_struck or not r.struck]


def last_reading(journal: Journal | None, bench: str, supply_id: str) -> ReadingRow | None:
    """The supply's latest reading on its current cylinder (pressure or weight, not struck)."""
    if journal is None:
        return None
    change = current_change(journal, bench, supply_id)
    since = change.at if change is not None else None
    rows = [r for r in (journal.latest_reading(bench, supply_id, since, k) for k in ("pressure", "weight")) if r]
    return max(rows, key=lambda r: (r.at, r.id), default=None)


def _apply(prof: Profile, s: Supply, pressure_abs: float | None, weight: float | None, T: float | None,
           text: str) -> Profile:
    from benchwarden.storage.profile import with_reading, with_weight

    T = T if T is not None else (s.reading_temperature or prof.ambient.temperature)
    if weight is not None:
        prof = with_weight(prof, s.id, weight)
        if pressure_abs is None:
            return prof.model_copy(update={"supplies": [
                x.model_copy(update={"reading_temperature": T}) if x.id == s.id else x for x in prof.supplies]})
    if pressure_abs is not None:
        prof = with_reading(prof, s.id, Pressure("absolute", pressure_abs, text), T)
    return prof


@dataclass(frozen=True)
class LatestSample:
    at: dt.datetime
    pressure_abs_pa: float
    temperature_k: float | None
    text: str


def latest_state(journal: Journal | None, prof: Profile, supply_id: str,
                 tz: dt.tzinfo | None = None) -> LatestSample | None:
    """The supply's latest good pressure sample (with the latest temperature sample of the
    supply or the room), or None."""
    return _latest_sample(journal, prof.bench.name, supply_id, tz)


def _latest_sample(journal: Journal | None, bench: str, supply_id: str,
                   tz: dt.tzinfo | None = None) -> LatestSample | None:
    if journal is None:
        return None
    store = SampleStore(journal)
    try:
        sid = store.stream(bench, supply_id, "pressure")
        got = store.latest(sid) if sid is not None else None
        if got is None:
            return None
        temp = None
        for owner in (supply_id, "room"):
            tid = store.stream(bench, owner, "temperature")
            last = store.latest(tid) if tid is not None else None
            if last is not None:
                temp = last[1]
                break
    except JournalError:
        return None
    # aware always (the computer's zone unless ``tz``): a journal's times carry their offset
    at = dt.datetime.fromtimestamp(got[0], tz) if tz is not None else dt.datetime.fromtimestamp(got[0]).astimezone()
    return LatestSample(at.replace(microsecond=0), got[1], temp, "live sample")



Latest = tuple[ChangeRow | None, ReadingRow | None, ReadingRow | None]


@dataclass(frozen=True)
class Recorded:
    """What the journal records of a supply's current cylinder: its change (fill), the latest
    pressure and weight readings since, and its latest live sample when that is newer than both
    the reading and the change (the one rule of which record is the supply's state)."""

    change: ChangeRow | None
    last_p: ReadingRow | None
    last_w: ReadingRow | None
    live: LatestSample | None


def _latest(journal: Journal, bench: str, supply_id: str) -> Latest:
    """The supply's latest cylinder change, and its latest pressure and weight readings since."""
    change = current_change(journal, bench, supply_id)
    since = change.at if change is not None else None
    return (change, journal.latest_reading(bench, supply_id, since, "pressure"),
            journal.latest_reading(bench, supply_id, since, "weight"))


def _kept_latest(memo: Memo | None, journal: Journal, bench: str, supply_id: str) -> Latest:
    """:func:`_latest`, kept in the app's ``memo`` until the record of that supply changes
    (:func:`benchwarden.workflows.kept.kept_figure`)."""
    return kept_figure(memo, journal, bench, supply_id, "latest", None, lambda: _latest(journal, bench, supply_id))


def _with_live(journal: Journal, bench: str, supply_id: str, latest: Latest) -> Recorded:
    """The supply's records with its live sample when that is newer (read each time)."""
    change, last_p, last_w = latest
    live = _latest_sample(journal, bench, supply_id)
    return Recorded(change, last_p, last_w, live if live is not None and _newer(live, last_p, change) else None)


def recorded(journal: Journal, bench: str, supply_id: str, memo: Memo | None = None) -> Recorded:
    return _with_live(journal, bench, supply_id, _kept_latest(memo, journal, bench, supply_id))


def journal_profile(prof: Profile, journal: Journal | None, memo: Memo | None = None) -> Profile:
    """The profile with every supply's state from the journal (see module docstring). With a
    ``memo`` (the app's), each supply's latest change and readings are kept until the record of
    that supply changes, and the profile they give while none did; live samples are read each
    time."""
    if journal is None:
        return prof
    bench = prof.bench.name
    latest = [_kept_latest(memo, journal, bench, s.id) for s in prof.supplies]
    where = (str(journal.path), bench, "", "journal-profile")
    hit = memo.windows.get(where) if memo is not None else None
    if hit is not None and hit[0][0] is prof and all(a is b for a, b in zip(hit[0][1], latest, strict=True)):
        out = hit[1]  # the same profile and the same kept rows: the same state
    else:
        out = prof  # each supply's change, weight and reading (each touches its own supply only)
        for s, (change, last_p, last_w) in zip(prof.supplies, latest, strict=True):
            if change is not None:
                out = _apply(out, s, change.pressure_abs_pa, change.weight_kg, change.temperature_k,
                             change.pressure_text or "")
            if last_w is not None:
                out = _apply(out, s, None, last_w.weight_kg, last_w.temperature_k, "")
            if last_p is not None:
                out = _apply(out, s, last_p.pressure_abs_pa, None, last_p.temperature_k, last_p.pressure_text)
        if memo is not None:
            memo.windows[where] = ((prof, latest), out)
    for s, lt in zip(prof.supplies, latest, strict=True):
        r = _with_live(journal, bench, s.id, lt)
        if r.live is not None and not (s.gas.sold_liquefied and s.gross is not None):
            out = _apply(out, s, r.live.pressure_abs_pa, None, r.live.temperature_k, r.live.text)
    return out


def profile_view(prof: Profile) -> ProfileView:
    """What the first frame needs of a validated profile (kept in the journal, see
    :mod:`benchwarden.storage.profile_view`)."""
    amb = prof.ambient_pa
    return ProfileView(prof.bench.name, amb, prof.display.pressure_unit, tuple(
        SupplyView(s.id, s.reading.abs_at(amb) if s.reading is not None else None, s.gross is not None,
                   s.gas.sold_liquefied, reading_step_pa(s)) for s in prof.supplies))


def first_readings(view: ProfileView, journal: Journal | None) -> dict[str, float]:
    """Each supply's pressure as the journal records it [Pa, absolute], before any property is
    computed: the first figures a screen shows while the plan is computed (the same state as
    :func:`journal_profile`). A weighed or liquefied supply is left out (its pressure needs the
    equation of state)."""
    out: dict[str, float] = {}
    for s in view.supplies:
        if s.liquefied:
            continue
        r = recorded(journal, view.bench, s.id) if journal is not None else Recorded(None, None, None, None)
        if s.weighed or r.last_w is not None or (r.change is not None and r.change.weight_kg is not None):
            continue
        found = [r.live.pressure_abs_pa if r.live is not None else None,
                 r.last_p.pressure_abs_pa if r.last_p is not None else None,
                 r.change.pressure_abs_pa if r.change is not None else None, s.reading_abs_pa]
        p = next((x for x in found if x is not None), None)  # the newest record that says a pressure
        if p is not None:
            out[s.id] = p
    return out


def _newer(live: LatestSample, last_p: ReadingRow | None, change: ChangeRow | None) -> bool:
    """Whether a live sample is newer than the latest pressure reading and cylinder change."""
    newest = max([stamp(x) for x in (last_p.at if last_p else None, change.at if change else None) if x], default=None)
    # a time recorded without an offset is the computer's local time
    at = live.at if newest is None or newest.tzinfo is not None else live.at.astimezone().replace(tzinfo=None)
    return newest is None or at > newest


def live_is_state(journal: Journal | None, prof: Profile, supply_id: str, live: LatestSample) -> bool:
    """Whether the supply's state is its live sample (see :func:`journal_profile`)."""
    if journal is None:
        return True
    change = current_change(journal, prof.bench.name, supply_id)
    last_p = journal.latest_reading(prof.bench.name, supply_id, change.at if change is not None else None)
    return _newer(live, last_p, change)


# ----------------------------------------------------------------------------- readings


@dataclass(frozen=True)
class Entry:
    """A reading or a fill a person typed, checked and converted (SI)."""

    supply_id: str
    at: dt.datetime
    temperature_k: float
    pressure_abs_pa: float | None = None
    pressure_text: str = ""
    weight_kg: float | None = None


@dataclass(frozen=True)
class Question:
    """Something implausible about an entry, to confirm before it is recorded."""

    code: str  # "rise-without-change" | "fast-drop" | "unit-swapped"
    values: dict[str, float | str] = field(default_factory=dict)


def check_reading(prof: Profile, journal: Journal | None, entry: Entry, planned_kg_s: float | None = None,
                  ) -> list[Question]:
    """Check an entry against the supply's limits (raises :class:`InputError`) and return the
    questions an implausible one raises (empty: record it)."""
    check_limits(prof, entry)
    s = prof.supply(entry.supply_id)
    if entry.pressure_abs_pa is None or journal is None:
        return []
    change = current_change(journal, prof.bench.name, s.id)
    prev = journal.latest_reading(prof.bench.name, s.id, change.at if change is not None else None,
                                  before=entry.at.isoformat(timespec="seconds"))
    if prev is None or prev.pressure_abs_pa is None:
        return []
    return questions_after(prof, Entry(s.id, stamp(prev.at), prev.temperature_k, prev.pressure_abs_pa), entry,
                           planned_kg_s, prev.at)


def check_limits(prof: Profile, entry: Entry) -> None:
    """An entry against its supply's limits: temperature, test pressure, gauge range, tare
    (raises :class:`InputError`)."""
    s = prof.supply(entry.supply_id)
    amb = prof.ambient_pa
    if not READING_T_RANGE[0] < entry.temperature_k < READING_T_RANGE[1]:
        raise RangeError(what="cylinder temperature", value=entry.temperature_k, lo=READING_T_RANGE[0],
                         hi=READING_T_RANGE[1], lo_open=True, hi_open=True, unit=KELVIN, why="check the unit")
    if entry.pressure_abs_pa is not None:
        p = entry.pressure_abs_pa
        if s.test_pressure is not None and p > s.test_pressure.abs_at(amb):
            raise RangeError(what="reading", value=p - amb, typed=entry.pressure_text, hi=s.test_pressure.abs_at(amb) - amb,
                             unit=PA_GAUGE, hi_name="the cylinder's test pressure", why="check the gauge and the unit")
        if s.gauge is not None and p > s.gauge.range.abs_at(amb) * 1.0001:
            raise RangeError(what="reading", value=p - amb, typed=entry.pressure_text,
                             hi=s.gauge.range.abs_at(amb) - amb, unit=PA_GAUGE, hi_name="the gauge range")
    if entry.weight_kg is not None:
        if s.tare is None:
            raise InputError(f"supply {s.id} has no tare weight in the profile: a weight reading needs it")
        if entry.weight_kg < s.tare:
            raise RangeError(what="weight", value=entry.weight_kg, lo=s.tare, unit="kg", lo_name=f"the tare weight of {s.id}")


def questions_after(prof: Profile, prev: Entry, entry: Entry, planned_kg_s: float | None = None,
                    prev_at: str | None = None) -> list[Question]:
    """What is implausible about a pressure entry after the previous pressure on the same
    cylinder: a rise beyond the gauge and the temperature, a unit that looks swapped, a drop far
    faster than planned (empty: record it)."""
    s = prof.supply(entry.supply_id)
    amb = prof.ambient_pa
    if entry.pressure_abs_pa is None or prev.pressure_abs_pa is None:
        return []
    out: list[Question] = []
    p0, p1 = prev.pressure_abs_pa, entry.pressure_abs_pa
    gauge = profile_gauge_spec(s.gauge)
    tol = 2.0 * gauge.u_reading_pa * math.sqrt(2.0) if gauge is not None else 0.005 * p0
    # a warmer cylinder reads higher: allow the isochoric rise of the temperature difference
    warm = 0.0
    if entry.temperature_k > prev.temperature_k:
        try:
            warm = g.pressure_from_density(s.gas, g.density(s.gas, prev.temperature_k, p0), entry.temperature_k) - p0
        except Exception:  # noqa: BLE001 - outside the equation of state: no allowance
            warm = 0.0
    if p1 > p0 + tol + warm:
        out.append(Question("rise-without-change", {"previous_abs_pa": p0, "pressure_abs_pa": p1,
                                                    "previous_at": prev_at or prev.at.isoformat()}))
    ratio = (p1 - amb) / (p0 - amb) if p0 - amb > 0 else math.nan
    if math.isfinite(ratio) and (abs(ratio - PSI_PA / BAR_PA) < 0.1 * PSI_PA / BAR_PA
                                 or abs(ratio - BAR_PA / PSI_PA) < 0.1 * BAR_PA / PSI_PA):
        out.append(Question("unit-swapped", {"previous_abs_pa": p0, "pressure_abs_pa": p1, "ratio": ratio}))
    hours = (entry.at - prev.at).total_seconds() / 3600.0
    if planned_kg_s and planned_kg_s > 0 and hours > 0 and p1 < p0 - tol:
        T = entry.temperature_k
        lost = (g.density(s.gas, T, p0) - g.density(s.gas, T, p1)) * s.water_volume
        rate = lost / (hours * 3600.0)
        if rate > FAST_DROP_FACTOR * planned_kg_s:
            out.append(Question("fast-drop", {"previous_abs_pa": p0, "pressure_abs_pa": p1, "hours": hours,
                                              "observed_kg_s": rate, "planned_kg_s": planned_kg_s}))
    return out


def record_reading(journal: Journal, prof: Profile, entry: Entry, session_id: int | None, now: dt.datetime) -> int:
    """Write a checked reading to the journal (in a session, or idle)."""
    return journal.add_reading(session_id, entry.supply_id, entry.at.isoformat(timespec="seconds"),
                               entry.pressure_abs_pa, entry.pressure_text or (
                                   f"{entry.weight_kg:g} kg" if entry.weight_kg is not None else ""),
                               entry.temperature_k, now.isoformat(timespec="seconds"), bench=prof.bench.name,
                               weight_kg=entry.weight_kg, ambient_pa=prof.ambient_pa)


def record_change(journal: Journal, prof: Profile, entry: Entry, now: dt.datetime, label: str | None = None,
                  retest_due: dt.date | None = None) -> int:
    """Write a cylinder change (fits, draws and hold tests never straddle it) and the new fill
    as the new cylinder's first reading."""
    s = prof.supply(entry.supply_id)
    if entry.weight_kg is not None and s.tare is None:
        raise InputError(f"supply {s.id} has no tare weight in the profile: a fill by weight needs it")
    label = check_text(label, "cylinder label", 60) or None if label else None
    cid = journal.add_change(prof.bench.name, entry.supply_id, entry.at.isoformat(timespec="seconds"),
                              now.isoformat(timespec="seconds"), entry.pressure_abs_pa, entry.pressure_text or None,
                              entry.weight_kg, entry.temperature_k, label,
                              retest_due.isoformat() if retest_due else None)
    running = journal.unfinished_session(prof.bench.name)
    record_reading(journal, prof, entry, running.id if running else None, now)
    return cid
