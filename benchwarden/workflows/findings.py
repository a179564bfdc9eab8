"""Findings: every rule that judges a bench, each in one place.

A finding is a code, a severity, its subject and its numbers (SI, the unit in the key name:
``hours``, ``pressure_abs_pa``, ``temperature_k`` ...). No sentence is built here: the
renderers in :mod:`benchwarden.render` turn a finding into words in the display units, so the
plan, the checklist, the app and the command line show the same finding with the same
severity.

Severities, most severe first: ``stop`` (do not start, or stop now), ``warning`` (act before
or during the session), ``attention`` (check it), ``info``.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any, Literal

from benchwarden.core import gas as g
from benchwarden.core.supply import STORAGE_LIMIT_K, Contents, HeatUp
from benchwarden.storage.profile import Profile
from benchwarden.units import T0_K
from benchwarden.workflows.findings_room import room_findings
from benchwarden.workflows.model import Observed, Plan

__all__ = [
    "SEVERITIES", "SEVERITY_RANK", "Finding", "Severity", "HOLD_TEST_MAX_AGE_DAYS", "plan_findings",
    "live_findings", "countdown_findings", "heat_findings", "hold_test_findings", "ranked", "counts", "at_or_above", "contents_findings", "mass_findings",
    "outlet_findings",
]

Severity = Literal["stop", "warning", "attention", "info"]
SEVERITIES: tuple[Severity, ...] = ("stop", "warning", "attention", "info")
SEVERITY_RANK: dict[str, int] = {s: i for i, s in enumerate(SEVERITIES)}

Value = float | int | str | bool | None

#: A hold test older than this asks for a new one (benchwarden default).
HOLD_TEST_MAX_AGE_DAYS = 7.0
#: A reserve reached before half the session is over is a stop, later a warning (benchwarden rule).
RESERVE_STOP_FRACTION = 0.5
#: A mass uncertainty (from the temperature's) above this fraction of the contents asks for
#: weighing (issue 24: 5 %).
CONTENTS_SENSITIVE_FRACTION = 0.05
#: An outlet closer than this to the line where solid forms is a warning (issue 24: 2 K).
DRY_ICE_MARGIN_K = 2.0
#: Flashover margin below which a gap needs attention, % of its firing voltage (common practice).
FLASHOVER_ATTENTION_PERCENT = 20.0


@dataclass(frozen=True)
class Finding:
    """One judgement: ``code`` names the rule, ``values`` carries its numbers (SI)."""

    code: str
    severity: Severity
    subject: str
    values: Mapping[str, Value] = field(default_factory=dict)


def at_or_above(findings: Iterable[Finding], severity: str) -> list[Finding]:
    """The findings at or above a severity (``stop`` ≥ ``warning`` ≥ ``attention`` ≥ ``info``):
    what ``--fail-on`` and the session start's STOP check look at."""
    limit = SEVERITY_RANK[severity]
    return [f for f in findings if SEVERITY_RANK[f.severity] <= limit]


def ranked(findings: Iterable[Finding]) -> list[Finding]:
    """Findings sorted most severe first (stable within a severity)."""
    return sorted(findings, key=lambda f: SEVERITY_RANK[f.severity])


def counts(findings: Iterable[Finding]) -> dict[str, int]:
    """How many findings of each severity."""
    out: dict[str, int] = dict.fromkeys(SEVERITIES, 0)
    for f in findings:
        out[f.severity] += 1
    return out


# ----------------------------------------------------------------------------- contents


def mass_findings(subject: str, gas: str, mass_kg: float, phase: str, temperature_k: float,
                  pressure_abs_pa: float, liquid_full_temperature_k: float | None = None,
                  mass_uncertainty_kg: float | None = None, mass_sensitivity_kg_per_k: float | None = None,
                  temperature_uncertainty_k: float | None = None, hot_day_k: float | None = None) -> list[Finding]:
    """The rules on a cylinder's contents, for ``contents`` and the plan alike: liquid-full now
    (a hazard: a warm liquid-full cylinder relies on its relief device), liquid-full by the hot
    day, and a mass too sensitive to the temperature to trust (weigh it)."""
    out: list[Finding] = []
    base: dict[str, Value] = {"gas": gas, "temperature_k": temperature_k, "pressure_abs_pa": pressure_abs_pa,
                              "liquid_full_temperature_k": liquid_full_temperature_k}
    if phase == "liquid-full":
        out.append(Finding("liquid-full", "warning", subject, base))
    elif (liquid_full_temperature_k is not None and hot_day_k is not None
          and temperature_k < liquid_full_temperature_k <= hot_day_k):
        out.append(Finding("liquid-full-when-warm", "attention", subject, base | {"hot_day_k": hot_day_k}))
    if (mass_uncertainty_kg is not None and mass_kg > 0
            and mass_uncertainty_kg > CONTENTS_SENSITIVE_FRACTION * mass_kg):
        out.append(Finding("contents-temperature-sensitive", "warning", subject, {
            "mass_kg": mass_kg, "mass_uncertainty_kg": mass_uncertainty_kg,
            "mass_sensitivity_kg_per_k": mass_sensitivity_kg_per_k,
            "temperature_uncertainty_k": temperature_uncertainty_k, "temperature_k": temperature_k}))
    return out


def contents_findings(c: Contents, subject: str = "the cylinder") -> list[Finding]:
    """Findings of one ``contents`` computation (:func:`mass_findings`, and an overfilled
    cylinder by weight: a stop)."""
    if c.mass_kg is None or c.pressure_abs_pa is None:
        return []
    out = mass_findings(subject, c.gas_name, c.mass_kg, c.phase, c.temperature_k, c.pressure_abs_pa,
                        c.liquid_full_temperature_k, c.mass_uncertainty_kg, c.mass_sensitivity_kg_per_k,
                        c.temperature_uncertainty_k)
    if c.overfilled:
        out.append(Finding("overfilled", "stop", subject, {
            "gas": c.gas_name, "mass_kg": c.mass_kg, "volume_m3": c.volume_m3,
            "filling_ratio_kg_l": c.filling_ratio_kg_l, "max_filling_ratio_kg_l": c.max_filling_ratio_kg_l}))
    return ranked(out)


def heat_findings(h: HeatUp, subject: str = "the cylinder") -> list[Finding]:
    """Findings of one ``heat`` computation: above the test pressure (a stop), else above the
    service pressure (a warning); a temperature above the storage limit (a warning)."""
    out: list[Finding] = []
    if h.above_storage_limit:
        out.append(Finding("heat-storage-limit", "warning", subject, {
            "temperature_k": h.temperature_to_k, "limit_k": STORAGE_LIMIT_K}))
    if h.above_test_pressure and h.test_abs_pa is not None:
        out.append(Finding("heat-above-test", "stop", subject, {
            "pressure_abs_pa": h.pressure_abs_pa, "test_abs_pa": h.test_abs_pa}))
    elif h.above_service_pressure and h.service_abs_pa is not None:
        out.append(Finding("heat-above-service", "warning", subject, {
            "pressure_abs_pa": h.pressure_abs_pa, "service_abs_pa": h.service_abs_pa}))
    return ranked(out)


def outlet_findings(subject: str, gas: str, outlet_temperature_k: float, solid: bool, liquid: bool,
                    dry_ice_margin_k: float | None, base: Mapping[str, Value] | None = None) -> list[Finding]:
    """The rules on a regulator's outlet, for ``throttle`` and the plan alike: solid (a stop),
    within :data:`DRY_ICE_MARGIN_K` of the solid line (a warning: a colder body, a higher flow or
    a gauge reading a little low puts it over), liquid, icing."""
    v: dict[str, Value] = dict(base or {}) | {"temperature_k": outlet_temperature_k, "gas": gas,
                                              "dry_ice_margin_k": dry_ice_margin_k}
    if solid:
        return [Finding("regulator-solid", "stop", subject, v)]
    out: list[Finding] = []
    if dry_ice_margin_k is not None and dry_ice_margin_k < DRY_ICE_MARGIN_K:
        out.append(Finding("regulator-near-dry-ice", "warning", subject, v))
    if liquid:
        out.append(Finding("regulator-liquid", "warning", subject, v))
    elif outlet_temperature_k < T0_K and not out:
        out.append(Finding("regulator-icing", "attention", subject, v))
    return out


# ----------------------------------------------------------------------------- plan


def plan_findings(prof: Profile, plan: Plan) -> list[Finding]:
    """Every finding of a planned bench: supplies, regulators, gaps, the room."""
    out: list[Finding] = []
    out += _supply_findings(prof, plan)
    out += _regulator_findings(prof, plan)
    out += _gap_findings(plan)
    out += room_findings(prof, plan.room, plan.draws)
    return ranked(out)


def _supply_findings(prof: Profile, plan: Plan) -> list[Finding]:
    out: list[Finding] = []
    amb = plan.ambient_pa
    for sp in plan.supplies:
        s = prof.supply(sp.id)
        if sp.liquefied:
            p_sat = g.saturation_pressure(s.gas, sp.temperature_k)
            if s.reading is not None and abs(s.reading.abs_at(amb) - p_sat) > 0.15 * p_sat:
                out.append(Finding("liquefied-reading", "attention", sp.id, {
                    "reading_abs_pa": s.reading.abs_at(amb), "vapour_pressure_abs_pa": p_sat,
                    "temperature_k": sp.temperature_k, "gas": sp.gas_name}))
            if s.gross is None or s.tare is None:
                out.append(Finding("liquefied-no-weight", "warning", sp.id,
                                   {"gas": sp.gas_name, "temperature_k": sp.temperature_k}))
        if not sp.liquefied and sp.pressure_abs_pa <= sp.reserve_abs_pa:
            out.append(Finding("at-or-below-reserve", "stop", sp.id, {
                "pressure_abs_pa": sp.pressure_abs_pa, "reserve_abs_pa": sp.reserve_abs_pa}))
        elif sp.draw_kg_s > 0 and not sp.fits_session:
            sev: Severity = "stop" if sp.hours_to_reserve < RESERVE_STOP_FRACTION * plan.session_hours else "warning"
            out.append(Finding("reserve-before-end", sev, sp.id,
                               {"hours": sp.hours_to_reserve, "session_hours": plan.session_hours}))
        elif sp.draw_kg_s > 0 and sp.hours_band[0] < plan.session_hours:
            out.append(Finding("reserve-within-gauge-error", "attention", sp.id, {
                "hours": sp.hours_to_reserve, "hours_low": sp.hours_band[0], "hours_high": sp.hours_band[1],
                "session_hours": plan.session_hours}))
        out += mass_findings(sp.id, sp.gas_name, sp.mass_kg, sp.phase, sp.temperature_k, sp.pressure_abs_pa,
                             sp.liquid_full_temperature_k, sp.mass_uncertainty_kg, sp.mass_sensitivity_kg_per_k,
                             sp.temperature_uncertainty_k, prof.ambient.hot_day)
        pairs = g.estimated_pairs(s.gas)
        if pairs:
            out.append(Finding("estimated-mixing", "info", sp.id, {
                "gas": sp.gas_name, "pairs": ", ".join(f"{a}–{b}" for a, b in pairs)}))
        if s.gauge is None and not sp.liquefied:
            out.append(Finding("no-gauge", "info", sp.id, {}))
    return out


def _regulator_findings(prof: Profile, plan: Plan) -> list[Finding]:
    out: list[Finding] = []
    amb = plan.ambient_pa
    for rp in plan.regulators:
        r = prof.regulator(rp.id)
        s = prof.supply(rp.supply_id)
        base: dict[str, Value] = {"supply": s.id}
        if not rp.regulating:
            out.append(Finding("regulator-not-regulating", "stop", r.id, base | {
                "pressure_abs_pa": rp.inlet_abs_pa, "set_point_abs_pa": rp.set_point_abs_pa}))
        if rp.inlet_abs_pa > rp.inlet_rating_abs_pa:
            out.append(Finding("inlet-rating", "stop", r.id, base | {
                "pressure_abs_pa": rp.inlet_abs_pa, "rating_abs_pa": rp.inlet_rating_abs_pa}))
        elif rp.supply_hot_day_abs_pa > rp.inlet_rating_abs_pa:
            out.append(Finding("inlet-rating-hot", "warning", r.id, base | {
                "pressure_abs_pa": rp.supply_hot_day_abs_pa, "rating_abs_pa": rp.inlet_rating_abs_pa,
                "temperature_k": prof.ambient.hot_day}))
        out += outlet_findings(r.id, s.gas.name, rp.outlet_temperature_k, rp.solid_forms, rp.liquid_forms,
                               rp.dry_ice_margin_k, base)
        if rp.outlet_at_reserve_abs_pa > r.outlet_max.abs_at(amb):
            out.append(Finding("outlet-drift-range", "attention", r.id, base | {
                "pressure_abs_pa": rp.outlet_at_reserve_abs_pa, "limit_abs_pa": r.outlet_max.abs_at(amb)}))
        if r.downstream_rating is not None:
            down = r.downstream_rating.abs_at(amb)
            if rp.outlet_at_reserve_abs_pa > down:
                out.append(Finding("outlet-drift-rating", "warning", r.id, base | {
                    "pressure_abs_pa": rp.outlet_at_reserve_abs_pa, "limit_abs_pa": down}))
            if r.relief_setting is None:
                out.append(Finding("no-relief", "attention", r.id, base | {"limit_abs_pa": down}))
            elif r.relief_setting.abs_at(amb) > down:
                out.append(Finding("relief-above-rating", "warning", r.id, base | {
                    "relief_abs_pa": r.relief_setting.abs_at(amb), "limit_abs_pa": down}))
        if r.relief_setting is not None and r.relief_setting.abs_at(amb) <= rp.set_point_abs_pa:
            out.append(Finding("relief-below-set-point", "warning", r.id, base | {
                "relief_abs_pa": r.relief_setting.abs_at(amb), "set_point_abs_pa": rp.set_point_abs_pa}))
    return out


def _gap_findings(plan: Plan) -> list[Finding]:
    out: list[Finding] = []
    for d in plan.draws:
        if d.gap is None:
            continue
        if not d.gap.within_validity:
            out.append(Finding("gap-beyond-method", "attention", d.id, {"pd_bar_cm": d.gap.pd_bar_cm_max}))
            continue
        for a, b in zip(d.gap.margins_start, d.gap.margins_reserve, strict=True):
            worst = a if a.margin_kv < b.margin_kv else b
            if worst.status == "ok":
                continue
            out.append(Finding("flashover", "stop" if worst.status == "stop" else "attention", d.id, {
                "part": worst.part, "breakdown_kv": worst.firing_kv,
                "withstand_kv": worst.withstand_kv, "margin_kv": worst.margin_kv,
                "margin_percent": worst.margin_percent, "at_reserve": worst is b}))
    return out


# ----------------------------------------------------------------------------- the cylinder's life


#: Warn this many days ahead of a retest, a service or an order-by date (benchwarden rule).
DUE_SOON_DAYS = 30.0
ORDER_SOON_DAYS = 7.0


#: Past its date: a cylinder past its periodic test must not be used or refilled (a stop); a
#: regulator past its service date is a warning.
OVERDUE_SEVERITY: dict[str, Severity] = {"retest": "stop", "service": "warning"}


def _due(what: str, subject: str, due: dt.date | None, today: dt.date) -> list[Finding]:
    """``{what}-overdue`` past the date (:data:`OVERDUE_SEVERITY`), ``{what}-due-soon``
    (attention) within :data:`DUE_SOON_DAYS`."""
    if due is None:
        return []
    days = (due - today).days
    values: dict[str, Value] = {"due": due.isoformat(), "days": float(days)}
    if days < 0:
        return [Finding(f"{what}-overdue", OVERDUE_SEVERITY[what], subject, values)]
    if days <= DUE_SOON_DAYS:
        return [Finding(f"{what}-due-soon", "attention", subject, values)]
    return []


def life_findings(prof: Profile, today: dt.date, orders: Mapping[str, tuple[dt.datetime | None, float]]) -> list[Finding]:
    """Retest and service dates (the intervals are the maker's or the local rule: the profile
    holds the due dates), and when to order the next cylinder. ``orders`` maps a supply to
    (order-by time, days of gas left)."""
    out: list[Finding] = []
    for s in prof.supplies:
        out += _due("retest", s.id, s.retest_due, today)
        at, days_left = orders.get(s.id, (None, math.inf))
        if at is not None:
            ahead = (at.date() - today).days
            if ahead <= 0:
                out.append(Finding("order-now", "warning", s.id, {"order_by": at.date().isoformat(),
                                                                   "days_of_gas": days_left}))
            elif ahead <= ORDER_SOON_DAYS:
                out.append(Finding("order-soon", "attention", s.id, {"order_by": at.date().isoformat(),
                                                                      "days_of_gas": days_left}))
    for r in prof.regulators:
        out += _due("service", r.id, r.service_due, today)
    return out


# ----------------------------------------------------------------------------- during a session


def live_findings(plan: Plan, observed: Mapping[str, Observed], session_end: dt.datetime | None) -> list[Finding]:
    """Findings during a session: a draw faster than planned beyond its uncertainty, and a
    reserve (planned or observed) that arrives before the planned end of the session."""
    out: list[Finding] = []
    for s in plan.supplies:
        ob = observed.get(s.id)
        if ob is not None and ob.faster_than_planned:
            out.append(Finding("faster-than-planned", "warning", s.id, {
                "observed_kg_s": ob.draw_kg_s, "uncertainty_kg_s": ob.draw_uncertainty_kg_s,
                "planned_kg_s": ob.planned_kg_s}))
        if session_end is None:
            continue
        at = ob.reserve_at if ob is not None and ob.reserve_at else s.reserve_at
        if at is not None and dt.datetime.fromisoformat(at) < session_end:
            out.append(Finding("reserve-before-end-live", "warning", s.id, {
                "reserve_at": at, "session_end": session_end.isoformat(timespec="minutes")}))
    return ranked(out)


def countdown_findings(hours_left: Mapping[str, float], now: dt.datetime, session_end: dt.datetime | None,
                       session_hours: float) -> list[Finding]:
    """Each supply's countdown against the time the session has left (all of ``session_hours``
    before it starts): ``countdown-short`` (stop) when its reserve comes before
    :data:`RESERVE_STOP_FRACTION` of that time, ``countdown-before-end`` (warning) before the end;
    none when the supply lasts. The overview colours its countdown bars by them."""
    left = (session_end - now).total_seconds() / 3600.0 if session_end is not None else session_hours
    out: list[Finding] = []
    for sid, h in hours_left.items():
        if h >= left:
            continue
        values = {"hours": h, "session_left_hours": left}
        if h < RESERVE_STOP_FRACTION * left:
            out.append(Finding("countdown-short", "stop", sid, values))
        else:
            out.append(Finding("countdown-before-end", "warning", sid, values))
    return out


# ----------------------------------------------------------------------------- hold tests


def hold_test_findings(verdict: str | None, rate_sccm: float = math.nan, u_sccm: float = math.nan,
                       age_days: float = math.nan, kind: str | None = None,
                       supply_id: str | None = None) -> list[Finding]:
    """The finding of the bench's last hold test (verdict None: none recorded); an automatic
    one from an idle drop between sessions that finds a leak is an ``idle-drop-leak``."""
    if verdict is None:
        return [Finding("no-hold-test", "warning", "leaks", {})]
    values: dict[str, Value] = {"verdict": verdict, "leak_rate_sccm": rate_sccm,
                                "leak_rate_uncertainty_sccm": u_sccm, "age_days": age_days,
                                "kind": kind, "supply": supply_id}
    if verdict == "leak":
        code = {"idle-drop": "idle-drop-leak", "leak-watch": "leak-watch-leak"}.get(kind or "", "hold-test-leak")
        return [Finding(code, "stop", "leaks", values)]
    if verdict == "likely-leak":
        return [Finding("hold-test-likely-leak", "warning", "leaks", values)]
    if verdict == "pressure-rose":
        return [Finding("hold-test-pressure-rose", "attention", "leaks", values)]
    if verdict == "inconclusive":
        return [Finding("hold-test-inconclusive", "attention", "leaks", values)]
    if age_days > HOLD_TEST_MAX_AGE_DAYS:
        return [Finding("hold-test-old", "attention", "leaks", values | {"max_age_days": HOLD_TEST_MAX_AGE_DAYS})]
    return [Finding("hold-test-ok", "info", "leaks", values)]


# ----------------------------------------------------------------------------- alarms

#: Findings that raise the leak alarm.
LEAK_CODES = frozenset({"hold-test-leak", "idle-drop-leak", "leak-watch-leak"})


def alarm_findings(hours_left: Mapping[str, float], drawing: Mapping[str, bool], alert_before_h: float,
                   over_time_h: float | None, finding_codes: Iterable[str], silent: Mapping[str, str],
                   live_leaks: Mapping[str, tuple[float, float]] | None = None) -> list[Finding]:
    """The alarms now — conditions that need a person (bell, banner, a line in the journal):
    a supply that draws gas and reaches its reserve within ``alert_before_h`` (or is there), the
    session over its planned time (``over_time_h`` > 0), a leak among the findings or found by
    the leak watch (``live_leaks``: rate and uncertainty [sccm] per supply), a draw faster than
    planned, and a gauge that fell silent (``silent``: why, per supply). One finding per
    condition and subject, so an interface rings once when one appears."""
    out: list[Finding] = []
    for sid, h in hours_left.items():
        if drawing.get(sid) and h <= alert_before_h:
            out.append(Finding("alarm-reserve", "warning", sid, {"hours": max(h, 0.0)}))
    if over_time_h is not None and over_time_h > 0:
        out.append(Finding("alarm-over-time", "warning", "session", {"over_hours": over_time_h}))
    codes = set(finding_codes)
    if codes & LEAK_CODES and not live_leaks:
        out.append(Finding("alarm-leak", "stop", "leaks", {"supply": None, "leak_rate_sccm": math.nan,
                                                             "leak_rate_uncertainty_sccm": math.nan}))
    for sid, (rate, u) in (live_leaks or {}).items():
        out.append(Finding("alarm-leak", "stop", sid, {"supply": sid, "leak_rate_sccm": rate,
                                                       "leak_rate_uncertainty_sccm": u}))
    if "faster-than-planned" in codes:
        out.append(Finding("alarm-fast-draw", "warning", "draws", {}))
    for sid, why in silent.items():
        out.append(Finding("alarm-gauge-silent", "warning", sid, {"why": why}))
    return ranked(out)


# ----------------------------------------------------------------------------- the lab

#: A bench whose latest snapshot is older than this is silent (a finding of its own) [s].
LAB_SILENT_AFTER_S = 86400.0


def lab_findings(benches: Iterable[Mapping[str, Any]], today: dt.date) -> list[Finding]:
    """The lab's findings: each bench's own (as its snapshot judged them, with its id), and a bench
    whose snapshot is more than a day old, or that never sent one, is silent."""
    out: list[Finding] = []
    for b in benches:
        bid = str(b["bench_id"])
        age = b.get("snapshot_age_s")
        if age is None or float(age) > LAB_SILENT_AFTER_S:
            out.append(Finding("lab-bench-silent", "warning", bid, {"bench_id": bid, "age_s": age}))
        for f in b.get("findings", []):
            sev = f.get("severity")
            if sev in SEVERITY_RANK:
                out.append(Finding(str(f["code"]), sev, str(f["subject"]),
                                   dict(f.get("values") or {}) | {"bench_id": bid}))
    return out
