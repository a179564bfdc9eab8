"""Hold tests as a workflow: the gauge specification, one record, storing it, reading it back.

The command line, the app and (later) automatic idle-drop tests all build the gauge
specification with :func:`gauge_spec`, turn a :class:`benchwarden.core.hold.HoldResult` into the one
:class:`HoldRecord` with :func:`record_of`, store it with :func:`store` and read the bench's
latest with :func:`last_hold_test`, so the same test stores the same record whoever ran it.
"""

from __future__ import annotations

import datetime as dt
import json
import math
from dataclasses import asdict, dataclass
from typing import TYPE_CHECKING

from benchwarden.core.uncertainty import GaugeSpec
from benchwarden.errors import PA_DIFF, InputError, JournalError, RangeError
from benchwarden.storage.journal import HoldRow, Journal
from benchwarden.workflows.kept import HOLD_KINDS, kept_bench_figure

if TYPE_CHECKING:  # the findings and the hold test's core load when first used (the app draws first)
    from benchwarden.core.hold import HoldResult
    from benchwarden.storage.profile import Gauge, Supply
    from benchwarden.workflows.findings import Finding
    from benchwarden.workflows.model import Memo

__all__ = ["gauge_spec", "profile_gauge_spec", "source_gauge_spec", "supply_target_sccm", "reading_step_pa", "HoldRecord",
           "record_of", "store", "LastHold", "last_hold_test", "hold_finding", "JudgedHold",
           "judged_hold_tests", "standing_leaks", "LEAKING"]

#: EN 837-1 accuracy classes run from 0.1 to 4; allow a little either side for other standards.
CLASS_RANGE = (0.01, 5.0)


def gauge_spec(span_pa: float, accuracy_class: float, resolution_pa: float | None = None,
               repeatability_pa: float | None = None) -> GaugeSpec:
    """The gauge of a hold test or a reading: span [Pa] (full scale), accuracy class [% of
    span, EN 837-1], optional resolution [Pa]. The one place where a gauge is checked."""
    if not math.isfinite(span_pa) or span_pa <= 0:
        raise RangeError(what="gauge range", value=span_pa, lo=0.0, lo_open=True, unit=PA_DIFF)
    lo, hi = CLASS_RANGE
    if not (math.isfinite(accuracy_class) and lo <= accuracy_class <= hi):
        raise InputError(f"gauge class {accuracy_class:g} must be between {lo:g} and {hi:g} "
                         "(EN 837-1 classes 0.1 to 4)")
    if resolution_pa is not None and not (math.isfinite(resolution_pa) and 0 < resolution_pa <= span_pa):
        raise RangeError(what="gauge resolution", value=resolution_pa, lo=0.0, lo_open=True, hi=span_pa, unit=PA_DIFF,
                         hi_name="the gauge range")
    if repeatability_pa is not None and not (math.isfinite(repeatability_pa)
                                             and 0 < repeatability_pa <= accuracy_class / 100.0 * span_pa):
        raise RangeError(what="gauge repeatability", value=repeatability_pa, lo=0.0, lo_open=True,
                         hi=accuracy_class / 100.0 * span_pa, unit=PA_DIFF, hi_name="the class error")
    return GaugeSpec(span_pa, accuracy_class, resolution_pa, repeatability_pa)


def profile_gauge_spec(gauge: Gauge | None) -> GaugeSpec | None:
    """The :class:`GaugeSpec` of a supply's gauge in a bench profile (None without one)."""
    if gauge is None:
        return None
    return gauge_spec(gauge.range.typed_pa, gauge.accuracy_class,
                      gauge.resolution.typed_pa if gauge.resolution is not None else None,
                      gauge.repeatability.typed_pa if gauge.repeatability is not None else None)


def reading_step_pa(supply: Supply, live: bool = False) -> float | None:
    """The finest pressure step a supply's reading means [Pa]: the larger of its gauge's
    resolution and its maximum permissible error (EN 837-1: class × span / 100) — of the
    transducer when the live sample is the state (``live``), else of the supply's gauge; None
    without either. Displays round to it, so no figure claims more than the gauge reads."""
    src = supply.source
    if live and src is not None and src.range is not None and src.accuracy_class is not None:
        span, cls, res = src.range.typed_pa, src.accuracy_class, src.resolution
    elif supply.gauge is not None:
        span, cls, res = supply.gauge.range.typed_pa, supply.gauge.accuracy_class, supply.gauge.resolution
    else:
        return None
    return max(float(span) * cls / 100.0, float(res.typed_pa) if res is not None else 0.0)


def source_gauge_spec(supply: Supply) -> GaugeSpec | None:
    """The gauge a supply's live samples are judged with: its transducer's (a source with range
    and accuracy class), else the supply's gauge."""
    src = supply.source
    if src is not None and src.range is not None and src.accuracy_class is not None:
        return gauge_spec(src.range.typed_pa, src.accuracy_class,
                          src.resolution.typed_pa if src.resolution is not None else None)
    return profile_gauge_spec(supply.gauge)


def supply_target_sccm(supply: Supply) -> float | None:
    """The supply's leak target [sccm] from its profile, or None for the default."""
    from benchwarden.core.hold import target_sccm

    return target_sccm(supply.gas, supply.leak_target) if supply.leak_target is not None else None


@dataclass(frozen=True)
class HoldRecord:
    """A hold test as stored in the journal (one payload for every way of running one)."""

    at: str
    bench: str | None
    supply_id: str | None
    gas: str
    volume_m3: float
    duration_s: float
    verdict: str
    leak_rate_sccm: float
    leak_rate_uncertainty_sccm: float
    start_abs_pa: float
    end_abs_pa: float
    start_temperature_k: float
    end_temperature_k: float
    target_sccm: float
    method: str
    kind: str  # "two-readings" | "log" | "idle-drop"


def record_of(result: HoldResult, at: dt.datetime, bench: str | None, supply_id: str | None,
              kind: str = "two-readings") -> HoldRecord:
    """The record of a computed hold test."""
    return HoldRecord(at.isoformat(timespec="seconds"), bench, supply_id, result.gas_name, result.volume_m3,
                      result.duration_s, result.verdict, result.leak_rate_sccm, result.leak_rate_uncertainty_sccm,
                      result.start_abs_pa, result.end_abs_pa, result.start_temperature_k, result.end_temperature_k,
                      result.target_sccm, result.method, kind)


_DETAIL_KEYS = ("start_abs_pa", "end_abs_pa", "start_temperature_k", "end_temperature_k", "target_sccm", "method",
                "kind")


def store(journal: Journal, record: HoldRecord, extra: dict[str, str] | None = None,
          start_id: int | None = None) -> int:
    """Write the record to the journal (one committed transaction); returns its row id. A test
    that finishes one started earlier names that start (``start_id``)."""
    d = asdict(record)
    details = json.dumps({k: d[k] for k in _DETAIL_KEYS} | (extra or {}), sort_keys=True)
    if start_id is not None:
        return journal.add_finished_hold_test(start_id, record.at, record.bench, record.supply_id, record.gas,
                                              record.volume_m3, record.duration_s, record.verdict,
                                              record.leak_rate_sccm, record.leak_rate_uncertainty_sccm, details,
                                              record.kind)
    return journal.add_hold_test(record.at, record.bench, record.supply_id, record.gas, record.volume_m3,
                                 record.duration_s, record.verdict, record.leak_rate_sccm,
                                 record.leak_rate_uncertainty_sccm, details, record.kind)


@dataclass(frozen=True)
class LastHold:
    """The bench's latest hold test and its age."""

    at: dt.datetime
    supply_id: str | None
    verdict: str
    leak_rate_sccm: float
    leak_rate_uncertainty_sccm: float
    age_days: float
    kind: str | None = None


@dataclass(frozen=True)
class JudgedHold:
    """A stored hold test as it counts now: ``withdrawn`` when a reading it was derived from was
    struck out (kept, never counted), ``earlier_cylinder`` when it was taken on a supply's
    cylinder before its latest change (it says nothing about the connection made since)."""

    row: HoldRow
    withdrawn: bool = False
    withdrawn_reason: str | None = None
    earlier_cylinder: bool = False

    @property
    def counts(self) -> bool:
        return not (self.withdrawn or self.earlier_cylinder)


def _derived_from(row: HoldRow) -> tuple[int, ...]:
    """Reading ids an idle-drop hold test was computed from (none for other kinds)."""
    if row.kind != "idle-drop" or not row.details:
        return ()
    try:
        key = json.loads(row.details).get("idle_drop") or ""
        return tuple(int(x) for x in str(key).split("-") if x)
    except (ValueError, AttributeError):
        return ()


def judged_hold_tests(journal: Journal, bench: str, memo: Memo | None = None) -> list[JudgedHold]:
    """Every hold test of the bench, oldest first, each judged: withdrawn (a struck reading) or
    from an earlier cylinder. The one rule every output takes (status, checklist, history).
    With a ``memo`` (the app's) the list is kept until a hold test, a strike or a cylinder change
    is recorded on the bench (:func:`benchwarden.workflows.kept.kept_bench_figure`)."""
    return list(kept_bench_figure(memo, journal, bench, "judged-hold-tests", HOLD_KINDS,
                                  lambda: _judged_hold_tests(journal, bench)))


def _judged_hold_tests(journal: Journal, bench: str) -> list[JudgedHold]:
    rows = journal.hold_tests(bench)
    struck = {rd.id: rd.struck_reason or "struck out" for rd in journal.struck_readings(bench)}
    last_change: dict[str, str] = {}
    for sid in {r.supply_id for r in rows if r.supply_id}:
        latest = journal.latest_change(bench, sid)
        if latest is not None:
            last_change[sid] = latest.at
    out: list[JudgedHold] = []
    for r in rows:
        hit = [i for i in _derived_from(r) if i in struck]
        reason = "; ".join(f"reading {i} struck out ({struck[i]})" for i in hit) or None
        change = last_change.get(r.supply_id or "")
        earlier = change is not None and dt.datetime.fromisoformat(r.at) < dt.datetime.fromisoformat(change)
        out.append(JudgedHold(r, bool(hit), reason, earlier))
    return out


def last_hold_test(journal: Journal | None, bench: str, now: dt.datetime, memo: Memo | None = None) -> LastHold | None:
    """The latest hold test filed under ``bench`` that still counts (not withdrawn, not from an
    earlier cylinder); None without a journal, such a test, or when the journal cannot be read."""
    if journal is None:
        return None
    try:
        counting = [h.row for h in judged_hold_tests(journal, bench, memo) if h.counts]
    except JournalError:
        return None
    if not counting:
        return None
    row = counting[-1]
    at = dt.datetime.fromisoformat(row.at)
    if at.tzinfo is None and now.tzinfo is not None:
        at = at.replace(tzinfo=now.tzinfo)
    age = (now - at).total_seconds() / 86400.0
    return LastHold(at, row.supply_id, row.verdict, row.leak_rate_sccm, row.leak_rate_uncertainty_sccm, age, row.kind)


#: Verdicts whose rate counts as a draw on the supply (issue: a found leak empties the cylinder).
LEAKING = ("leak", "likely-leak")


def standing_leaks(journal: Journal | None, bench: str, memo: Memo | None = None) -> dict[str, float]:
    """The leak rate [sccm] of each supply whose latest counting hold test on its current
    cylinder (two readings, an idle drop, a log or the leak watch) found a ``leak`` or a
    ``likely-leak``; the plan counts it as a draw."""
    if journal is None:
        return {}
    try:
        judged = judged_hold_tests(journal, bench, memo)
    except JournalError:
        return {}
    latest: dict[str, HoldRow] = {}
    for h in judged:
        if h.counts and h.row.supply_id:
            latest[h.row.supply_id] = h.row
    return {sid: r.leak_rate_sccm for sid, r in latest.items()
            if r.verdict in LEAKING and math.isfinite(r.leak_rate_sccm) and r.leak_rate_sccm > 0}


def hold_finding(last: LastHold | None) -> list[Finding]:
    """The finding of the bench's latest hold test (the rule lives in :mod:`findings`)."""
    from benchwarden.workflows.findings import hold_test_findings

    if last is None:
        return hold_test_findings(None)
    return hold_test_findings(last.verdict, last.leak_rate_sccm, last.leak_rate_uncertainty_sccm, last.age_days,
                              last.kind, last.supply_id)
