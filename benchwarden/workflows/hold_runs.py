"""Running a hold test on a supply of the bench, as the app does it: two readings now, a
logged series, or a deliberate test **started now and finished later** (its first reading is
stored at once, the overview reminds of it, and its result is stored like any hold test).

The method is :mod:`benchwarden.core.hold` (the same as ``benchwarden hold``); the record is
:func:`benchwarden.workflows.holds.record_of`. Interfaces parse what a person typed and pass
SI numbers here.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Any

from benchwarden.core import hold as hd
from benchwarden.core.gas import Gas
from benchwarden.errors import PA_GAUGE, InputError, JournalError, RangeError
from benchwarden.storage.holdlog import parse_log
from benchwarden.storage.journal import HoldStartRow, Journal
from benchwarden.storage.profile import Profile
from benchwarden.units.constants import ATM_PA
from benchwarden.workflows import holds

__all__ = ["HoldRun", "compute", "record", "two_readings", "from_log", "save", "OpenHold", "start_hold", "open_holds", "finish_hold",
           "GUIDANCE"]

#: How to run a hold test well (the method's own guidance).
GUIDANCE = hd.GUIDANCE
#: The longest a deliberate hold test may be planned for [s] (a week).
MAX_HOLD_S = 7 * 86400.0


@dataclass(frozen=True)
class HoldRun:
    """A computed hold test on a supply, and the logged series it came from (if any)."""

    supply_id: str | None
    result: hd.HoldResult
    kind: str
    fit: hd.LogFit | None = None
    #: the gauge the readings were taken with (None: not given)
    gauge: hd.GaugeSpec | None = None


def compute(gas: Gas, volume_m3: float, *, start_abs_pa: float | None = None, end_abs_pa: float | None = None,
            duration_s: float | None = None, t_start_k: float | None = None, t_end_k: float | None = None,
            log_text: str | None = None, log_unit: str | None = None, t_default_k: float = 293.15,
            gauge: hd.GaugeSpec | None = None, u_T: float = hd.U_T_DEFAULT, target_sccm: float | None = None,
            reserve_abs: float | None = None, ambient_pa: float = ATM_PA, supply_id: str | None = None) -> HoldRun:
    """The one computation of a hold test, for the command line and the app: a logged series
    (``log_text``, CSV in the format of ``benchwarden hold --log``), else two readings over
    ``duration_s``."""
    if log_text is not None:
        fit = hd.hold_from_log(gas, volume_m3, parse_log(log_text, log_unit, ambient_pa), gauge, t_default_k, u_T,
                               target_sccm, reserve_abs, ambient_pa)
        return HoldRun(supply_id, fit.result, "log", fit, gauge)
    if start_abs_pa is None or end_abs_pa is None or duration_s is None:
        raise InputError("a hold test needs its start and end pressures and its duration (or a logged series)")
    r = hd.hold_two_readings(gas, volume_m3, start_abs_pa, end_abs_pa, duration_s, t_start_k, t_end_k, gauge, u_T,
                             target_sccm, reserve_abs, ambient_pa)
    return HoldRun(supply_id, r, "two-readings", None, gauge)


def _on_supply(prof: Profile, supply_id: str, **given: Any) -> HoldRun:
    s = prof.supply(supply_id)
    amb = prof.ambient_pa
    return compute(s.gas, s.water_volume, gauge=holds.profile_gauge_spec(s.gauge),
                   target_sccm=holds.supply_target_sccm(s), reserve_abs=s.reserve.abs_at(amb), ambient_pa=amb,
                   supply_id=supply_id, **given)


def two_readings(prof: Profile, supply_id: str, start_abs_pa: float, end_abs_pa: float, duration_s: float,
                 t_start_k: float | None, t_end_k: float | None) -> HoldRun:
    """A hold test from two readings of the supply's gauge."""
    return _on_supply(prof, supply_id, start_abs_pa=start_abs_pa, end_abs_pa=end_abs_pa, duration_s=duration_s,
                      t_start_k=t_start_k, t_end_k=t_end_k)


def from_log(prof: Profile, supply_id: str, text: str) -> HoldRun:
    """A hold test from a logged series (CSV text, the format of ``benchwarden hold --log``)."""
    return _on_supply(prof, supply_id, log_text=text)


def record(journal: Journal, run: HoldRun, now: dt.datetime, bench: str | None, start_id: int | None = None) -> int:
    """Store a hold test (one committed write), whoever ran it; returns its row id."""
    return holds.store(journal, holds.record_of(run.result, now, bench, run.supply_id, run.kind), start_id=start_id)


def save(journal: Journal, prof: Profile, run: HoldRun, now: dt.datetime, start_id: int | None = None) -> int:
    """Store a hold test on a supply of the bench (:func:`record` under the bench's name)."""
    return record(journal, run, now, prof.bench.name, start_id)


@dataclass(frozen=True)
class OpenHold:
    """A hold test started and not finished yet."""

    id: int
    supply_id: str
    at: dt.datetime
    pressure_abs_pa: float
    pressure_text: str
    temperature_k: float
    hold_s: float

    @property
    def due_at(self) -> dt.datetime:
        return self.at + dt.timedelta(seconds=self.hold_s)

    def due(self, now: dt.datetime) -> bool:
        return now >= self.due_at


def start_hold(journal: Journal, prof: Profile, supply_id: str, pressure_abs_pa: float, pressure_text: str,
               temperature_k: float, hold_s: float, now: dt.datetime) -> int:
    """Store the first reading of a hold test to be finished after ``hold_s`` seconds."""
    s = prof.supply(supply_id)
    if not 0 < hold_s <= MAX_HOLD_S:
        raise RangeError(what="hold", value=hold_s, lo=0.0, lo_open=True, hi=MAX_HOLD_S, unit="s", why="e.g. '12 h'")
    if pressure_abs_pa <= prof.ambient_pa:
        raise RangeError(what="hold test start", value=pressure_abs_pa - prof.ambient_pa, typed=pressure_text, lo=0.0,
                         lo_open=True, unit=PA_GAUGE, why="the supply must be under pressure")
    if s.gas.sold_liquefied and s.gross is not None:
        raise InputError(f"{supply_id} is weighed, not read by pressure: a pressure hold test does not apply")
    return journal.add_hold_start(prof.bench.name, supply_id, now.isoformat(timespec="seconds"), pressure_abs_pa,
                                  pressure_text, temperature_k, prof.ambient_pa, hold_s,
                                  now.isoformat(timespec="seconds"))


def _open(row: HoldStartRow) -> OpenHold:
    return OpenHold(row.id, row.supply_id, dt.datetime.fromisoformat(row.at), row.pressure_abs_pa,
                    row.pressure_text, row.temperature_k, row.hold_s)


def open_holds(journal: Journal | None, prof: Profile) -> list[OpenHold]:
    """The hold tests started and not finished, the latest per supply; one started before the
    supply's latest cylinder change is void (a hold test never straddles a change)."""
    if journal is None:
        return []
    out = []
    try:
        for s in prof.supplies:
            rows = journal.hold_starts(prof.bench.name, s.id)
            if not rows or rows[-1].finished_by is not None:
                continue
            change = journal.latest_change(prof.bench.name, s.id)
            if change is not None and dt.datetime.fromisoformat(change.at) > dt.datetime.fromisoformat(rows[-1].at):
                continue
            out.append(_open(rows[-1]))
    except JournalError:
        return []
    return out


def finish_hold(journal: Journal, prof: Profile, start: OpenHold, end_abs_pa: float, t_end_k: float | None,
                now: dt.datetime) -> HoldRun:
    """Finish a started hold test with the end reading now; stored like any hold test."""
    duration = (now - start.at).total_seconds()
    if duration <= 0:
        raise InputError("the hold test was started in the future of this clock; nothing stored")
    run = two_readings(prof, start.supply_id, start.pressure_abs_pa, end_abs_pa, duration, start.temperature_k,
                       t_end_k if t_end_k is not None else start.temperature_k)
    save(journal, prof, run, now, start_id=start.id)
    return run
