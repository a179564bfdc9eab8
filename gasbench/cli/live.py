"""Live commands: ``simulate`` (a simulated cylinder on Modbus/TCP, for trying without hardware)."""

from __future__ import annotations

import argparse
import asyncio
from typing import Any

from gasbench import supply
from gasbench.cli.common import add_gas, computation, input_error
from gasbench.simulator import Cylinder, serve
from gasbench.units import parse_duration, parse_flow, parse_temperature, parse_volume, pressure_abs

REGISTER_MAP = """\
register map (holding registers, device 1, 127.0.0.1 only):
  0-1  cylinder pressure, bar(g), float32 (big-endian words)
  2-3  gas temperature, degC, float32
The cylinder loses gas by the real-gas mass balance at --leak + --draw; --speed N runs its clock
N times faster (a night's hold test in a minute)."""


def configure(sub: Any, name: str) -> None:
    p = sub.add_parser("simulate", help="serve a simulated cylinder as a Modbus/TCP pressure transducer",
                       formatter_class=argparse.RawDescriptionHelpFormatter, epilog=REGISTER_MAP)
    add_gas(p)
    p.add_argument("--port", type=int, default=5020, help="TCP port on 127.0.0.1 (default 5020)")
    p.add_argument("--volume", required=True, help="water volume, e.g. '50 L'")
    p.add_argument("--pressure", required=True, help="starting pressure, e.g. '150 bar'")
    p.add_argument("--temperature", default="20 degC", help="gas temperature (default 20 degC)")
    p.add_argument("--leak", default="0 sccm", help="a leak, e.g. '40 sccm'")
    p.add_argument("--draw", default="0 slpm", help="a draw, e.g. '2 slpm'")
    p.add_argument("--speed", type=float, default=1.0, help="clock speed-up (default 1)")
    p.add_argument("--for", dest="duration", help="stop after this long, e.g. '10 min' (default: Ctrl-C)")
    p.set_defaults(func=cmd_simulate)


def cmd_simulate(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    if not (1 <= args.port <= 65535):
        raise input_error(f"--port {args.port}: a TCP port between 1 and 65535")
    if not (0 < args.speed <= 1e6):
        raise input_error(f"--speed {args.speed!r}: above 0 and at most 1e6")
    T = parse_temperature(args.temperature)
    loss = sum(supply.mass_flow(g_, parse_flow(x, what=w)) for x, w in ((args.leak, "leak"), (args.draw, "draw")))
    cyl = Cylinder(g_, parse_volume(args.volume, "cylinder volume"), pressure_abs(args.pressure, amb), T, loss,
                   args.speed, amb)
    duration = parse_duration(args.duration, "--for") if args.duration else None
    print(f"simulated {g_.name} cylinder on 127.0.0.1:{args.port} (device 1): {d.gauge(cyl.pressure_abs_pa)}, "
          f"losing {loss * 6e4:.3g} g/min, clock ×{args.speed:g}" + (f" for {d.hours(duration / 3600)}"
                                                                     if duration else "; Ctrl-C stops it"),
          flush=True)
    try:
        asyncio.run(serve(cyl, args.port, duration_s=duration))
    except OSError as exc:
        raise input_error(f"cannot serve on 127.0.0.1:{args.port}: {exc.strerror or exc}") from None
    except KeyboardInterrupt:
        pass
    return 0
