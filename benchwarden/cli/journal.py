"""Journal commands: ``sessions``, ``export``."""

from __future__ import annotations

import argparse
import sys
from dataclasses import asdict
from typing import Any

from benchwarden.cli.common import add_journal, add_json, emit_json, input_error, journal_if_exists
from benchwarden.render.display import Display
from benchwarden.render.files import clean, session_csv, write_output
from benchwarden.storage.journal import default_path


def configure(sub: Any, name: str) -> None:
    if name == "sessions":
        p = sub.add_parser("sessions", help="list the sessions in the journal")
        add_journal(p)
        add_json(p)
        p.set_defaults(func=cmd_sessions)
    elif name == "export":
        p = sub.add_parser("export", help="write one session's readings out")
        p.add_argument("session", type=int, help="session number (see 'benchwarden sessions')")
        p.add_argument("--format", choices=["csv"], default="csv")
        p.add_argument("--output", metavar="FILE", help="write to FILE instead of standard output (kept if it "
                                                       "exists, unless --force)")
        p.add_argument("--force", action="store_true", help="replace an existing --output file")
        add_journal(p)
        p.set_defaults(func=cmd_export)


def cmd_sessions(args: argparse.Namespace) -> int:
    from benchwarden.render.numbers import fmt_count
    from benchwarden.workflows.record import session_records

    j = journal_if_exists(args, readonly=True)
    rows = session_records(j) if j is not None else []
    if args.json:
        emit_json({"journal": str(default_path(getattr(args, "journal", None))),
                   "sessions": [asdict(r) | {"notes": list(r.notes)} for r in rows]})
        return 0
    if not rows:
        print(f"no sessions in {default_path(getattr(args, 'journal', None))}")
        return 0
    print(f"{'#':>4}  {'started':<16}  {'stopped':<16}  {'readings':>8}  {'alarms':>6}  {'shots':>8}  operator"
          "  ·  bench")
    for r in rows:
        stop = Display.clock(r.stopped_at) if r.stopped_at else "left running"
        shots = fmt_count(r.shots) if r.shots is not None else "—"
        print(f"{r.id:>4}  {Display.clock(r.started_at):<16}  {stop:<16}  {r.readings:>8}  {r.alarms:>6}  "
              f"{shots:>8}  {clean(r.operator or '—')}  ·  {clean(r.bench)}")
        for note in r.notes:
            print(f"{'':>4}  note: {clean(note)}")
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
                           protected=(default_path(getattr(args, "journal", None)),))
        print(f"session {args.session} written to {out}")
    else:
        sys.stdout.write(text)
    return 0
