"""Command line: ``gasbench`` (the app) and one sub-command per computation.

This module only parses arguments, calls the core and formats results. Heavy modules
(CoolProp, Textual, pint) are imported inside the handlers so ``gasbench --help`` is fast.
Errors a person can fix print one line on stderr and exit with status 2.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from collections.abc import Sequence
from typing import Any, NoReturn

EXIT_INPUT = 2


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:  # one line, exit 2
        sys.stderr.write(f"gasbench: error: {message} (see 'gasbench {self.prog.split()[-1]} --help')\n"
                         if " " in self.prog else f"gasbench: error: {message}\n")
        raise SystemExit(EXIT_INPUT)


# ----------------------------------------------------------------------------- output


def _clean(value: Any) -> Any:
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
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


# ----------------------------------------------------------------------------- common options


def _ambient(args: argparse.Namespace) -> float:
    from gasbench.units import ATM_PA, ambient_from_altitude, parse_pressure

    if getattr(args, "ambient", None):
        return parse_pressure(args.ambient, ambient_pa=0.0, what="ambient pressure").abs_pa
    if getattr(args, "altitude", None) is not None:
        from gasbench.units import parse_length

        return ambient_from_altitude(parse_length(args.altitude, "altitude"))
    return ATM_PA


def _add_ambient(p: argparse.ArgumentParser) -> None:
    p.add_argument("--ambient", metavar="P", help="atmospheric pressure, e.g. '98.2 kPa' (default 101.325 kPa)")
    p.add_argument("--altitude", metavar="H", help="derive atmospheric pressure from altitude (ISO 2533), e.g. '850 m'")


def _add_json(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", action="store_true", help="print SI results as JSON")


def _gas(args: argparse.Namespace) -> Any:
    from gasbench.gas import parse_gas

    return parse_gas(args.gas)


def _bar(abs_pa: float, ambient: float) -> str:
    from gasbench.units import fmt_pressure

    return f"{fmt_pressure(abs_pa, ambient)} = {fmt_pressure(abs_pa, ambient, kind='absolute')}"


# ----------------------------------------------------------------------------- contents


def cmd_contents(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench import supply
    from gasbench.units import (
        get_reference,
        parse_mass,
        parse_pressure,
        parse_temperature,
        parse_volume,
    )

    gas = _gas(args)
    ambient = _ambient(args)
    ref = get_reference(args.reference)
    T = parse_temperature(args.temperature) if args.temperature else 288.15
    if (args.gross is None) != (args.tare is None):
        raise _input("--gross and --tare go together: give both weights")
    if args.gross is not None:
        c = supply.contents_by_weight(gas, parse_mass(args.gross, "gross weight"), parse_mass(args.tare, "tare weight"),
                                      ref, T, parse_volume(args.volume) if args.volume else None)
    else:
        if not (args.volume and args.pressure and args.temperature):
            raise _input("contents needs --volume, --pressure and --temperature (or --gross and --tare)")
        p = parse_pressure(args.pressure, ambient)
        c = supply.contents(gas, parse_volume(args.volume, "cylinder volume"), p.abs_pa, T, ref)
    if args.json:
        d = asdict(c)
        d["reference_temperature_k"] = ref.temperature_k
        d["reference_pressure_pa"] = ref.pressure_pa
        d["reference"] = ref.label
        d["ambient_pressure_pa"] = ambient
        d["pressure_gauge_pa"] = None if c.pressure_abs_pa is None else c.pressure_abs_pa - ambient
        emit_json(d)
        return 0
    rows = [("gas", c.gas_name)]
    if c.pressure_abs_pa is not None:
        rows.append(("pressure", _bar(c.pressure_abs_pa, ambient)))
    rows.append(("temperature", f"{c.temperature_k - 273.15:.1f} °C"))
    if c.liquefied and c.mass_kg is None:
        emit_table("Cylinder contents", rows + [("contents", "unknown from pressure: liquefied")], c.notes)
        sys.stderr.write("gasbench: error: " + c.notes[0] + " Use --gross and --tare.\n")
        return EXIT_INPUT
    assert c.mass_kg is not None and c.free_volume_m3 is not None
    if c.density_kg_m3 is not None:
        rows += [("density", f"{c.density_kg_m3:.3f} kg/m³"), ("Z", f"{c.z:.4f}")]
    rows += [
        ("mass", f"{c.mass_kg:.3f} kg"),
        ("free gas", f"{c.free_volume_m3:.3f} m³ = {c.free_volume_m3 * 1000:.0f} L at {ref.label}"),
    ]
    if c.ideal_free_volume_m3 is not None:
        rows.append(("ideal gas (p·V/T)", f"{c.ideal_free_volume_m3:.3f} m³; real differs by {c.real_vs_ideal_percent:+.1f} %"))
    rows.append(("method", c.method))
    emit_table("Cylinder contents", rows, c.notes)
    return 0


def _input(msg: str) -> Exception:
    from gasbench.errors import InputError

    return InputError(msg)


# ----------------------------------------------------------------------------- heat


def cmd_heat(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench import supply
    from gasbench.units import parse_pressure, parse_temperature

    gas = _gas(args)
    ambient = _ambient(args)
    p = parse_pressure(args.pressure, ambient).abs_pa
    T1 = parse_temperature(args.temperature)
    T2 = parse_temperature(args.to, "target temperature")
    service = parse_pressure(args.service, ambient, "service pressure").abs_pa if args.service else None
    test = parse_pressure(args.test, ambient, "test pressure").abs_pa if args.test else None
    h = supply.heat_up(gas, p, T1, T2, ambient, service, test)
    if args.json:
        emit_json(asdict(h) | {"ambient_pressure_pa": ambient})
        return 0
    rows = [
        ("gas", h.gas_name),
        ("from", f"{_bar(h.pressure_from_abs_pa, ambient)} at {T1 - 273.15:.1f} °C"),
        ("to", f"{_bar(h.pressure_abs_pa, ambient)} at {T2 - 273.15:.1f} °C"),
        ("ideal gas would say", _bar(h.ideal_pressure_abs_pa, ambient)),
        ("method", h.method),
    ]
    emit_table("Closed cylinder heated or cooled", rows, h.warnings)
    return 0


# ----------------------------------------------------------------------------- runtime


def cmd_runtime(args: argparse.Namespace) -> int:
    import datetime as dt
    from dataclasses import asdict

    from gasbench import supply
    from gasbench.units import (
        fmt_hours,
        parse_flow,
        parse_pressure,
        parse_temperature,
        parse_volume,
    )

    gas = _gas(args)
    ambient = _ambient(args)
    V = parse_volume(args.volume, "cylinder volume")
    p = parse_pressure(args.pressure, ambient).abs_pa
    res = parse_pressure(args.reserve, ambient, "reserve").abs_pa
    T = parse_temperature(args.temperature)
    flows = [parse_flow(f) for f in args.flow]
    draws = [supply.mass_flow(gas, f) for f in flows]
    r = supply.runtime(gas, V, p, res, T, sum(draws))
    now = dt.datetime.now().astimezone()
    at = now + dt.timedelta(hours=r.hours_to_reserve) if math.isfinite(r.hours_to_reserve) else None
    if args.json:
        emit_json(asdict(r) | {"draws_kg_s": draws, "reserve_at": at.isoformat(timespec="minutes") if at else None,
                               "pressure_abs_pa": p, "reserve_abs_pa": res})
        return 0
    rows = [("gas", r.gas_name), ("now", _bar(p, ambient)), ("reserve", _bar(res, ambient)),
            ("usable above reserve", f"{r.usable_mass_kg:.3f} kg")]
    for f, d in zip(flows, draws, strict=True):
        rows.append(("draw", f"{f.describe()} = {d * 60e3:.3f} g/min"))
    rows += [("time to reserve", fmt_hours(r.hours_to_reserve)),
             ("reserve reached at", at.strftime("%a %H:%M") if at else "never"),
             ("method", r.method + " (constant temperature)")]
    emit_table("Run time to reserve", rows)
    return 0


# ----------------------------------------------------------------------------- parser


def build_parser() -> argparse.ArgumentParser:
    ap = _Parser(
        prog="gasbench",
        description="Gas supply planning, leak checks and a session journal for gas-fed "
        "pulsed-discharge benches. Without a sub-command: open the app on the demo bench.",
        epilog="Pressures are gauge unless marked absolute (bar(a), psia). Estimates only: follow "
        "local codes, the gas supplier's safety data sheet and your lab's procedures.",
    )
    ap.add_argument("--version", action="version", version="gasbench 0.1.0")
    ap.add_argument("--journal", metavar="PATH", help="session journal file (default: user data dir, or $GASBENCH_JOURNAL)")
    sub = ap.add_subparsers(dest="command", parser_class=_Parser, metavar="COMMAND")

    p = sub.add_parser("contents", help="mass and free-gas volume in a cylinder (real gas)")
    p.add_argument("--gas", required=True, help="gas name or mixture 'helium:0.8,nitrogen:0.2'")
    p.add_argument("--volume", help="cylinder water volume, e.g. '50 L'")
    p.add_argument("--pressure", help="gauge reading, e.g. '200 bar' (or '150 bar(a)')")
    p.add_argument("--temperature", help="gas temperature, e.g. '20 degC'")
    p.add_argument("--reference", default="15C", help="free-gas reference: 0C, 15C (default), 20C, 70F")
    p.add_argument("--gross", help="gross weight (liquefied gases), e.g. '75.2 kg'")
    p.add_argument("--tare", help="tare weight stamped on the cylinder, e.g. '68.5 kg'")
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_contents)

    p = sub.add_parser("heat", help="pressure of a closed cylinder at another temperature")
    p.add_argument("--gas", required=True)
    p.add_argument("--pressure", required=True, help="reading now, e.g. '200 bar'")
    p.add_argument("--temperature", required=True, help="temperature now, e.g. '15 degC'")
    p.add_argument("--to", required=True, help="temperature to evaluate, e.g. '50 degC'")
    p.add_argument("--service", help="service (working) pressure, e.g. '200 bar'")
    p.add_argument("--test", help="test pressure stamped on the cylinder, e.g. '300 bar'")
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_heat)

    p = sub.add_parser("runtime", help="hours until the reserve at given draws")
    p.add_argument("--gas", required=True)
    p.add_argument("--volume", required=True)
    p.add_argument("--pressure", required=True)
    p.add_argument("--temperature", required=True)
    p.add_argument("--reserve", required=True, help="pressure at which to close or swap, e.g. '10 bar'")
    p.add_argument("--flow", required=True, action="append", help="a draw, e.g. '2 slpm'; repeat for more")
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_runtime)

    _add_more_commands(sub)
    return ap


def _add_more_commands(sub: Any) -> None:
    """Sub-commands of the plan, hold-test, room, checklist and journal layers."""


def main(argv: Sequence[str] | None = None) -> int:
    from gasbench.errors import GasbenchError

    args = build_parser().parse_args(argv)
    try:
        if args.command is None:
            return _run_app(args, None)
        return int(args.func(args))
    except GasbenchError as exc:
        msg = str(exc).replace("\n", " ")
        sys.stderr.write(f"gasbench: error: {msg}\n")
        return EXIT_INPUT
    except KeyboardInterrupt:
        return 130


def _run_app(args: argparse.Namespace, profile_path: str | None) -> int:
    from gasbench.tui.app import run_app

    return run_app(profile_path, getattr(args, "journal", None))
