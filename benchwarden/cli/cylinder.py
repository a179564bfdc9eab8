"""Cylinder-life commands: ``reading``, ``swap``, ``status`` (a scriptable journal)."""

from __future__ import annotations

import argparse
import datetime as dt
import math
from typing import Any

from benchwarden.cli.common import (
    EXIT_INPUT,
    add_display,
    add_fail_on,
    add_journal,
    add_json,
    display,
    emit_json,
    emit_table,
    exit_for,
    input_error,
    whole_number,
)
from benchwarden.render.display import Display
from benchwarden.render.errors import error_line
from benchwarden.render.files import clean
from benchwarden.render.findings import SEVERITY_MARK, describe, finding_dict, question_text
from benchwarden.render.numbers import fmt_uncertain
from benchwarden.units import parse_mass, parse_pressure, parse_temperature
from benchwarden.units.limits import EARLIEST_RECORD, RETEST_HORIZON_YEARS, within, within_dates
from benchwarden.units.quantities import check_text
from benchwarden.workflows import computations as comp
from benchwarden.workflows import cylinder as cy
from benchwarden.workflows import cylinders
from benchwarden.workflows.bench import assess
from benchwarden.workflows.importing import MAX_IMPORT_BYTES, import_readings
from benchwarden.workflows.status import RECENT_ALARMS_S, seconds, status_document

AT_HELP = ("when it was read: now (default), 'HH:MM' (its most recent past occurrence), 'yesterday 18:00', "
           "or a date and time (2026-12-01 09:30, ISO 8601); never the future")


def configure(sub: Any, name: str) -> None:
    if name == "reading":
        p = sub.add_parser("reading", help="record a gauge reading or a weight of a supply (in or out of a session)")
        _entry_args(p, bulk=True)
        p.add_argument("--confirm", action="store_true",
                       help="record a reading that looks implausible (a rise without a change, a very fast drop, "
                            "a unit that looks swapped)")
        add_journal(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_reading)
    elif name == "swap":
        p = sub.add_parser("swap", help="record a cylinder change: the new fill of a supply")
        _entry_args(p)
        p.add_argument("--label", help="label or serial number of the new cylinder")
        p.add_argument("--retest", metavar="DATE", help="periodic-inspection (retest) due date, e.g. 2031-05-01")
        add_journal(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_swap)
    elif name == "strike":
        p = sub.add_parser("strike", help="strike a wrong reading out (kept and marked, with the reason)")
        p.add_argument("profile", help="bench profile (TOML)")
        p.add_argument("reading_id", type=whole_number, help="the reading's number (see 'status --json' or 'reading --json')")
        p.add_argument("--reason", required=True, help="why, e.g. 'typed psi for bar'")
        add_journal(p)
        p.set_defaults(func=cmd_strike)
    elif name == "status":
        p = sub.add_parser("status", help="where each supply stands: last reading, contents, time to reserve, "
                                          "latest hold test, findings")
        p.add_argument("profile", help="bench profile (TOML)")
        add_journal(p)
        add_display(p)
        add_json(p)
        add_fail_on(p)
        p.set_defaults(func=cmd_status)


def _entry_args(p: argparse.ArgumentParser, bulk: bool = False) -> None:
    p.add_argument("profile", help="bench profile (TOML)")
    p.add_argument("supply", help="supply id, as in the profile")
    what = p.add_mutually_exclusive_group(required=True)
    what.add_argument("--pressure", help="gauge reading, e.g. '146 bar' (or '147 bar(a)')")
    what.add_argument("--weight", help="gross weight on the scale (liquefied gases), e.g. '74.1 kg'")
    if bulk:
        what.add_argument("--from", dest="from_file", metavar="FILE.csv",
                          help="import many readings: a CSV with a header naming time (ISO 8601), pressure "
                               "('62 bar') or weight ('74.1 kg'), and optionally temperature ('19 degC') and note")
    p.add_argument("--temperature", help="cylinder temperature (default: the profile's ambient)")
    p.add_argument("--at", help=AT_HELP)


def _open(args: argparse.Namespace) -> comp.Journal:
    return comp.Journal(comp.default_path(getattr(args, "journal", None)))


def _entry(args: argparse.Namespace, prof: comp.Profile, now: dt.datetime) -> cy.Entry:
    if args.supply not in {s.id for s in prof.supplies}:
        raise input_error(f"unknown supply {args.supply!r}; known: {', '.join(s.id for s in prof.supplies)}")
    T = parse_temperature(args.temperature, "cylinder temperature") if args.temperature else prof.ambient.temperature
    at = cy.parse_at(args.at, now)
    if args.pressure is not None:
        p = parse_pressure(args.pressure, prof.ambient_pa)
        return cy.Entry(args.supply, at, T, pressure_abs_pa=p.abs_at(prof.ambient_pa), pressure_text=p.text)
    w = parse_mass(args.weight, "weight")
    within(w, "weight", 0.0, 1e3, "kg", lo_open=True, text=args.weight)
    return cy.Entry(args.supply, at, T, weight_kg=w)


def cmd_import(args: argparse.Namespace, prof: comp.Profile, now: dt.datetime) -> int:
    """``reading --from FILE.csv``: many readings in one transaction (all or nothing)."""
    if args.temperature or args.at:
        raise input_error("--from takes the time and temperature from the file's columns: leave out "
                          "--at and --temperature")
    text = comp.read_text_file(args.from_file, "reading file (.csv)", MAX_IMPORT_BYTES)
    d = display(args, prof.ambient_pa, prof)
    with _open(args) as j:
        a = assess(prof, j, now)
        planned = next((s.draw_kg_s for s in a.plan.supplies if s.id == args.supply), None)
        r = import_readings(j, prof, args.supply, text, now, args.confirm, planned)
    refused = [{"line": n, "reason": why if isinstance(why, str) else error_line(why, d)} for n, why in r.refused]
    if not r.refused and not args.confirm:
        refused += [{"line": n, "reason": "implausible: " + question_text(q, d) + " (record it with --confirm)"}
                    for n, q in r.questions]
    if args.json:
        emit_json({"recorded": r.recorded, "skipped": r.skipped, "refused": refused})
    else:
        print(f"{args.from_file}: {r.recorded} recorded, {r.skipped} skipped (already in the journal), "
              f"{len(refused)} refused" + (" — nothing was recorded" if refused else ""))
        for x in refused[:20]:
            print(f"  line {x['line']}: {clean(str(x['reason']))}")
        if len(refused) > 20:
            print(f"  … and {len(refused) - 20} more")
    return EXIT_INPUT if refused else 0


def cmd_reading(args: argparse.Namespace) -> int:
    prof = comp.load_profile(args.profile)
    now = dt.datetime.now().astimezone().replace(microsecond=0)
    if getattr(args, "from_file", None):
        return cmd_import(args, prof, now)
    d = display(args, prof.ambient_pa, prof)
    entry = _entry(args, prof, now)
    with _open(args) as j:
        a = assess(prof, j, now)
        planned = next((s.draw_kg_s for s in a.plan.supplies if s.id == entry.supply_id), None)
        questions = cy.check_reading(prof, j, entry, planned)
        if questions and not args.confirm:
            raise input_error("not recorded (check it; repeat with --confirm to record it anyway): "
                              + "; ".join(question_text(q, d) for q in questions))
        running = j.unfinished_session(prof.bench.name)
        rid = cy.record_reading(j, prof, entry, running.id if running else None, now)
        a = assess(prof, j, now)
    sp = next(s for s in a.plan.supplies if s.id == entry.supply_id)
    if args.json:
        emit_json({"reading_id": rid, "supply": entry.supply_id, "at": entry.at.isoformat(),
                   "session_id": running.id if running else None, "pressure_abs_pa": entry.pressure_abs_pa,
                   "weight_kg": entry.weight_kg, "temperature_k": entry.temperature_k,
                   "time_to_reserve_s": seconds(sp.hours_to_reserve),
                   "findings": [finding_dict(f, d) for f in a.findings if f.subject in (entry.supply_id, "leaks")]})
        return 0
    what = d.gauge(entry.pressure_abs_pa) if entry.pressure_abs_pa is not None else f"{entry.weight_kg:g} kg"
    print(f"recorded {entry.supply_id} {what} at {Display.clock(entry.at, now)}"
          + (f" in session #{running.id}" if running else " (idle reading)"))
    _print_findings([f for f in a.findings if f.subject in (entry.supply_id, "leaks")], d)
    return 0


def cmd_swap(args: argparse.Namespace) -> int:
    prof = comp.load_profile(args.profile)
    now = dt.datetime.now().astimezone().replace(microsecond=0)
    d = display(args, prof.ambient_pa, prof)
    entry = _entry(args, prof, now)
    retest = _retest(args.retest, now.date())
    cy.check_reading(prof, None, entry)  # limits only: a new fill may be higher
    with _open(args) as j:
        cid = cy.record_change(j, prof, entry, now, args.label, retest)
    if args.json:
        emit_json({"change_id": cid, "supply": entry.supply_id, "at": entry.at.isoformat(),
                   "pressure_abs_pa": entry.pressure_abs_pa, "weight_kg": entry.weight_kg,
                   "label": args.label, "retest_due": retest.isoformat() if retest else None,
                   "retest_overdue": retest < now.date() if retest else None})
        return 0
    what = d.gauge(entry.pressure_abs_pa) if entry.pressure_abs_pa is not None else f"{entry.weight_kg:g} kg"
    print(f"cylinder change recorded on {entry.supply_id}: new fill {what}"
          + (f", {args.label}" if args.label else "") + (f", retest due {retest}" if retest else ""))
    if retest is not None and retest < now.date():
        print(f"  RETEST OVERDUE since {retest}: do not use this cylinder until it has been inspected")
    print("  check the new connection for leaks: a hold test (benchwarden hold) or leak-detection solution "
          "on every fitting you disturbed")
    return 0


def _retest(text: str | None, today: dt.date) -> dt.date | None:
    """A retest (periodic inspection) due date: from 1990 to 15 years ahead."""
    if not text:
        return None
    try:
        retest = dt.date.fromisoformat(text.strip()) if text.strip().isascii() else None
    except ValueError:
        retest = None
    if retest is None:
        raise input_error(f"retest date {text!r}: write it as YYYY-MM-DD")
    latest = today.replace(year=today.year + RETEST_HORIZON_YEARS, day=min(today.day, 28))
    return within_dates(retest, "retest date", EARLIEST_RECORD, latest, text=text,
                        why="an inspection interval is at most 10 years")


def cmd_strike(args: argparse.Namespace) -> int:
    prof = comp.load_profile(args.profile)
    now = dt.datetime.now().astimezone().replace(microsecond=0)
    reason = check_text(args.reason, "--reason", 200)
    if not reason:
        raise input_error("--reason must say why the reading is struck out")
    with _open(args) as j:
        cylinders.strike(j, prof, args.reading_id, reason, now)
    print(f"reading {args.reading_id} struck out ({reason}); it stays in the journal, marked")
    return 0


def cmd_status(args: argparse.Namespace) -> int:
    prof = comp.load_profile(args.profile)
    now = dt.datetime.now().astimezone().replace(microsecond=0)
    d = display(args, prof.ambient_pa, prof)
    path = comp.default_path(getattr(args, "journal", None))
    j = comp.Journal(path) if path.exists() else None
    try:
        doc = status_document(prof, j, now)
    finally:
        if j is not None:
            j.close()
    a = doc.assessment
    supplies, alarms = doc.supplies, doc.alarms
    if args.json:
        emit_json({"bench": prof.bench.name, "journal": str(path), "ambient_pressure_pa": a.plan.ambient_pa,
                   "supplies": supplies, "findings": [finding_dict(f, d) for f in a.findings], "alarms": alarms,
                   "last_hold_test": doc.last_hold_test})
        return exit_for(args, a.findings)
    print(f"Status: {prof.bench.name}")
    for s in supplies:
        rows = [("gas", s["gas"]),
                ("now", "liquid (by weight)" if s["liquefied"] else d.gauge(s["pressure_abs_pa"])),
                ("from", f"{s['reading_source']}" + (f", read {s['last_reading_at'][:16].replace('T', ' ')}"
                                                    if s["last_reading_at"] else "")),
                ("contents", f"{s['mass_kg']:.3f} kg; usable {s['usable_mass_kg']:.3f} kg"),
                ("to reserve", d.hours(s["time_to_reserve_s"] / 3600 if s["time_to_reserve_s"] is not None
                                       else math.inf))]
        if s["live"] is not None:
            lv = s["live"]
            rows.append(("live gauge", f"{d.gauge(lv['pressure_abs_pa'])} at {lv['at'][11:19]}"
                         + (f"; leak watch {lv['leak_verdict']}, "
                            f"{fmt_uncertain(lv['leak_rate_sccm'], lv['leak_rate_uncertainty_sccm'], 'sccm')} "
                            f"since {lv['leak_since'][11:16]}" if lv["leak_verdict"] else "")))
        if s["leak_verdict"] and s["leak_source"] == "hold test":
            rows.append(("last hold test", f"{s['leak_verdict']}, "
                                           f"{fmt_uncertain(s['leak_rate_sccm'], s['leak_rate_uncertainty_sccm'], 'sccm')} "
                                           f"({s['hold_test_kind'] or 'manual'})"))
        if s["idle_drop_hold_needed_s"] is not None:
            rows.append(("idle readings", "too close together to resolve the target leak with this gauge: "
                                          f"a hold of about {d.hours(s['idle_drop_hold_needed_s'] / 3600)} would"))
        if s["order_by"]:
            rows.append(("order by", f"{s['order_by']} ({s['consumption_kg_per_week']:.3g} kg/week recorded)"))
        if s["cylinder_label"] or s["retest_due"]:
            rows.append(("cylinder", f"{s['cylinder_label'] or ''} retest due {s['retest_due'] or '—'}".strip()))
        emit_table(f"  {s['id']}", rows)
    _print_findings(list(a.findings), d)
    if alarms:
        print(f"Alarms in the last {RECENT_ALARMS_S / 3600:g} h")
        for al in alarms:
            print(f"  {al['at'][:16].replace('T', ' ')}  {clean(al['text'])}")
    return exit_for(args, a.findings)


def _print_findings(findings: list[Any], d: Display) -> None:
    if not findings:
        print("  no findings")
    for f in findings:
        text, figure = describe(f, d)
        print(f"  {SEVERITY_MARK[f.severity]:<12} {f.subject}: {text} [{figure}]")
