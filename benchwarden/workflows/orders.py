"""Ordering: a supply's consumption from the journal and the date to order its next cylinder."""

from __future__ import annotations

import bisect
import datetime as dt
import hashlib
import json
import math
from dataclasses import astuple, dataclass

from benchwarden.core import gas as g
from benchwarden.errors import JournalError
from benchwarden.storage.journal import Journal, ReadingRow
from benchwarden.storage.profile import Profile, Supply
from benchwarden.workflows.cylinder import stamp
from benchwarden.workflows.holds import profile_gauge_spec
from benchwarden.workflows.kept import READING_KINDS, kept_figure
from benchwarden.workflows.model import Memo, memo_get

__all__ = ["Consumption", "OrderBy", "consumption", "order_by", "CONSUMPTION_READINGS"]


@dataclass(frozen=True)
class Consumption:
    """A supply's consumption from the journal: real-gas mass per week, with its spread."""

    supply_id: str
    kg_per_week: float
    spread_kg_per_week: float
    intervals: int
    days_covered: float


def _mass_of(prof: Profile, s: Supply, r: ReadingRow, memo: Memo | None = None) -> float | None:
    if r.weight_kg is not None and s.tare is not None:
        return r.weight_kg - s.tare
    if r.pressure_abs_pa is None:
        return None
    try:
        return memo_get(memo, ("rho", s.gas.key, r.temperature_k, r.pressure_abs_pa), g.density, s.gas,
                        r.temperature_k, r.pressure_abs_pa) * s.water_volume
    except Exception:  # noqa: BLE001 - outside the equation of state: the reading is skipped
        return None


#: Consumption is taken from the supply's newest readings, at most this many: the recent use is
#: what the next order depends on, and the cost of a status stays the same as the journal grows.
CONSUMPTION_READINGS = 300


#: The method's version in the key of a kept consumption: a change of method recomputes it.
_METHOD = "consumption 2"


def consumption(journal: Journal | None, prof: Profile, supply_id: str, memo: Memo | None = None) -> Consumption | None:
    """Consumption per week from the pairs of consecutive readings on the same cylinder (no
    change between them, none struck) among the newest :data:`CONSUMPTION_READINGS`: mass used
    over the time between, weighted by time; the spread is the time-weighted standard deviation
    of the interval rates. None without at least one interval.

    The result is kept in the journal with a key of everything it depends on (those readings,
    the cylinder changes among them, the supply's gas, volume and tare): a status computes it
    again only when one of them changed, never the same real-gas densities twice. With a
    ``memo`` (the app's) it is also kept in memory until a reading, strike or change of the
    supply is recorded (:func:`benchwarden.workflows.kept.kept_figure`), and each reading's
    density is kept there, so a new reading costs one density."""
    if journal is None:
        return None
    s = prof.supply(supply_id)
    inputs = (_METHOD, s.gas.key, s.water_volume, s.tare, s.gauge)
    return kept_figure(memo, journal, prof.bench.name, supply_id, "consumption", inputs,
                       lambda: _kept_consumption(journal, prof, s, memo, inputs))


@dataclass
class _Window:
    """The readings a supply's consumption was last computed from, kept in the app's memo: a new
    reading newer than all of them slides it (only the new rows are read, and only their
    intervals computed)."""

    rows: list[ReadingRow]
    changes: list[tuple[dt.datetime, str]]
    #: the bench's newest event and the journal's newest reading id when it was read
    seq: int | None
    newest_id: int
    #: each interval's result, by the ids of its two readings
    pairs: dict[tuple[int, int], tuple[float, float, float | None] | None]


def _read_window(journal: Journal, prof: Profile, s: Supply) -> _Window:
    """The supply's newest :data:`CONSUMPTION_READINGS` readings and the changes among them."""
    seq, newest = journal.last_event_seq(prof.bench.name), journal.last_reading_id()  # read first
    rows = journal.recent_readings(prof.bench.name, s.id, CONSUMPTION_READINGS)
    first = stamp(rows[0].at) if rows else None
    # the changes among the readings (read from two days before the first: times with other
    # offsets than the first reading's still sort after that in text)
    near = [] if first is None else journal.changes_from(prof.bench.name, s.id,
                                                         (first.date() - dt.timedelta(days=2)).isoformat())
    changes = sorted((stamp(c.at), c.at) for c in near)
    changes = [c for c in changes if first is not None and c[0] >= first]  # only those among the readings
    return _Window(rows, changes, seq, max([newest] + [r.id for r in rows]), {})


def _window(journal: Journal, prof: Profile, s: Supply, memo: Memo | None, inputs: object) -> _Window:
    """The window read afresh, or the kept one slid over the readings written since when no
    strike or cylinder change of the supply was recorded and each new reading is newer (time,
    id) than the window's newest: the same rows the newest-first query gives."""
    where = (str(journal.path), prof.bench.name, s.id, "consumption-window")
    kept = memo.windows.get(where) if memo is not None else None
    old = kept[1] if kept is not None and kept[0] == inputs else None
    win = None
    if old is not None and old.rows and old.seq is not None and not journal.event_supplies(
            prof.bench.name, old.seq, ("strike", "cylinder-change")) & {s.id, None}:
        seq, newest = journal.last_event_seq(prof.bench.name), journal.last_reading_id()  # read first
        new = journal.readings_after(prof.bench.name, s.id, old.newest_id)
        if all(not r.struck and (r.at, r.id) > (old.rows[-1].at, old.rows[-1].id) for r in new):
            rows = (old.rows + sorted(new, key=lambda r: (r.at, r.id)))[-CONSUMPTION_READINGS:]
            first = stamp(rows[0].at)
            win = _Window(rows, [c for c in old.changes if c[0] >= first], seq,
                          max([newest, old.newest_id] + [r.id for r in new]), old.pairs)
    if win is None:
        win = _read_window(journal, prof, s)
    if memo is not None:
        memo.windows[where] = (inputs, win)
    return win


def _value(supply_id: str, text: str) -> Consumption | None:
    value = json.loads(text)
    return None if value is None else Consumption(supply_id, *value)


def _unchanged(journal: Journal, bench: str, supply_id: str, inputs_key: str) -> tuple[bool, Consumption | None]:
    """(True, the consumption kept in the journal) when it was kept from the same inputs and no
    reading, strike or cylinder change of the supply was recorded since (its key ends with the
    bench's newest event when its readings were read): no reading is read. Else (False, None)."""
    kept = journal.derived(bench, supply_id, "consumption")
    if kept is None or kept[0].count("@") != 2:
        return False, None
    _, seq, inputs = kept[0].split("@")
    if inputs != inputs_key or journal.last_event_seq(bench) is None or journal.event_supplies(
            bench, int(seq), READING_KINDS) & {supply_id, None}:
        return False, None
    return True, _value(supply_id, kept[1])


def _kept_consumption(journal: Journal, prof: Profile, s: Supply, memo: Memo | None,
                      inputs: object) -> Consumption | None:
    """The consumption kept in the journal with its key, or computed and kept there."""
    supply_id = s.id
    inputs_key = hashlib.sha256(repr(inputs).encode()).hexdigest()[:16]
    if memo is None or (str(journal.path), prof.bench.name, s.id, "consumption-window") not in memo.windows:
        same, cons = _unchanged(journal, prof.bench.name, supply_id, inputs_key)
        if same:
            return cons
    win = _window(journal, prof, s, memo, inputs)
    rows, changes = win.rows, win.changes
    change_at = [at for _, at in changes]
    # a reading is never changed once written (a strike leaves the window, a correction is a new
    # reading), so its id stands for its time and values: the key costs no float's text
    key = hashlib.sha256(repr((_METHOD, s.gas.key, s.water_volume, s.tare, change_at, s.gauge,
                               [r.id for r in rows])).encode()).hexdigest()
    seq_key = key if win.seq is None else f"{key}@{win.seq}@{inputs_key}"
    kept = journal.derived(prof.bench.name, supply_id, "consumption")
    if kept is not None and kept[0].split("@")[0] == key:
        if kept[0] != seq_key:
            _keep(journal, prof.bench.name, supply_id, seq_key, kept[1])  # the same figure, as of now
        return _value(supply_id, kept[1])
    spec = profile_gauge_spec(s.gauge)
    if len(win.pairs) > 2 * len(rows):  # those of readings slid out of the window go now and then
        win.pairs = {}
    cons = _consumption(prof, s, rows, [t for t, _ in changes], spec.resolved_drop_pa if spec else None, memo,
                        win.pairs)
    _keep(journal, prof.bench.name, supply_id, seq_key, json.dumps(None if cons is None else list(astuple(cons))[1:]))
    return cons


def _keep(journal: Journal, bench: str, supply_id: str, key: str, value: str) -> None:
    try:
        journal.keep_derived(bench, supply_id, "consumption", key, value)
    except JournalError:
        pass  # a kept figure only saves work


def _interval(a: ReadingRow, b: ReadingRow, ma: float | None, mb: float | None,
              changes: list[dt.datetime]) -> tuple[float, float, float | None] | None:
    """Two consecutive readings' interval: (mass rate [kg/s], its length [s], the pressure drop
    [Pa], None when read by weight), or None when it does not count (no time between, a change
    between, a mass missing or risen). Only the changes after ``a`` matter."""
    ta, tb = stamp(a.at), stamp(b.at)
    k = bisect.bisect_right(changes, ta)  # the first change after ta: does it fall before tb?
    if tb <= ta or (k < len(changes) and changes[k] <= tb):
        return None
    if ma is None or mb is None or mb > ma:
        return None
    dt_s = (tb - ta).total_seconds()
    pa, pb = a.pressure_abs_pa, b.pressure_abs_pa
    by_weight = a.weight_kg is not None or b.weight_kg is not None or pa is None or pb is None
    return (ma - mb) / dt_s, dt_s, None if by_weight or pa is None or pb is None else pa - pb


def _consumption(prof: Profile, s: Supply, rows: list[ReadingRow], changes: list[dt.datetime],
                 resolved_drop_pa: float | None = None, memo: Memo | None = None,
                 pairs: dict[tuple[int, int], tuple[float, float, float | None] | None] | None = None,
                 ) -> Consumption | None:
    """The time-weighted consumption of the usable intervals; None when there is none, or when
    the pressure the gauge read falling over them all is no more than ``resolved_drop_pa`` (a
    fall the gauge cannot tell from its own error is no consumption: no order date from it).
    ``pairs``: intervals already computed (by reading ids), used and completed."""
    masses: dict[int, float | None] = {}

    def mass(r: ReadingRow) -> float | None:
        if r.id not in masses:
            masses[r.id] = _mass_of(prof, s, r, memo)
        return masses[r.id]

    rates: list[tuple[float, float]] = []  # (kg/s, seconds)
    drop_pa, by_weight = 0.0, False
    for a, b in zip(rows, rows[1:], strict=False):
        if pairs is not None and (a.id, b.id) in pairs:
            iv = pairs[(a.id, b.id)]
        else:
            iv = _interval(a, b, mass(a), mass(b), changes)
            if pairs is not None:
                pairs[(a.id, b.id)] = iv
        if iv is None:
            continue
        rates.append((iv[0], iv[1]))
        if iv[2] is None:
            by_weight = True
        else:
            drop_pa += iv[2]
    if not rates:
        return None
    if resolved_drop_pa is not None and not by_weight and drop_pa <= resolved_drop_pa:
        return None
    total = sum(w for _, w in rates)
    mean = sum(r * w for r, w in rates) / total
    var = sum(w * (r - mean) ** 2 for r, w in rates) / total
    week = 7 * 86400.0
    return Consumption(s.id, mean * week, math.sqrt(var) * week, len(rates), total / 86400.0)


@dataclass(frozen=True)
class OrderBy:
    supply_id: str
    order_by: dt.datetime | None  # None: no consumption recorded yet
    days_of_gas: float
    lead_time_days: float
    spares: int
    #: the consumption it was computed from (None: none recorded)
    consumption: Consumption | None = None


def order_by(prof: Profile, plan_usable_kg: float, cons: Consumption | None, supply_id: str,
             now: dt.datetime, full_usable_kg: float) -> OrderBy:
    """The date by which to order the next cylinder so the bench never waits: the gas left
    above the reserve plus the spares on hand, at the journal's consumption, less the
    supplier's lead time."""
    s = prof.supply(supply_id)
    lead_days = (s.lead_time or 0.0) / 86400.0
    if cons is None or cons.kg_per_week <= 0:
        return OrderBy(supply_id, None, math.inf, lead_days, s.spares, cons)
    days = (plan_usable_kg + s.spares * full_usable_kg) / (cons.kg_per_week / 7.0)
    days = min(days, 3650.0)
    return OrderBy(supply_id, now + dt.timedelta(days=days - lead_days), days, lead_days, s.spares, cons)
