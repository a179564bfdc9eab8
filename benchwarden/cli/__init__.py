"""Command line: ``benchwarden`` (the app) and one sub-command per computation.

The parser is a table of sub-commands (:data:`COMMANDS`); a command's module is imported only
when that command is chosen, so ``benchwarden --help`` imports no physics, CoolProp or Textual.
Each module parses its options, calls the application layer and renders the result. Errors a
person can fix print one line on stderr and exit with status 2.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence

from benchwarden.cli.common import EXIT_INPUT, Parser, error_text, forget_display, one_line

#: name → (module under benchwarden.cli, one-line help)
COMMANDS: dict[str, tuple[str, str]] = {
    "contents": ("supply", "mass and free-gas volume in a cylinder (real gas)"),
    "heat": ("supply", "pressure of a closed cylinder at another temperature"),
    "runtime": ("supply", "hours until the reserve at given draws"),
    "plan": ("plan", "session plan of a bench profile: run time, regulators, gaps, findings"),
    "throttle": ("plan", "regulator outlet temperature (isenthalpic expansion)"),
    "gap": ("plan", "estimated self-breakdown (firing) voltage of a spark gap"),
    "orifice": ("plan", "flow through a bleed orifice or needle valve bore"),
    "hold": ("hold", "leak rate from an idle pressure drop (hold test)"),
    "room": ("room", "room oxygen after a release or during a leak"),
    "purge": ("purge", "pressure-cycle purge and flush of a line or channel after a cylinder change"),
    "checklist": ("checklist", "pre-session checklist filled with this bench's figures"),
    "session": ("journal", "start or stop a session of a bench (start refuses while a STOP stands, unless accepted)"),
    "sessions": ("journal", "list the sessions in the journal"),
    "export": ("journal", "write one session's readings out"),
    "reading": ("cylinder", "record a gauge reading or a weight of a supply (in or out of a session)"),
    "swap": ("cylinder", "record a cylinder change: the new fill of a supply"),
    "strike": ("cylinder", "strike a wrong reading out (kept and marked, with the reason)"),
    "status": ("cylinder", "where each supply stands: last reading, time to reserve, latest hold test, findings"),
    "watch": ("live", "read a profile's live gauges: samples into the journal, leak watch, alarms"),
    "simulate": ("live", "serve a simulated cylinder as a Modbus/TCP pressure transducer"),
    "samples": ("live", "write a supply's stored live samples out (CSV or JSON Lines), with status and reason"),
    "lab": ("lab", "the lab database: init, push a bench's record, status of all benches"),
    "open": ("", "open the app on a bench profile"),
}


def _chosen(argv: Sequence[str]) -> str | None:
    """The sub-command named in argv (skipping the top-level options and their values)."""
    skip = False
    for tok in argv:
        if skip:
            skip = False
            continue
        if tok == "--journal":
            skip = True
            continue
        if tok.startswith("-"):
            continue
        return tok if tok in COMMANDS else None
    return None


def build_parser(argv: Sequence[str] | None = None) -> argparse.ArgumentParser:
    """The parser, with the chosen command's options loaded (others listed by name only)."""
    ap = Parser(
        prog="benchwarden",
        description="Gas supply planning, leak checks and a session journal for gas-fed "
        "pulsed-discharge benches. Without a sub-command: open the app on the demo bench.",
        epilog="Pressures are gauge unless marked absolute (bar(a), psia). Estimates only: follow "
        "local codes, the gas supplier's safety data sheet and your lab's procedures.",
    )
    ap.add_argument("--version", action="version", version="benchwarden 0.1.0")
    ap.add_argument("--journal", metavar="PATH", help="session journal file (default: user data dir, or $BENCHWARDEN_JOURNAL)")
    sub = ap.add_subparsers(dest="command", parser_class=Parser, metavar="COMMAND")
    chosen = _chosen(list(sys.argv[1:] if argv is None else argv))
    for name, (module, help_text) in COMMANDS.items():
        if name == chosen and module:
            importlib.import_module(f"benchwarden.cli.{module}").configure(sub, name)
        elif name == "open":
            p = sub.add_parser("open", help=help_text)
            p.add_argument("profile", help="bench profile (TOML)")
            p.add_argument("--journal", metavar="PATH", default=argparse.SUPPRESS,
                           help="session journal file (default: user data dir, or $BENCHWARDEN_JOURNAL)")
            p.set_defaults(func=lambda a: _run_app(a, a.profile))
        else:
            sub.add_parser(name, help=help_text, add_help=False)
    return ap


def main(argv: Sequence[str] | None = None) -> int:
    from benchwarden.errors import BenchwardenError

    for stream in (sys.stdout, sys.stderr):  # a terminal that cannot show °, ± or ³ gets '?'
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None:
            try:
                reconfigure(errors="replace")
            except (ValueError, OSError):
                pass
    args = build_parser(argv).parse_args(argv)
    forget_display()
    for name, value in vars(args).items():
        if isinstance(value, str) and not value.strip() and name not in ("command",):
            sys.stderr.write(f"benchwarden: error: --{name.replace('_', '-')} is empty: give a value or leave the "
                             "option out\n")
            return EXIT_INPUT
    try:
        if args.command is None:
            return _run_app(args, None)
        return int(args.func(args))
    except BenchwardenError as exc:
        sys.stderr.write(one_line(f"benchwarden: error: {error_text(exc, args)}") + "\n")
        return EXIT_INPUT
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        # the reader went away (``benchwarden plan --json | head``): stop quietly, and keep Python
        # from complaining again when it flushes standard output at exit
        import os

        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0


def _run_app(args: argparse.Namespace, profile_path: str | None) -> int:
    from benchwarden.tui.app import run_app

    return run_app(profile_path, getattr(args, "journal", None))
