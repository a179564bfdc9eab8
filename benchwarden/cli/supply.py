"""Supply commands: ``contents``, ``heat``, ``runtime``."""

from __future__ import annotations

import argparse
import datetime as dt
from dataclasses import asdict
from typing import Any

from benchwarden.cli.common import (
    add_ambient,
    add_display,
    add_flow_reference,
    add_gas,
    add_json,
    computation,
    emit_json,
    emit_table,
    given,
    input_error,
)
from benchwarden.render.findings import SEVERITY_MARK, describe, finding_dict, worded
from benchwarden.render.supply import (
    contents_notes,
    contents_refusal,
    phase_words,
    sensitivity_words,
)
from benchwarden.units import (
    get_reference,
    parse_flow,
    parse_mass,
    parse_temperature,
    parse_temperature_difference,
    parse_volume,
    pressure_abs,
)
from benchwarden.units.constants import T_FULL_K
from benchwarden.units.limits import conflict, in_range, within
from benchwarden.workflows import computations as comp
from benchwarden.workflows.findings import contents_findings, heat_findings
from benchwarden.workflows.ranges import check_weight_fits


def configure(sub: Any, name: str) -> None:
    if name == "contents":
        p = sub.add_parser("contents", help="mass and free-gas volume in a cylinder (real gas)")
        add_gas(p)
        p.add_argument("--volume", help="cylinder water volume, e.g. '50 L'")
        p.add_argument("--pressure", help="gauge reading, e.g. '200 bar' (or '150 bar(a)')")
        p.add_argument("--temperature", help="gas temperature, e.g. '20 degC'")
        p.add_argument("--gross", help="gross weight (liquefied gases; with --tare and --volume), e.g. '75.2 kg'")
        p.add_argument("--tare", help="tare weight stamped on the cylinder, e.g. '68.5 kg'")
        p.add_argument("--reference", default="15C", help="free-gas reference: 0C, 15C (default), 20C, 70F")
        p.add_argument("--temperature-uncertainty", default="1 K",
                       help="standard uncertainty of the temperature (default 1 K): gives the mass uncertainty")
        add_ambient(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_contents)
    elif name == "heat":
        p = sub.add_parser("heat", help="pressure of a closed cylinder at another temperature")
        add_gas(p)
        p.add_argument("--pressure", required=True, help="reading now, e.g. '200 bar'")
        p.add_argument("--temperature", required=True, help="temperature now, e.g. '15 degC'")
        p.add_argument("--to", required=True, help="temperature to evaluate, e.g. '50 degC'")
        p.add_argument("--service", help="service (working) pressure, e.g. '200 bar'")
        p.add_argument("--test", help="test pressure stamped on the cylinder, e.g. '300 bar'")
        add_ambient(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_heat)
    elif name == "runtime":
        p = sub.add_parser("runtime", help="hours until the reserve at given draws")
        add_gas(p)
        p.add_argument("--volume", required=True)
        p.add_argument("--pressure", required=True)
        p.add_argument("--temperature", required=True)
        p.add_argument("--reserve", required=True, help="pressure at which to close or swap, e.g. '10 bar'")
        p.add_argument("--flow", required=True, action="append", help="a draw, e.g. '2 slpm'; repeat for more")
        add_flow_reference(p)
        add_ambient(p)
        add_display(p)
        add_json(p)
        p.set_defaults(func=cmd_runtime)


def cmd_contents(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    ref = get_reference(args.reference)
    T = parse_temperature(args.temperature) if args.temperature else T_FULL_K
    u_T = parse_temperature_difference(args.temperature_uncertainty)
    conflict(given(args, "--pressure", "--gross", "--tare") if args.pressure else [],
             "the contents come from the pressure or from the weights")
    if (args.gross is None) != (args.tare is None):
        raise input_error("--gross and --tare go together: give both weights")
    if args.gross is not None:
        if not args.volume:
            raise input_error("--gross and --tare need --volume (the cylinder's water volume): without it the state "
                              "in the cylinder (two-phase, liquid-full, supercritical) and its pressure are unknown")
        gross, tare = parse_mass(args.gross, "gross weight"), parse_mass(args.tare, "tare weight")
        V = _volume(args.volume)
        if gross > tare:
            check_weight_fits(g_, gross - tare, V, T)
        c = comp.contents_by_weight(g_, gross, tare, ref, T, V)
    else:
        if not (args.volume and args.pressure and args.temperature):
            raise input_error("contents needs --volume, --pressure and --temperature (or --gross, --tare and --volume)")
        c = comp.contents(g_, _volume(args.volume), pressure_abs(args.pressure, amb), T, ref, u_T)
    if c.mass_kg is None:
        # no pressure-based contents: the same one line and exit status in text and JSON modes
        raise input_error(contents_refusal(c, d))
    found = contents_findings(c)
    notes = [f"{SEVERITY_MARK[f.severity]}: {worded(f, d)}" for f in found]
    notes += contents_notes(c, d)
    if args.json:
        out = asdict(c)
        out["reference_temperature_k"] = ref.temperature_k
        out["reference_pressure_pa"] = ref.pressure_pa
        out["reference"] = ref.label
        out["ambient_pressure_pa"] = amb
        out["pressure_gauge_pa"] = None if c.pressure_abs_pa is None else c.pressure_abs_pa - amb
        out["notes"] = contents_notes(c, d)
        out["findings"] = [finding_dict(f, d) for f in found]
        emit_json(out)
        return 0
    rows = [("gas", c.gas_name)]
    if c.pressure_abs_pa is not None:
        rows.append(("pressure", d.both(c.pressure_abs_pa)))
    rows.append(("temperature", d.temperature(c.temperature_k)))
    assert c.free_volume_m3 is not None
    rows.append(("phase", phase_words(c.phase, d, None, c.liquid_full_temperature_k, c.vapour_fraction)))
    if c.density_kg_m3 is not None:
        rows.append(("density", f"{c.density_kg_m3:.3f} kg/m³" + (f", Z {c.z:.4f}" if c.z is not None else "")))
    if c.filling_ratio_kg_l is not None:
        rows.append(("filling ratio", f"{c.filling_ratio_kg_l:.3f} kg/L" + (" (OVERFILLED)" if c.overfilled else "")))
    rows += [
        ("mass", f"{c.mass_kg:.3f} kg"),
        ("free gas", f"{c.free_volume_m3:.3f} m³ = {c.free_volume_m3 * 1000:.0f} L at {ref.label}"),
    ]
    if c.mass_uncertainty_kg is not None and c.mass_sensitivity_kg_per_k is not None:
        rows.append(("temperature sensitivity", sensitivity_words(c.mass_kg, c.mass_sensitivity_kg_per_k,
                                                                  c.mass_uncertainty_kg, u_T)))
    if c.ideal_free_volume_m3 is not None:
        rows.append(("ideal gas (p·V/T)", f"{c.ideal_free_volume_m3:.3f} m³; real differs by {c.real_vs_ideal_percent:+.1f} %"))
    rows.append(("method", c.method))
    emit_table("Cylinder contents", rows, notes)
    return 0


def _volume(text: str) -> float:
    return in_range("cylinder volume", parse_volume(text, "cylinder volume"), text=text)


def _rating(text: str | None, what: str, amb: float, floor_gauge_pa: float = 0.0, why: str = "") -> float | None:
    """A cylinder's service or test pressure: above ``floor_gauge_pa`` (gauge) and at most 2000 bar(g)."""
    if not text:
        return None
    p = pressure_abs(text, amb, what)
    within(p - amb, what, floor_gauge_pa, 2e8, "Pa(g)", lo_open=True, text=text, why=why)
    return p


def cmd_heat(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    p = pressure_abs(args.pressure, amb)
    T1 = parse_temperature(args.temperature)
    T2 = parse_temperature(args.to, "target temperature")
    service = _rating(args.service, "service pressure", amb)
    test = _rating(args.test, "test pressure", amb)
    if service is not None and test is not None and test < service:
        within(test - amb, "test pressure", service - amb, None, "Pa(g)", text=args.test,
               lo_name="the service pressure", why="a cylinder is tested above its rating")
    h = comp.heat_up(g_, p, T1, T2, amb, service, test)
    if args.json:
        emit_json(asdict(h) | {"ambient_pressure_pa": amb})
        return 0
    rows = [
        ("gas", h.gas_name),
        ("from", f"{d.both(h.pressure_from_abs_pa)} at {d.temperature(T1)}"),
        ("to", f"{d.both(h.pressure_abs_pa)} at {d.temperature(T2)}"),
        ("ideal gas would say", d.both(h.ideal_pressure_abs_pa)),
        ("method", h.method),
    ]
    warnings = [f"{SEVERITY_MARK[f.severity]}: {describe(f, d)[0]}" for f in heat_findings(h)]
    emit_table("Closed cylinder heated or cooled", rows, warnings)
    return 0


def cmd_runtime(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    V = _volume(args.volume)
    p = pressure_abs(args.pressure, amb)
    res = pressure_abs(args.reserve, amb, "reserve")
    within(res - amb, "reserve", 0.0, p - amb, "Pa(g)", text=args.reserve, hi_open=True,
           hi_name="the pressure now")
    T = parse_temperature(args.temperature)
    flows = [parse_flow(f, reference=args.flow_reference) for f in args.flow]
    for f in flows:
        in_range("flow", f.value, "draw", f.text)
    draws = [comp.mass_flow(g_, f) for f in flows]
    r = comp.runtime(g_, V, p, res, T, sum(draws))
    now = dt.datetime.now().astimezone()
    at = now + dt.timedelta(hours=r.hours_to_reserve) if r.hours_to_reserve <= 24 * 366 else None
    if args.json:
        emit_json(asdict(r) | {"draws_kg_s": draws, "reserve_at": at.isoformat(timespec="minutes") if at else None,
                               "pressure_abs_pa": p, "reserve_abs_pa": res})
        return 0
    rows = [("gas", r.gas_name), ("now", d.both(p)), ("reserve", d.both(res)),
            ("usable above reserve", f"{r.usable_mass_kg:.3f} kg")]
    for f, dr in zip(flows, draws, strict=True):
        rows.append(("draw", f"{f.describe()} = {dr * 60e3:.3f} g/min"))
    rows += [("time to reserve", d.hours(r.hours_to_reserve)),
             ("reserve reached at", at.strftime("%a %d %b %H:%M") if at else "not within a year"),
             ("method", r.method + " (constant temperature)")]
    emit_table("Run time to reserve", rows)
    return 0
