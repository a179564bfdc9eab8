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
    display,
    emit_json,
    emit_table,
    gas,
    input_error,
    number,
)
from benchwarden.render.hazards import hazard_items
from benchwarden.render.room import floor_words, leak_rows, release_oxygen_words
from benchwarden.render.supply import contents_refusal
from benchwarden.units import parse_flow, parse_temperature, parse_volume, pressure_abs
from benchwarden.units.limits import in_range, within
from benchwarden.units.quantities import parse_amount, parse_ventilation
from benchwarden.workflows.roomcheck import ContentsUnknown, leak_check, release_check


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
    in_range("room volume", V, text=args.room_volume)
    Q = parse_ventilation(args.ventilation).m3_s(V) if args.ventilation else 0.0
    if args.release:
        return _release(args, g_, V, T, amb)
    if args.ventilation and Q == 0 and args.ventilation_kind == "exhaust":
        raise input_error(f"ventilation {args.ventilation!r} is zero: leave out --ventilation for an unventilated room")
    if (args.supply_volume is None) != (args.supply_pressure is None):
        raise input_error("--supply-volume and --supply-pressure go together")
    sv = sp = None
    if args.supply_volume is not None:
        sv = parse_volume(args.supply_volume, "supply volume")
        sp = pressure_abs(args.supply_pressure, amb, "supply pressure")
    leak = parse_flow(args.leak, reference=args.flow_reference, what="leak")
    in_range("flow", leak.value, "leak", args.leak)
    try:
        ck = leak_check(g_, V, leak, Q, args.ventilation_kind, args.oxygen, T, amb, sv, sp)
    except ContentsUnknown as exc:
        raise input_error(contents_refusal(exc.contents, display(args, amb))) from None
    return _leak(args, ck, V, Q)


def _release(args: argparse.Namespace, g_: Any, V: float, T: float, amb: float) -> int:
    amount = parse_amount(args.release, "release")
    within(amount.value, "release", 1e-6, 1e5, "m³" if amount.kind == "volume" else "kg", text=args.release,
           words="from 1 mL to 1e5 m³ (or 1 mg to 1e5 kg)")
    ck = release_check(g_, V, amount, args.model, args.oxygen, T, amb)
    r = ck.release
    hz = hazard_items(ck.toxic, ck.flammable, r.o2_percent_after_release, release=True)
    floor = ({"o2_percent_floor": ck.floor.o2_percent_after_release,
              "gas_percent_floor": ck.floor.gas_percent_after_release} if ck.floor is not None else {})
    if args.json:
        emit_json(asdict(r) | floor | {"gas": g_.name, "hazards": hz, "lead": ck.lead,
                                       "stratification": ck.stratification})
        return 0
    rows = [("gas", g_.name), ("room", f"{V:g} m³"), ("released", f"{r.release_volume_m3:.3f} m³ at room conditions")]
    o2_rows = [("oxygen after", f"{r.o2_percent_after_release:.2f} %")]
    if not any(h["kind"] == "oxygen-enrichment" for h in hz):
        o2_rows.append(("effect of the oxygen", release_oxygen_words(r.o2_percent_after_release, r.effect)))
    # the worse of the two hazards leads: the gas's own toxicity or the oxygen it leaves
    lead = [(h["kind"].upper(), h["text"]) for h in hz if h.get("judged", True)]
    notes = [h["text"] for h in hz if not h.get("judged", True)]
    rows += (lead + o2_rows if ck.lead == "toxic" or any(h["kind"] in ("flammable", "oxygen-enrichment") for h in hz)
             else o2_rows + lead)
    rows += [(f"released {g_.short_name} in the room", f"{r.gas_percent_after_release:.2f} %"), ("model", r.method)]
    if ck.floor is not None:
        rows.append(("at floor level", floor_words(ck.floor)))
    emit_table("Room after a sudden release", rows, list(r.notes) + notes + [ck.stratification, CAUTION])
    return 0


def _leak(args: argparse.Namespace, ck: Any, V: float, Q: float) -> int:
    lk, fin = ck.leak, ck.finite
    hz = hazard_items(ck.toxic, ck.flammable, ck.o2_percent_lowest)
    if args.json:
        extra: dict[str, object] = {}
        if fin is not None:
            extra = {"minutes_to_empty": fin.minutes_to_empty, "o2_percent_minimum": fin.o2_percent_minimum,
                     "minutes_below_19_5": fin.minutes_below_19_5, "minutes_to_recover_from_minimum":
                     fin.minutes_to_recover, "steady_state_sustained": fin.steady_sustained,
                     # with a finite source the times and the effect follow the lowest oxygen
                     "minutes_to_19_5": fin.minutes_to_19_5, "minutes_to_18": fin.minutes_to_18,
                     "effect": fin.effect}
        emit_json(asdict(lk) | extra | {"gas": ck.gas.name, "model": lk.method, "hazards": hz, "lead": ck.lead,
                                        "o2_percent_lowest": ck.o2_percent_lowest,
                                        "stratification": ck.stratification})
        return 0
    emit_table("Room oxygen with a continuous leak", leak_rows(ck, V, Q, args.ventilation_kind),
               [h["text"] for h in hz] + [ck.stratification, CAUTION])
    return 0
