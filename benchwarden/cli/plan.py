"""Bench and equipment commands: ``plan``, ``throttle``, ``gap``, ``orifice``."""

from __future__ import annotations

import argparse
import math
from dataclasses import asdict
from typing import Any

from benchwarden.cli.common import (
    add_ambient,
    add_display,
    add_fail_on,
    add_gas,
    add_journal,
    add_json,
    computation,
    display,
    emit_json,
    emit_table,
    exit_for,
    journal_if_exists,
    number,
)
from benchwarden.render.equipment import orifice_notes, orifice_rows, throttle_notes
from benchwarden.render.findings import SEVERITY_MARK, finding_dict, worded
from benchwarden.render.plan import format_plan, plan_json
from benchwarden.units import parse_flow, parse_length, parse_temperature, pressure_abs
from benchwarden.units.limits import in_range, within
from benchwarden.workflows import computations as comp
from benchwarden.workflows.bench import assess, leak_volume_flow
from benchwarden.workflows.findings import outlet_findings


def configure(sub: Any, name: str) -> None:
    if name == "plan":
        p = sub.add_parser("plan", help="session plan of a bench profile: run time, regulators, gaps, findings")
        p.add_argument("profile", help="bench profile (TOML)")
        p.add_argument("--leak", help="add a leak into the room, e.g. a hold test's '12 sccm' (of the largest "
                                      "supply's gas)")
        add_journal(p)
        add_display(p)
        add_json(p)
        add_fail_on(p)
        p.set_defaults(func=cmd_plan)
    elif name == "throttle":
        p = sub.add_parser("throttle", help="regulator outlet temperature (isenthalpic expansion)")
        add_gas(p)
        p.add_argument("--inlet", required=True, help="inlet pressure, e.g. '150 bar'")
        p.add_argument("--outlet", required=True, help="outlet pressure, e.g. '3 bar'")
        p.add_argument("--temperature", required=True, help="inlet temperature, e.g. '20 degC'")
        add_ambient(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_throttle)
    elif name == "gap":
        p = sub.add_parser("gap", help="estimated self-breakdown (firing) voltage of a spark gap")
        add_gas(p)
        p.add_argument("--spacing", required=True, help="electrode spacing, e.g. '2 mm'")
        p.add_argument("--pressure", required=True, help="gap pressure, e.g. '3 bar' (gauge) or '400 Torr'")
        p.add_argument("--temperature", default="20 degC", help="gas temperature (default 20 degC)")
        add_ambient(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_gap)
    elif name == "orifice":
        p = sub.add_parser("orifice", help="flow through a bleed orifice or needle valve bore")
        add_gas(p)
        p.add_argument("--diameter", required=True, help="bore, e.g. '0.2 mm'")
        p.add_argument("--upstream", required=True, help="upstream pressure, e.g. '2 bar'")
        p.add_argument("--downstream", required=True, help="downstream pressure, e.g. '50 mbar(a)' or '0 bar'")
        p.add_argument("--temperature", required=True)
        p.add_argument("--cd", type=number, default=0.62, help="discharge coefficient (default 0.62)")
        add_ambient(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_orifice)


def cmd_plan(args: argparse.Namespace) -> int:
    prof = comp.load_profile(args.profile)
    extra = leak_volume_flow(prof, parse_flow(args.leak, what="leak")) if args.leak else 0.0
    journal = journal_if_exists(args)
    try:
        a = assess(prof, journal, extra_leak_m3_s=extra)
    finally:
        if journal is not None:
            journal.close()
    d = display(args, prof.ambient_pa, prof)
    if args.json:
        emit_json(plan_json(a, d))
    else:
        print(format_plan(a, d))
    return exit_for(args, a.findings)


def cmd_throttle(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    p_in = pressure_abs(args.inlet, amb, "inlet pressure")
    p_out = pressure_abs(args.outlet, amb, "outlet pressure")
    t = comp.throttle(g_, p_in, p_out, parse_temperature(args.temperature))
    found = outlet_findings("the regulator", t.gas_name, t.outlet_temperature_k, t.solid_forms, t.liquid_forms,
                            t.dry_ice_margin_k)
    notes = throttle_notes(t, d)
    if args.json:
        emit_json(asdict(t) | {"notes": notes, "findings": [finding_dict(f, d) for f in found]})
        return 0
    rows = [
        ("gas", t.gas_name), ("inlet", f"{d.both(p_in)} at {d.temperature(t.inlet_temperature_k)}"
                              + (" (saturated vapour)" if t.inlet_saturated else "")),
        ("outlet", d.both(p_out)),
        ("outlet temperature", f"{d.temperature(t.outlet_temperature_k)} (change {d.temperature_change(t.temperature_change_k)})"),
        ("solid forms", "yes" if t.solid_forms else "no"), ("liquid forms", "yes" if t.liquid_forms else "no")]
    if t.dry_ice_margin_k is not None:
        rows.append(("dry-ice margin", f"{t.dry_ice_margin_k:.1f} K above the line where solid forms"))
    rows.append(("method", t.method))
    emit_table("Regulator outlet (isenthalpic)", rows,
               [f"{SEVERITY_MARK[f.severity]}: {worded(f, d)}" for f in found] + notes)
    return 0


def cmd_gap(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    p = in_range("gap pressure", pressure_abs(args.pressure, amb, "gap pressure"), text=args.pressure)
    spacing = in_range("gap spacing", parse_length(args.spacing, "gap spacing"), text=args.spacing)
    b = comp.breakdown(g_, spacing, p, parse_temperature(args.temperature))
    if args.json:
        out = asdict(b)
        if not b.within_validity:
            out["breakdown_kv"] = out["breakdown_high_kv"] = None  # no figure outside the methods' validity
        emit_json(out)
        return 0
    if not b.within_validity:
        shown = "WARNING: outside the validity of the methods (below)"
    elif math.isfinite(b.breakdown_kv):
        shown = f"{b.breakdown_kv:.2f} kV" + (f" (upper estimate {b.breakdown_high_kv:.2f} kV, used for flashover "
                                              "margins)" if b.breakdown_high_kv > b.breakdown_kv else
                                              " (the upper estimate, used for flashover margins)")
    else:
        shown = "none predicted: p·d is left of the Paschen curve's asymptote"
    emit_table("Spark gap self-breakdown (estimate)", [
        ("gas", b.gas_name), ("spacing", f"{b.spacing_m * 1000:g} mm"), ("pressure", d.both(p)),
        ("p·d at 20 °C", f"{b.pd_bar_cm_20c:.4g} bar·cm"),
        ("breakdown", shown),
        ("method", b.method), ("valid for", b.validity)],
        ["real gaps differ (electrode shape, surface, pulse rise time): treat as an estimate; high voltage "
         "kills — follow your lab's procedures and licensed practice"])
    return 0


def cmd_orifice(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    up = pressure_abs(args.upstream, amb, "upstream pressure")
    down = pressure_abs(args.downstream, amb, "downstream pressure")
    within(args.cd, "--cd", 0.0, 1.0, "", lo_open=True, why="a discharge coefficient")
    bore = in_range("orifice diameter", parse_length(args.diameter, "orifice diameter"), text=args.diameter)
    o = comp.orifice_flow(g_, bore, up, down,
                     parse_temperature(args.temperature), args.cd)
    if args.json:
        emit_json(asdict(o))
        return 0
    emit_table("Orifice flow", orifice_rows(o, g_.name, up, down, d), orifice_notes(o))
    return 0
