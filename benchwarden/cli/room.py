"""The ``room`` command: room oxygen after a release or during a leak."""

from __future__ import annotations

import argparse
import math
from dataclasses import asdict
from typing import Any

from benchwarden.cli.common import (
    CAUTION,
    add_ambient,
    add_display,
    add_flow_reference,
    add_gas,
    add_json,
    ambient,
    emit_json,
    emit_table,
    gas,
    input_error,
    number,
)
from benchwarden.core import gas as g
from benchwarden.core import room as rm
from benchwarden.core import supply
from benchwarden.units import fmt_hours, parse_flow, parse_temperature, parse_volume, pressure_abs
from benchwarden.units.limits import MIN_FLOW, within
from benchwarden.units.quantities import parse_amount, parse_ventilation


def configure(sub: Any, name: str) -> None:
    p = sub.add_parser("room", help="room oxygen after a release or during a leak")
    add_gas(p)
    p.add_argument("--room-volume", required=True, help="room volume, e.g. '40 m3'")
    g1 = p.add_mutually_exclusive_group(required=True)
    g1.add_argument("--release", help="sudden release: free-gas volume at room conditions ('9 m3') or a mass ('11 kg')")
    g1.add_argument("--leak", help="continuous leak or vented draw: '5 slpm', '2 L/min', '3 g/min'")
    p.add_argument("--ventilation", help="air changes per hour ('2/h') or a flow ('60 m3/h')")
    p.add_argument("--ventilation-kind", choices=["exhaust", "supply"], default="exhaust")
    p.add_argument("--model", choices=["displacement", "mixed", "sealed"], default="displacement",
                   help="release model (default displacement, the most conservative)")
    p.add_argument("--temperature", default="20 degC", help="room temperature (default 20 degC)")
    p.add_argument("--oxygen", type=number, default=20.95, help="initial oxygen, %% (default 20.95)")
    p.add_argument("--supply-volume", help="with --leak: water volume of the cylinder that leaks, e.g. '50 L' "
                                           "(the leak stops when it is empty)")
    p.add_argument("--supply-pressure", help="with --leak: its pressure now, e.g. '200 bar'")
    add_flow_reference(p)
    add_ambient(p)
    add_display(p)
    add_json(p)
    p.set_defaults(func=cmd_room)


def cmd_room(args: argparse.Namespace) -> int:
    g_ = gas(args)
    amb = ambient(args)
    if not (math.isfinite(args.oxygen) and 0 < args.oxygen <= 100):
        raise input_error(f"--oxygen {args.oxygen!r}: the room's oxygen before the release, a percentage above 0 "
                          "and at most 100 (air: 20.95)")
    T = parse_temperature(args.temperature, "room temperature")
    V = parse_volume(args.room_volume, "room volume")
    if V <= 0:
        raise input_error(f"room volume {args.room_volume!r} must be greater than zero")
    within(V, "room volume", 1.0, 1e6, "m³", text=args.room_volume, why="a room a person works in")
    Q = parse_ventilation(args.ventilation).m3_s(V) if args.ventilation else 0.0
    notes = [rm.stratification_note(g_)]
    if args.release:
        amount = parse_amount(args.release, "release")
        within(amount.value, "release", 1e-6, 1e5, "m³" if amount.kind == "volume" else "kg", text=args.release,
               words="from 1 mL to 1e5 m³ (or 1 mg to 1e5 kg)")
        vg = rm.release_volume(g_, amount, T, amb)
        r = rm.release(V, vg, args.model, args.oxygen)
        hz = rm.gas_hazards(g_, r.o2_percent_after_release, args.oxygen)
        if args.json:
            emit_json(asdict(r) | {"gas": g_.name, "gas_percent_after_release": r.gas_percent_after_release,
                                   "hazards": [asdict(h) for h in hz], "stratification": notes[0]})
            return 0
        rows = [("gas", g_.name), ("room", f"{V:g} m³"), ("released", f"{vg:.3f} m³ at room conditions")]
        # a toxic or flammable gas is judged by its own concentration first, then by the oxygen
        rows += [(f"{h.kind.upper()}", h.text) for h in hz]
        rows += [(f"{g_.short_name} in the room", f"{r.gas_percent_after_release:.2f} %"),
                 ("oxygen after", f"{r.o2_percent_after_release:.2f} %"),
                 ("effect of the oxygen", r.effect or "none expected (≥ 19.5 %)"), ("model", r.method)]
        emit_table("Room after a sudden release", rows, list(r.notes) + notes + [CAUTION])
        return 0
    if args.ventilation and Q == 0 and args.ventilation_kind == "exhaust":
        raise input_error(f"ventilation {args.ventilation!r} is zero: leave out --ventilation for an unventilated room")
    leak = parse_flow(args.leak, reference=args.flow_reference, what="leak")
    within(leak.value, "leak", MIN_FLOW, None, "", text=args.leak, words="at least 0.001 sccm (or 0.001 mL/min, "
           "1.7e-11 kg/s)", why="a smaller leak changes no room")
    R = rm.leak_volume_flow(g_, leak, T, amb)
    lk = rm.leak_o2(V, R, Q, args.ventilation_kind, args.oxygen)
    fin = None
    if (args.supply_volume is None) != (args.supply_pressure is None):
        raise input_error("--supply-volume and --supply-pressure go together")
    if args.supply_volume is not None:
        c = supply.contents(g_, parse_volume(args.supply_volume, "supply volume"),
                            pressure_abs(args.supply_pressure, amb, "supply pressure"), T)
        if c.mass_kg is None:
            raise input_error(c.notes[0])
        fin = rm.finite_leak(lk, c.mass_kg / g.density(g_, T, amb))
    worst = fin.o2_percent_minimum if fin is not None else lk.o2_percent_steady
    hz = rm.gas_hazards(g_, worst, args.oxygen)
    if args.json:
        extra: dict[str, object] = {}
        if fin is not None:
            extra = {"minutes_to_empty": fin.minutes_to_empty, "o2_percent_minimum": fin.o2_percent_minimum,
                     "minutes_below_19_5": fin.minutes_below_19_5, "minutes_to_recover_from_minimum":
                     fin.minutes_to_recover}
        emit_json(asdict(lk) | extra | {"gas": g_.name, "model": lk.method, "hazards": [asdict(h) for h in hz],
                                        "stratification": notes[0]})
        return 0

    def mins(m: float) -> str:
        return "—" if math.isnan(m) else fmt_hours(m / 60.0)

    emit_table("Room oxygen with a continuous leak", [
        ("gas", g_.name), ("room", f"{V:g} m³"), ("leak", f"{R * 6e4:.3f} L/min at room conditions"),
        ("ventilation", f"{Q * 3600:.1f} m³/h ({args.ventilation_kind})" if Q else "none"),
        ("steady oxygen", f"{lk.o2_percent_steady:.2f} %"), ("to 19.5 %", mins(lk.minutes_to_19_5)),
        ("to 18 %", mins(lk.minutes_to_18)),
        ("recovery to 19.5 %", "never below it" if math.isnan(lk.minutes_to_recover) else mins(lk.minutes_to_recover)),
        ("effect", lk.effect or "none expected (≥ 19.5 %)"), ("model", lk.method)]
        + ([("cylinder empty after", mins(fin.minutes_to_empty)),
            ("lowest oxygen", f"{fin.o2_percent_minimum:.2f} % (when the cylinder is empty)"),
            ("back above 19.5 % after", "never below it" if fin.minutes_to_recover is None
             else mins(fin.minutes_to_recover))] if fin is not None else []),
        [h.text for h in hz] + notes + [CAUTION])
    return 0
