"""What every sub-command shares: the parser class, common options, output helpers.

Light on imports on purpose: the command table imports this module for ``--help``.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any, NoReturn

if TYPE_CHECKING:  # pragma: no cover
    from benchwarden.render.display import Display
    from benchwarden.workflows.computations import Gas

EXIT_INPUT = 2
#: Exit status of a report with a finding at or above ``--fail-on``.
EXIT_FINDING = 3


class Parser(argparse.ArgumentParser):
    """argparse with one-line errors and exit status 2."""

    def error(self, message: str) -> NoReturn:
        hint = f" (see 'benchwarden {self.prog.split()[-1]} --help')" if " " in self.prog else ""
        sys.stderr.write(one_line(f"benchwarden: error: {message}", 199 - len(hint)) + hint + "\n")
        raise SystemExit(EXIT_INPUT)


def one_line(msg: str, limit: int = 199) -> str:
    """An error message as one short, clean line: no control characters, no echo of a long
    input (a word longer than 40 characters is cut), at most ``limit`` characters."""
    import re

    from benchwarden.render.files import clean

    text = clean(msg.replace("\n", " ").replace("\r", " ")).replace("\x00", "")
    # a long word is an echoed input (cut it); a path may be longer before it is cut
    text = re.sub(r"\S{41,}", lambda m: m.group(0) if "/" in m.group(0) and len(m.group(0)) <= 160
                  else m.group(0)[:38] + "…", text)
    return text if len(text) <= limit else text[: limit - 1] + "…"


def number(text: str) -> float:
    """argparse type: a bare number in digits 0-9 (``float`` alone would take ``٣`` as 3)."""
    from benchwarden.units.limits import plain_number

    try:
        return float(plain_number(text, "value"))
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def whole_number(text: str) -> int:
    """argparse type: a whole number in digits 0-9."""
    from benchwarden.units.limits import plain_number

    try:
        return int(plain_number(text, "value", integer=True))
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def given(args: argparse.Namespace, *options: str) -> list[str]:
    """The names of ``options`` (``--volume``) that were given, for :func:`units.limits.conflict`."""
    return [o for o in options if getattr(args, o.lstrip("-").replace("-", "_"), None) not in (None, "")]


def input_error(msg: str) -> Exception:
    from benchwarden.errors import InputError

    return InputError(msg)


# ----------------------------------------------------------------------------- output


def _clean(value: Any) -> Any:
    if isinstance(value, bool) or value is None or isinstance(value, (int, str)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    if hasattr(value, "item"):  # numpy scalars
        return _clean(value.item())
    return value


def emit_json(data: dict[str, Any]) -> None:
    print(json.dumps(_clean(data), indent=2, ensure_ascii=False))


def emit_table(title: str, rows: Sequence[tuple[str, str]], notes: Sequence[str] = ()) -> None:
    print(title)
    width = max((len(k) for k, _ in rows), default=0)
    for k, v in rows:
        print(f"  {k:<{width}}  {v}")
    for n in notes:
        print(f"  ! {n}")


# ----------------------------------------------------------------------------- options


def add_ambient(p: argparse.ArgumentParser) -> None:
    p.add_argument("--ambient", metavar="P", help="atmospheric pressure, e.g. '98.2 kPa' (default 101.325 kPa)")
    p.add_argument("--altitude", metavar="H", help="derive atmospheric pressure from altitude (ISO 2533), e.g. '850 m'")


def add_journal(p: argparse.ArgumentParser) -> None:
    p.add_argument("--journal", metavar="PATH", default=argparse.SUPPRESS,
                   help="session journal file (default: user data dir, or $BENCHWARDEN_JOURNAL)")


def add_gas(p: argparse.ArgumentParser) -> None:
    p.add_argument("--gas", required=True,
                   help="nitrogen, air, argon, helium, neon, krypton, xenon, oxygen, hydrogen, co2, sf6, "
                        "or a mixture by mole fraction 'helium:0.8,nitrogen:0.135,co2:0.065'")


def add_flow_reference(p: argparse.ArgumentParser) -> None:
    p.add_argument("--flow-reference", default=None, metavar="REF",
                   help="reference condition of sccm/slpm flows: 0C (default), 15C, 20C or 70F "
                        "(Nm3 stays at 0 degC, scfh/scfm at 70 degF)")


def add_json(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", action="store_true", help="print SI results as JSON")


def add_display(p: argparse.ArgumentParser) -> None:
    p.add_argument("--pressure-unit", metavar="UNIT", default=None,
                   help="show pressures in bar (default), psi, kPa or MPa; --json stays SI")


def ambient(args: argparse.Namespace) -> float:
    from benchwarden.units import ATM_PA, ambient_from_altitude, parse_length, pressure_abs
    from benchwarden.units.limits import conflict, within

    conflict(given(args, "--ambient", "--altitude"), "the ambient pressure is given, or derived from the altitude")
    if getattr(args, "ambient", None):
        amb = pressure_abs(args.ambient, 0.0, "ambient pressure")
        return within(amb, "ambient pressure", 30e3, 120e3, "Pa(a)", text=args.ambient,
                      why="sea level is 101.325 kPa; the highest labs are near 50 kPa")
    if getattr(args, "altitude", None) is not None:
        return ambient_from_altitude(parse_length(args.altitude, "altitude"))
    return ATM_PA


def gas(args: argparse.Namespace) -> Gas:
    from benchwarden.workflows.computations import parse_gas

    return parse_gas(args.gas)


#: The display the running command chose (its errors are worded in it); set by :func:`display`.
_SHOWN: dict[str, Display] = {}


def display(args: argparse.Namespace, ambient_pa: float, profile: Any = None) -> Display:
    """The display of this command: ``--pressure-unit``, else the profile's, else bar."""
    from benchwarden.render.display import display_for, profile_display

    unit = getattr(args, "pressure_unit", None)
    shown = profile_display(profile, unit) if profile is not None else display_for(unit, ambient_pa)
    _SHOWN["display"] = shown
    return shown


def forget_display() -> None:
    """A new command: no display chosen yet (``main`` runs many commands in one process in tests)."""
    _SHOWN.clear()


def error_text(exc: BaseException, args: argparse.Namespace | None = None) -> str:
    """An error for the person, worded by the renderer (``render.errors.error_line``) in the display
    the command chose, else its profile's (when the profile loads), else ``--pressure-unit`` (when
    it is one), else bar."""
    from benchwarden.errors import BenchwardenError, ProfileError
    from benchwarden.render.display import display_for, profile_display
    from benchwarden.render.errors import error_line

    d = _SHOWN.get("display")
    unit = getattr(args, "pressure_unit", None)
    profile = getattr(args, "profile", None)
    if d is None and isinstance(profile, str) and not isinstance(exc, ProfileError):
        try:
            from benchwarden.workflows.computations import load_profile

            d = profile_display(load_profile(profile), unit)
        except BenchwardenError:
            d = None
    if d is None:
        try:
            d = display_for(unit)
        except BenchwardenError:
            d = None
    return error_line(exc, d)


def computation(args: argparse.Namespace) -> tuple[Gas, float, Display]:
    """What a computation command starts from: the gas, the ambient pressure, the display."""
    amb = ambient(args)
    return gas(args), amb, display(args, amb)


def journal_if_exists(args: argparse.Namespace, readonly: bool = False) -> Any:
    """The journal when its file exists (commands that only read or add to it never create one)."""
    from benchwarden.workflows.computations import Journal, default_path

    path = default_path(getattr(args, "journal", None))
    return Journal(path, readonly=readonly) if path.exists() else None


CAUTION = ("estimate only: use a fixed oxygen monitor with alarm where gas can accumulate; follow local codes "
           "and the gas supplier's safety data sheet")


def add_fail_on(p: argparse.ArgumentParser) -> None:
    p.add_argument("--fail-on", choices=("stop", "warning", "attention"), default=None,
                   help="exit with status 3 when a finding at or above this severity stands (the output is "
                        "written as usual)")


def exit_for(args: argparse.Namespace, findings: Any) -> int:
    """0, or 3 when ``--fail-on`` is given and a finding at or above it stands."""
    from benchwarden.workflows.findings import at_or_above

    level = getattr(args, "fail_on", None)
    return EXIT_FINDING if level is not None and at_or_above(findings, level) else 0

