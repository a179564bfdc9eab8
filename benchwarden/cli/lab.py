"""The lab: ``lab init``, ``lab push``, ``lab status``, ``lab open``, ``lab serve`` (exit 4 when the server cannot be
reached)."""

from __future__ import annotations

import argparse
import datetime as dt
import sys
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
    one_line,
    whole_number,
)
from benchwarden.errors import LabError, LabUnreachable
from benchwarden.render.files import clean
from benchwarden.render.findings import SEVERITY_MARK, describe, finding_dict, where
from benchwarden.units.constants import ATM_PA
from benchwarden.workflows import computations as comp

#: Exit status when the lab database cannot be reached.
EXIT_UNREACHABLE = 4
#: Where ``lab serve`` listens unless told otherwise (loopback only).
SERVE_HOST, SERVE_PORT = "127.0.0.1", 8760


def configure(sub: Any, name: str) -> None:
    p = sub.add_parser("lab", help="the lab database: init, push a bench's record, status of all benches")
    acts = p.add_subparsers(dest="action", metavar="init|push|status|open|serve", required=True)
    a = acts.add_parser("init", help="create or migrate the lab schema and its roles (idempotent)")
    a.add_argument("url", help="PostgreSQL URL of the lab database, as its owner (no password: PGPASSWORD, ~/.pgpass)")
    a.add_argument("--bench", action="append", default=[], metavar="BENCH_ID",
                   help="add a bench: a login role that may insert only its own rows (repeat for more)")
    a.set_defaults(func=cmd_init)
    b = acts.add_parser("push", help="send this bench's unsent events and a status snapshot to its [lab] database")
    b.add_argument("profile", help="bench profile (TOML) with a [lab] section")
    add_journal(b)
    add_json(b)
    b.set_defaults(func=cmd_push)
    c = acts.add_parser("status", help="every bench of the lab: supplies, leaks, alarms, what to order")
    c.add_argument("url", help="PostgreSQL URL of the lab database (the viewer role is enough)")
    add_display(c)
    add_json(c)
    add_fail_on(c)
    c.set_defaults(func=cmd_status)
    o = acts.add_parser("open", help="the lab screen: every bench, read-only (in this terminal)")
    o.add_argument("url", help="PostgreSQL URL of the lab database (the viewer role is enough)")
    o.set_defaults(func=cmd_open)
    w = acts.add_parser("serve", help="the lab screen as a web page, read-only, with the viewer role (no login of its "
                                      "own: put a login-protected reverse proxy in front before exposing it)")
    w.add_argument("url", help="PostgreSQL URL of the lab database as a read-only role such as benchwarden_viewer "
                               "(no password: PGPASSWORD, ~/.pgpass)")
    w.add_argument("--host", default=SERVE_HOST, help=f"address to listen on (default {SERVE_HOST}, this machine only)")
    w.add_argument("--port", type=whole_number, default=SERVE_PORT, help=f"TCP port (default {SERVE_PORT})")
    w.set_defaults(func=cmd_serve)


def _unreachable(exc: LabUnreachable) -> int:
    sys.stderr.write(one_line(f"benchwarden: {exc}") + "\n")
    return EXIT_UNREACHABLE


def cmd_init(args: argparse.Namespace) -> int:
    from benchwarden.workflows.lab import init_lab, safe_url

    try:
        done = init_lab(args.url, args.bench)
    except LabUnreachable as exc:
        return _unreachable(exc)
    except LabError as exc:
        raise input_error(str(exc)) from None
    print(f"lab database {safe_url(args.url)}: " + ("; ".join(done) if done else "already up to date"))
    if args.bench:
        print("  give each bench's role a password (ALTER ROLE ... PASSWORD) or a client certificate, and put "
              "[lab] url and bench_id in its profile")
    return 0


def cmd_push(args: argparse.Namespace) -> int:
    from benchwarden.workflows.lab import push

    prof = comp.load_profile(args.profile)
    text = comp.read_profile_text(args.profile)
    now = dt.datetime.now().astimezone().replace(microsecond=0)
    try:
        with comp.Journal(comp.default_path(getattr(args, "journal", None))) as j:
            r = push(prof, j, text, now)
    except LabUnreachable as exc:
        return _unreachable(exc)
    except LabError as exc:
        raise input_error(str(exc)) from None
    if args.json:
        emit_json({"events_sent": r.events_sent, "snapshot_sent": r.snapshot_sent, "bench_id": r.bench_id,
                   "events_already_there": r.events_already_there, "profile_sent": r.profile_sent,
                   "last_seq": r.last_seq})
    else:
        print(f"bench {r.bench_id}: {r.events_sent} event(s) sent"
              + (f", {r.events_already_there} already there" if r.events_already_there else "")
              + "; status snapshot sent" + (" with the profile" if r.profile_sent else ""))
    return 0


def cmd_status(args: argparse.Namespace) -> int:
    from benchwarden.workflows.lab import lab_view

    try:
        v = lab_view(args.url, dt.date.today())
    except LabUnreachable as exc:
        return _unreachable(exc)
    except LabError as exc:
        raise input_error(str(exc)) from None
    d = display(args, ATM_PA)
    if args.json:
        emit_json({"benches": [{k: b[k] for k in ("bench_id", "bench", "snapshot_at", "snapshot_age_s", "supplies",
                                                   "alarms")} for b in v.benches],
                   "orders": v.orders, "findings": [finding_dict(f, d) | {"bench_id": f.values.get("bench_id")}
                                                    for f in v.findings]})
        return exit_for(args, v.findings)
    print(f"Lab: {len(v.benches)} bench(es)")
    for b in v.benches:
        rows = [(str(s["id"]), f"{s['gas']}, {d.gauge(s['pressure_gauge_pa'] + d.ambient_pa)}"
                 + (f", to reserve {d.hours(s['time_to_reserve_s'] / 3600)}" if s["time_to_reserve_s"] else "")
                 + (f", order by {s['order_by']}" if s["order_by"] else "")
                 + (f", leak {s['leak_verdict']}" if s["leak_verdict"] else ""))
                for s in b["supplies"] if s["pressure_gauge_pa"] is not None]
        age = b["snapshot_age_s"]
        emit_table(f"  {clean(b['bench_id'])}" + (f" ({clean(str(b['bench']))})" if b["bench"] else "")
                   + (f" — snapshot {d.ago(age / 86400.0)}" if age is not None else " — never sent"), rows)
    if v.orders:
        print("To order")
        for o in v.orders:
            print(f"  {o['gas']}: {o['cylinders']} cylinder(s) by {o['by']} ({', '.join(o['supplies'])})")
    for f in v.findings:
        text, figure = describe(f, d)
        print(f"  {SEVERITY_MARK[f.severity]:<12} {clean(where(f))}: {clean(text)} [{figure}]")
    return exit_for(args, v.findings)


def cmd_open(args: argparse.Namespace) -> int:
    from benchwarden.tui.lab import make_lab_app

    make_lab_app(args.url).run()
    return 0


def cmd_serve(args: argparse.Namespace) -> int:
    from benchwarden.workflows.lab_serve import check_viewer

    if not (1 <= args.port <= 65535):
        raise input_error(f"--port {args.port}: a TCP port between 1 and 65535")
    try:
        role = check_viewer(args.url)
    except LabUnreachable as exc:
        return _unreachable(exc)
    except LabError as exc:
        raise input_error(str(exc)) from None
    from benchwarden.tui.lab_serve import LabServer

    where = f"[{args.host}]" if ":" in args.host else args.host

    def announce() -> None:
        print(f"lab view of {clean(args.url)} (role {clean(role)}) at http://{where}:{args.port}/ — it has no login of "
              "its own: anyone who can reach that address sees the lab; Ctrl-C stops it", flush=True)

    try:
        LabServer(args.url, args.host, args.port, announce).serve()
    except OSError as exc:
        why = exc.strerror or str(exc) or "the address is in use or not allowed"
        raise input_error(f"cannot serve on --host {args.host} --port {args.port}: {why}") from None
    return 0


__all__ = ["configure", "EXIT_UNREACHABLE", "EXIT_INPUT", "SERVE_HOST", "SERVE_PORT"]
