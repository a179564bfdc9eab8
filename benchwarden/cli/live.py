"""Live commands: ``watch`` (read a profile's live gauges without the screen) and ``simulate``
(a simulated cylinder on Modbus/TCP, for trying without hardware)."""

from __future__ import annotations

import argparse
import asyncio
from typing import Any

from benchwarden.cli.common import (
    add_display,
    add_gas,
    add_journal,
    computation,
    input_error,
    number,
    whole_number,
)
from benchwarden.units import (
    parse_duration,
    parse_flow,
    parse_temperature,
    parse_volume,
    pressure_abs,
)
from benchwarden.units.limits import MIN_FLOW, in_range, within
from benchwarden.workflows import computations as comp

REGISTER_MAP = """\
register map (127.0.0.1 only), the same values
  in holding registers (function 3) and in input registers (function 4),
  register numbers 0-based as sent on the wire (the "40001" or "30001" of a manual is 0):
  0-1  cylinder pressure, bar(g), float32 (big-endian words, byte order ABCD)
  2-3  gas temperature, degC, float32
Every unit id is answered, or only --unit N (0-255): others get no answer, as on a bus.
The cylinder loses gas by the real-gas mass balance at --leak + --draw; --speed N runs its clock
N times faster (a night's hold test in a minute)."""


def configure(sub: Any, name: str) -> None:
    if name == "samples":
        s = sub.add_parser("samples", help="write a supply's stored live samples out: raw samples with their status "
                                           "and reason, and for compressed hours the trace points and each hour's "
                                           "minimum and maximum",
                           epilog="Columns: time (ISO 8601, UTC), stream (pressure, temperature), kind (raw, trace, "
                                  "min, max), value_si, unit (Pa(a) or K), status (good, bad, implausible), reason. "
                                  "docs/journal-schema.md describes the journal's tables.")
        s.add_argument("profile", help="bench profile (TOML)")
        s.add_argument("supply", help="supply id, e.g. n2-A")
        s.add_argument("--from", dest="from", metavar="TIME", help="first time, ISO 8601 (default: the first sample)")
        s.add_argument("--to", dest="to", metavar="TIME", help="last time, ISO 8601 (default: the last sample)")
        s.add_argument("--format", choices=["csv", "jsonl"], default="csv", help="csv (default) or jsonl")
        s.add_argument("--output", metavar="FILE", help="write to FILE instead of standard output (never over an "
                                                       "existing file)")
        add_journal(s)
        s.set_defaults(func=cmd_samples)
        return
    if name == "watch":
        w = sub.add_parser("watch", help="read the live gauges of a bench profile: samples into the journal, "
                                         "leak watch, alarms on stderr")
        w.add_argument("profile", help="bench profile (TOML) with [supplies.source] sections")
        w.add_argument("--for", dest="duration", help="stop after this long, e.g. '8 h' (default: Ctrl-C)")
        w.add_argument("--every", default="10 s", help="print a line per supply this often (default 10 s)")
        add_journal(w)
        add_display(w)
        w.set_defaults(func=cmd_watch)
        return
    p = sub.add_parser("simulate", help="serve a simulated cylinder as a Modbus/TCP pressure transducer",
                       formatter_class=argparse.RawDescriptionHelpFormatter, epilog=REGISTER_MAP)
    add_gas(p)
    p.add_argument("--port", type=whole_number, default=5020, help="TCP port on 127.0.0.1 (default 5020)")
    p.add_argument("--unit", type=whole_number, help="answer only this Modbus unit id, 0-255 (default: every unit id)")
    p.add_argument("--volume", required=True, help="water volume, e.g. '50 L'")
    p.add_argument("--pressure", required=True, help="starting pressure, e.g. '150 bar'")
    p.add_argument("--temperature", default="20 degC", help="gas temperature (default 20 degC)")
    p.add_argument("--leak", default="0 sccm", help="a leak, e.g. '40 sccm'")
    p.add_argument("--draw", default="0 slpm", help="a draw, e.g. '2 slpm'")
    p.add_argument("--speed", type=number, default=1.0, help="clock speed-up (default 1)")
    p.add_argument("--for", dest="duration", help="stop after this long, e.g. '10 min' (default: Ctrl-C)")
    p.set_defaults(func=cmd_simulate)


def _for(text: str | None) -> float | None:
    """``--for``: a duration above zero and at most a year (None: until Ctrl-C)."""
    if not text:
        return None
    return in_range("run duration", parse_duration(text, "--for"), "--for", text)


def cmd_simulate(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    if not (1 <= args.port <= 65535):
        raise input_error(f"--port {args.port}: a TCP port between 1 and 65535")
    if args.unit is not None and not 0 <= args.unit <= 255:
        raise input_error(f"--unit {args.unit}: a Modbus unit id from 0 to 255")
    if not (0 < args.speed <= 1e6):
        raise input_error(f"--speed {args.speed!r}: above 0 and at most 1e6")
    T = parse_temperature(args.temperature)
    flows = [(parse_flow(x, what=w), w, x) for x, w in ((args.leak, "leak"), (args.draw, "draw"))]
    for f, w, x in flows:
        if f.value != 0:
            within(f.value, w, MIN_FLOW, None, "", text=x, words="0, or at least 0.001 sccm")
    loss = sum(comp.mass_flow(g_, f) for f, _, _ in flows)
    V = in_range("cylinder volume", parse_volume(args.volume, "cylinder volume"), text=args.volume)
    cyl = comp.Cylinder(g_, V, pressure_abs(args.pressure, amb), T, loss, args.speed, amb)
    duration = _for(args.duration)
    who = "every unit id" if args.unit is None else f"unit {args.unit}"
    print(f"simulated {g_.name} cylinder on 127.0.0.1:{args.port} ({who}): {d.gauge(cyl.pressure_abs_pa)}, "
          f"losing {loss * 6e4:.3g} g/min, clock ×{args.speed:g}" + (f" for {d.hours(duration / 3600)}"
                                                                     if duration else "; Ctrl-C stops it"),
          flush=True)
    try:
        asyncio.run(comp.serve(cyl, args.port, duration_s=duration, unit=args.unit))
    except (OSError, RuntimeError) as exc:
        why = getattr(exc, "strerror", None) or "the port is in use or not allowed"
        raise input_error(f"cannot serve on 127.0.0.1:{args.port}: {why}") from None
    except KeyboardInterrupt:
        pass
    return 0


def cmd_samples(args: argparse.Namespace) -> int:
    """Every stored sample of a supply's streams in the span, as CSV or JSON Lines."""
    import sys

    from benchwarden.render.files import write_output
    from benchwarden.render.samples import samples_csv, samples_jsonl
    from benchwarden.workflows.sample_export import supply_samples

    journal = getattr(args, "journal", None)
    rows = supply_samples(args.profile, args.supply, journal, getattr(args, "from"), args.to)
    text = (samples_jsonl if args.format == "jsonl" else samples_csv)(rows)
    if args.output:
        out = write_output(args.output, text, protected=(args.profile, journal))
        print(f"{len(rows)} row(s) written to {out}")
    else:
        sys.stdout.write(text)
    return 0


def cmd_watch(args: argparse.Namespace) -> int:
    """Poll the profile's sources until --for passes or Ctrl-C; a line per supply every --every,
    alarms on stderr (with the bell), every sample and alarm into the journal. Exit 0 at the end."""
    import signal
    import sys
    import time
    from pathlib import Path

    from benchwarden.cli.common import display
    from benchwarden.render.display import live_text
    from benchwarden.render.findings import describe
    from benchwarden.workflows.lab import Shipper
    from benchwarden.workflows.session import SessionState

    prof = comp.load_profile(args.profile)
    if not any(s.source for s in prof.supplies):
        raise input_error(f"profile {args.profile} has no [supplies.source]: nothing to watch (see the README's "
                          "two-terminal demo)")
    every = parse_duration(args.every, "--every")
    if not 0.1 <= every <= 86400:
        raise input_error(f"--every {args.every!r}: between 0.1 s and 1 d")
    duration = _for(args.duration)
    d = display(args, prof.ambient_pa, prof)
    journal = comp.Journal(comp.default_path(getattr(args, "journal", None)))
    state = SessionState(Path(args.profile), journal)
    shipper = (Shipper(prof, journal, Path(args.profile).read_text(encoding="utf-8"), state.clock)
               if prof.lab is not None else None)
    stop = {"now": False}

    def _term(signum: int, frame: object) -> None:
        stop["now"] = True

    old = signal.signal(signal.SIGTERM, _term)
    try:
        state.load()
        left = journal.unfinished_session(prof.bench.name)
        if left is not None:
            state.resume(left.id)
        state.start_watching(lambda f: describe(f, d)[0])
        assert state.watcher is not None
        print(f"watching {len(state.watcher.feeds)} gauge(s) of {prof.bench.name} into {journal.path}"
              + (f" for {duration:g} s" if duration else "; Ctrl-C stops"), flush=True)
        start = time.monotonic()
        end = start + duration if duration is not None else float("inf")
        next_line = start + min(every, 1.0)
        while not stop["now"] and time.monotonic() < end:
            state.poll_sources()
            mono = time.monotonic()
            if shipper is not None:
                shipper.poll(mono)
            if mono >= next_line:
                next_line = mono + every
                _report(state, d, describe, live_text, sys.stderr)
                if shipper is not None:
                    _lab_line(shipper)
            pause = min(state.watcher.next_due(), next_line - time.monotonic(), end - time.monotonic())
            time.sleep(min(max(pause, 0.02), 1.0))
    except KeyboardInterrupt:
        pass
    finally:
        signal.signal(signal.SIGTERM, old)
        stored = sum(f.stored for f in state.watcher.feeds) if state.watcher is not None else 0
        state.stop_watching()
        if shipper is not None:
            shipper.join()
        journal.close()
    print(f"stopped: {stored} sample(s) stored", flush=True)
    return 0


def _lab_line(shipper: Any) -> None:
    """When the lab last received this bench's record (and why not, when it is away)."""
    import time

    from benchwarden.render.display import lab_link_text

    print("  " + lab_link_text(shipper.link(time.monotonic()), shipper.clock()), flush=True)


def _report(state: Any, d: Any, describe: Any, live_text: Any, err: Any) -> None:
    """A line per supply on stdout; new alarms on stderr with the bell."""
    state.refresh_live()
    now = state.clock()
    alarms = state.alarms(now, {f.code for f in state.findings()})
    for a in state.new_alarms(alarms, now, lambda f: describe(f, d)[0]):
        err.write(f"\a{now:%H:%M:%S} ALARM {a.subject}: {describe(a, d)[0]}\n")
        err.flush()
    for s in state.plan.supplies:
        lv = state.live.get(s.id)
        if lv is None:
            continue
        print(f"{now:%H:%M:%S}  {s.id:<8} {live_text(lv, d, now.date())}; "
              f"to reserve {d.hours(state.hours_left(s.id, now))}",
              flush=True)
