"""comp.Journal commands: ``session start|stop``, ``sessions``, ``export``."""

from __future__ import annotations

import argparse
import datetime as dt
import sys
from dataclasses import asdict
from pathlib import Path
from typing import Any

from benchwarden.cli.common import (
    EXIT_INPUT,
    add_journal,
    add_json,
    display,
    emit_json,
    input_error,
    journal_if_exists,
    one_line,
    whole_number,
)
from benchwarden.render.display import Display
from benchwarden.render.files import clean, session_csv, write_output
from benchwarden.render.findings import SEVERITY_WORD, describe
from benchwarden.workflows import computations as comp
from benchwarden.workflows.bench import assess
from benchwarden.workflows.cylinder import parse_at
from benchwarden.workflows.findings import at_or_above
from benchwarden.workflows.record import (
    SessionRecord,
    StopsStand,
    session_records,
    start_session,
    stop_session,
)


def configure(sub: Any, name: str) -> None:
    if name == "session":
        p = sub.add_parser("session", help="start or stop a session of a bench")
        acts = p.add_subparsers(dest="action", metavar="start|stop", required=True)
        a = acts.add_parser("start", help="start a session (refused while a STOP finding stands, unless accepted)")
        a.add_argument("profile", help="bench profile (TOML)")
        a.add_argument("--operator", metavar="NAME", help="who runs the session")
        a.add_argument("--at", metavar="TIME", help="when it started: 'HH:MM', an ISO date-time, or now (default)")
        a.add_argument("--accept-stop", metavar="REASON",
                       help="start although STOP findings stand: each is recorded as accepted, with this reason")
        add_journal(a)
        a.set_defaults(func=cmd_session_start)
        b = acts.add_parser("stop", help="stop the bench's running session")
        b.add_argument("profile", help="bench profile (TOML)")
        b.add_argument("--shots", metavar="N", help="shots fired in the session")
        b.add_argument("--note", metavar="TEXT", help="a note for the record")
        b.add_argument("--at", metavar="TIME", help="when it stopped: 'HH:MM', an ISO date-time, or now (default)")
        add_journal(b)
        b.set_defaults(func=cmd_session_stop)
    elif name == "sessions":
        p = sub.add_parser("sessions", help="list the sessions in the journal")
        add_journal(p)
        add_json(p)
        p.set_defaults(func=cmd_sessions)
    elif name == "export":
        p = sub.add_parser("export", help="write one session's readings out")
        p.add_argument("session", type=whole_number, help="session number (see 'benchwarden sessions')")
        p.add_argument("--format", choices=["csv"], default="csv")
        p.add_argument("--output", metavar="FILE", help="write to FILE instead of standard output (kept if it "
                                                       "exists, unless --force)")
        p.add_argument("--force", action="store_true", help="replace an existing --output file")
        add_journal(p)
        p.set_defaults(func=cmd_export)


def _now() -> dt.datetime:
    return dt.datetime.now().astimezone().replace(microsecond=0)


def cmd_session_start(args: argparse.Namespace) -> int:
    prof = comp.load_profile(args.profile)
    now = _now()
    at = parse_at(args.at, now)
    with comp.Journal(comp.default_path(getattr(args, "journal", None))) as j:
        a = assess(prof, j, now)
        d = display(args, prof.ambient_pa, prof)
        try:
            sid = start_session(j, prof, a.findings, at, lambda f: describe(f, d)[0], args.operator, args.accept_stop,
                                str(Path(args.profile).resolve()))
        except StopsStand as exc:
            sys.stderr.write(one_line(f"benchwarden: error: {exc}") + "\n")
            for f, words in zip(exc.stops, exc.words, strict=True):
                sys.stderr.write(one_line(f"  {SEVERITY_WORD['stop']}  {f.code} ({f.subject}): {words}", 400) + "\n")
            return EXIT_INPUT
    stops = at_or_above(a.findings, "stop")
    print(f"session #{sid} of {clean(prof.bench.name)} started {Display.clock(at.isoformat())}"
          + (f" by {clean(args.operator)}" if args.operator else ""))
    for f in stops:
        print(f"  accepted {SEVERITY_WORD['stop']} {f.code} ({f.subject}): {clean(args.accept_stop)}")
    return 0


def cmd_session_stop(args: argparse.Namespace) -> int:
    prof = comp.load_profile(args.profile)
    shots = None
    if args.shots is not None:
        if not args.shots.strip().isascii() or not args.shots.strip().isdigit():
            raise input_error(f"--shots {args.shots!r} must be a whole number of shots (digits only, e.g. 12000)")
        shots = int(args.shots)
    at = parse_at(args.at, _now())
    with comp.Journal(comp.default_path(getattr(args, "journal", None))) as j:
        row = stop_session(j, prof, at, shots, args.note)
    print(f"session #{row.id} stopped {Display.clock(at.isoformat())}"
          + (f", {shots} shots" if shots is not None else ""))
    return 0


def _record_json(r: SessionRecord) -> dict[str, Any]:
    return asdict(r.session) | {
        "note": "\n".join(t for _, t in r.notes) or None,
        "notes": [{"at": a, "text": t} for a, t in r.notes],
        "accepted_stops": [{"at": x.at, "operator": x.operator, "code": x.code, "subject": x.subject,
                            "text": x.text, "reason": x.reason} for x in r.accepted_stops]}


def cmd_sessions(args: argparse.Namespace) -> int:
    from benchwarden.render.numbers import fmt_count

    j = journal_if_exists(args, readonly=True)
    records = session_records(j) if j is not None else []
    if args.json:
        emit_json({"journal": str(comp.default_path(getattr(args, "journal", None))),
                   "sessions": [_record_json(r) for r in records]})
        return 0
    if not records:
        print(f"no sessions in {comp.default_path(getattr(args, 'journal', None))}")
        return 0
    print(f"{'#':>4}  {'started':<16}  {'stopped':<16}  {'readings':>8}  {'alarms':>6}  {'shots':>8}  operator"
          "  ·  bench")
    for rec in records:
        r = rec.session
        stop = Display.clock(r.stopped_at) if r.stopped_at else "left running"
        shots = fmt_count(r.shots) if r.shots is not None else "—"
        print(f"{r.id:>4}  {Display.clock(r.started_at):<16}  {stop:<16}  {r.readings:>8}  {r.alarms:>6}  "
              f"{shots:>8}  {clean(r.operator or '—')}  ·  {clean(r.bench)}")
        for _, note in rec.notes:
            print(f"{'':>4}  note: {clean(note)}")
        for a in rec.accepted_stops:
            print(f"{'':>4}  accepted {SEVERITY_WORD['stop']} {a.code} ({clean(a.subject)})"
                  + (f" by {clean(a.operator)}" if a.operator else "") + f": {clean(a.reason)}")
    return 0


def cmd_export(args: argparse.Namespace) -> int:
    j = journal_if_exists(args, readonly=True)
    if j is None:
        raise input_error("no journal yet: start a session in the app first")
    if j.session(args.session) is None:
        raise input_error(f"no session {args.session} in the journal (see 'benchwarden sessions')")
    text = session_csv(j, args.session)
    if args.output:
        out = write_output(args.output, text, force=args.force,
                           protected=(comp.default_path(getattr(args, "journal", None)),))
        print(f"session {args.session} written to {out}")
    else:
        sys.stdout.write(text)
    return 0
