"""The ``purge`` command: pressure-cycle purge and flow-through flush after a cylinder change."""

from __future__ import annotations

import argparse
from dataclasses import asdict
from typing import Any

from benchwarden.cli.common import (
    add_ambient,
    add_display,
    add_gas,
    add_json,
    computation,
    emit_json,
    emit_table,
    input_error,
)
from benchwarden.units import parse_flow, parse_temperature, parse_volume, pressure_abs
from benchwarden.units.limits import in_range
from benchwarden.units.quantities import parse_fraction
from benchwarden.workflows import computations as comp


def configure(sub: Any, name: str) -> None:
    p = sub.add_parser("purge", help="pressure-cycle purge and flush of a line or channel after a cylinder change")
    add_gas(p)
    p.add_argument("--volume", required=True, help="volume to purge: regulator, line and channel, e.g. '0.8 L'")
    p.add_argument("--high", required=True, help="fill pressure of each cycle, e.g. '4 bar' (gauge) or '5 bar(a)'")
    p.add_argument("--low", required=True, help="vent pressure of each cycle, e.g. '0 bar' or '100 mbar(a)'")
    p.add_argument("--target", required=True, help="oxygen to reach, e.g. '10 ppm' or '0.1 %%'")
    p.add_argument("--initial", default="20.95 %", help="oxygen at the start (default: air, 20.95 %%)")
    p.add_argument("--purity", default="0 ppm", help="oxygen in the purge gas itself, e.g. '2 ppm' (the floor)")
    p.add_argument("--flow", help="flush flow for the flow-through estimate, e.g. '2 slpm'")
    p.add_argument("--temperature", default="20 degC", help="gas temperature (default 20 degC)")
    add_ambient(p)
    add_display(p)
    add_json(p)
    p.set_defaults(func=cmd_purge)


def cmd_purge(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    V = in_range("purged volume", parse_volume(args.volume, "purged volume"), text=args.volume)
    hi = pressure_abs(args.high, amb, "fill pressure")
    lo = pressure_abs(args.low, amb, "vent pressure")
    T = parse_temperature(args.temperature)
    x0 = parse_fraction(args.initial, "initial oxygen")
    target = parse_fraction(args.target, "target oxygen")
    floor = parse_fraction(args.purity, "purge gas oxygen")
    if lo >= hi:
        raise input_error(f"--low {args.low!r} must be below --high {args.high!r}")
    c = comp.cycle_purge(g_, V, hi, lo, T, x0, target, floor)
    f = None
    if args.flow:
        flow = parse_flow(args.flow, what="flush flow")
        f = comp.flush(g_, V, comp.mass_flow(g_, flow, T, amb), amb, T, x0, target, floor)
    if args.json:
        out: dict[str, Any] = asdict(c) | {"p_high_abs_pa": hi, "p_low_abs_pa": lo, "initial_fraction": x0,
                                           "target_fraction": target}
        if f is not None:
            out |= {"flush_time_s": f.time_s, "flush_plug_flow_time_s": f.plug_flow_time_s,
                    "flush_exchanges": f.exchanges, "flush_gas_standard_litres": f.gas_standard_litres,
                    "flush_method": f.method}
        emit_json(out)
        return 0
    rows = [("gas", g_.name), ("volume", f"{V * 1000:.4g} L"),
            ("cycles", f"{c.cycles} × fill to {d.both(hi)}, vent to {d.both(lo)}"),
            ("oxygen after each", ", ".join(_ppm(x) for x in c.fractions)),
            ("gas used", f"{c.gas_standard_litres:.3g} standard L (0 °C, 101.325 kPa) = {c.gas_kg * 1000:.3g} g"),
            ("method", c.method)]
    if f is not None:
        rows += [("flush at " + args.flow, f"{d.hours(f.time_s / 3600)} well mixed ({f.exchanges:.1f} volume "
                                           f"changes); at least {d.hours(f.plug_flow_time_s / 3600)} in plug flow"),
                 ("flush gas", f"{f.gas_standard_litres:.3g} standard L (0 °C, 101.325 kPa)"),
                 ("flush method", f.method)]
    emit_table("Purge after a cylinder change", rows,
               ["vent purge gas outside or into extraction; a well-mixed volume is an estimate: dead legs purge "
                "slower — measure the oxygen where it matters"])
    return 0


def _ppm(x: float) -> str:
    return f"{x * 1e6:.3g} ppm" if x < 1e-3 else f"{x * 100:.3g} %"
