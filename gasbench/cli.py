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

HOLD_LOG_FORMAT = """\
log file (--log): CSV with a header row, comma-separated, decimal points (a semicolon-separated
file is read too; decimal commas and thousands separators are refused), '#' lines ignored:
  time       elapsed time with its unit in the header ('time (min)', 'elapsed_h'; s, min, h, d)
             or ISO 8601 timestamps ('2026-11-27T18:00', all with or all without a UTC offset)
  pressure   gauge unless the unit says absolute: 'pressure (bar)', 'pressure (psia)', 'p_bar'
             (or give --pressure-unit)
  temperature  optional: 'temperature (degC)', 'T_K'; without it the temperature is taken as
             constant (--t-start, default 20 degC) with 1 K uncertainty
example:
  time (h),pressure (bar),temperature (degC)
  0,152.0,21.0
  6,151.3,19.5
Uncertainty (GUM): each reading MPE/sqrt(3) from --gauge-class x --gauge-range, (+) --resolution/sqrt(12)
when given, each temperature --t-uncertainty; the log fit adds its standard error.
"""


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


def _add_journal(p: argparse.ArgumentParser) -> None:
    p.add_argument("--journal", metavar="PATH", default=argparse.SUPPRESS,
                   help="session journal file (default: user data dir, or $GASBENCH_JOURNAL)")


def _add_gas(p: argparse.ArgumentParser) -> None:
    p.add_argument("--gas", required=True,
                   help="nitrogen, air, argon, helium, neon, krypton, xenon, oxygen, hydrogen, co2, sf6, "
                        "or a mixture by mole fraction 'helium:0.8,nitrogen:0.135,co2:0.065'")


def _add_flow_reference(p: argparse.ArgumentParser) -> None:
    p.add_argument("--flow-reference", default=None, metavar="REF",
                   help="reference condition of sccm/slpm flows: 0C (default), 15C, 20C or 70F "
                        "(Nm3 stays at 0 degC, scfh/scfm at 70 degF)")


def _add_json(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", action="store_true", help="print SI results as JSON")


def _gas(args: argparse.Namespace) -> Any:
    from gasbench.gas import parse_gas

    return parse_gas(args.gas)


def _bar(abs_pa: float, ambient: float) -> str:
    from gasbench.units import fmt_pressure

    if abs_pa < 1e4:  # low pressures read better in mbar(a)
        return f"{fmt_pressure(abs_pa, ambient)} = {fmt_pressure(abs_pa, ambient, 'mbar', kind='absolute')}"
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
    if c.mass_kg is None:
        # no pressure-based contents: the same one line and exit status in text and JSON modes
        if c.phase == "liquid-full":
            raise _input(c.notes[0])
        raise _input(c.notes[0] + " Use --gross and --tare.")
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
    assert c.free_volume_m3 is not None
    if c.density_kg_m3 is not None:
        rows += [("density", f"{c.density_kg_m3:.3f} kg/m³"), ("Z", f"{c.z:.4f}")]
    if c.phase == "two-phase":
        rows.append(("phase", f"two-phase: vapour fraction {c.vapour_fraction:.2f} (by moles)"))
    if c.filling_ratio_kg_l is not None:
        rows.append(("filling ratio", f"{c.filling_ratio_kg_l:.3f} kg/L" + (" (OVERFILLED)" if c.overfilled else "")))
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
    flows = [parse_flow(f, reference=args.flow_reference) for f in args.flow]
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


# ----------------------------------------------------------------------------- plan


def plan_json(plan: Any) -> dict[str, Any]:
    """The plan as a JSON-ready dict (SI numbers, unit in the key name)."""
    from dataclasses import asdict

    d = asdict(plan)
    for sp_ in d["supplies"]:
        sp_["hours_band_low"], sp_["hours_band_high"] = sp_.pop("hours_band")
    return d


def cmd_plan(args: argparse.Namespace) -> int:
    from gasbench.plan import build_plan
    from gasbench.profile import load_profile

    prof = load_profile(args.profile)
    extra = 0.0
    if args.leak:
        from gasbench.room import leak_volume_flow

        gas = prof.supplies[0].gas
        extra = leak_volume_flow(gas, args.leak, prof.ambient.temperature, prof.ambient_pa)
    plan = build_plan(prof, extra_leak_m3_s=extra)
    if args.json:
        emit_json(plan_json(plan))
        return 0
    print(format_plan(plan))
    return 0


def format_plan(plan: Any) -> str:
    """Human-readable plan (aligned text, (g)/(a) marks)."""
    from gasbench.plan import SEVERITY_MARK
    from gasbench.units import fmt_hours, fmt_pressure

    amb = plan.ambient_pa
    g_ = lambda x: fmt_pressure(x, amb)  # noqa: E731
    out = [f"Plan: {plan.bench_name}",
           f"  session {fmt_hours(plan.session_hours)} from {plan.start[11:16]}; ambient "
           f"{fmt_pressure(amb, kind='absolute')}, {plan.temperature_k - 273.15:.1f} °C; "
           + ("fits" if plan.fits else "DOES NOT FIT"), "", "Supplies"]
    for s in plan.supplies:
        band = f" (gauge band {fmt_hours(s.hours_band[0])} – {fmt_hours(s.hours_band[1])})" if s.hours_band[0] != s.hours_band[1] else ""
        out += [f"  {s.id}: {s.gas_name}" + (" (liquefied; by weight)" if s.liquefied else ""),
                f"    now {g_(s.pressure_abs_pa)}, {s.temperature_k - 273.15:.1f} °C; reserve {g_(s.reserve_abs_pa)}",
                f"    contents {s.mass_kg:.3f} kg = {s.free_volume_m3:.3f} m³ at {s.reference_label}; usable {s.usable_mass_kg:.3f} kg",
                f"    draw {s.draw_kg_s * 6e4:.3f} g/min; to reserve {fmt_hours(s.hours_to_reserve)}{band}"
                + (f", at {s.reserve_at[11:16]}" if s.reserve_at else "")]
        if s.shots_to_reserve:
            out.append(f"    shots to reserve {s.shots_to_reserve:,.0f}")
        if s.cost_per_hour is not None:
            out.append(f"    gas cost {s.cost_per_hour:.2f} {s.currency}/h")
    out += ["", "Regulators"]
    for r in plan.regulators:
        out.append(f"  {r.id} on {r.supply_id} ({r.stages}-stage): outlet {g_(r.set_point_abs_pa)} → "
                   f"{g_(r.outlet_at_reserve_abs_pa)} at reserve; gas leaves at {r.outlet_temperature_k - 273.15:.1f} °C")
    out += ["", "Draws"]
    for d in plan.draws:
        out.append(f"  {d.id} ({d.kind}, {d.regulator_id}): {d.how} = {d.standard_flow_slpm:.3f} slpm at 0 °C, 1 atm"
                   + ("" if d.vents_to_room else "; not vented to the room"))
        if d.gap:
            out.append(f"    fires at ≈ {d.gap.breakdown_start_kv:.1f} kV → {d.gap.breakdown_reserve_kv:.1f} kV at reserve "
                       f"[{d.gap.method}]")
            for m0, m1 in zip(d.gap.margins_start, d.gap.margins_reserve, strict=True):
                out.append(f"    {m0.part}: withstands ≈ {m0.withstand_kv:.1f} kV, margin {m0.margin_kv:+.1f} → "
                           f"{m1.margin_kv:+.1f} kV ({m1.status})")
    if plan.room:
        rm_ = plan.room
        out += ["", "Room",
                f"  {rm_.volume_m3:g} m³, ventilation {rm_.ventilation_m3_s * 3600:.0f} m³/h ({rm_.ventilation_kind})",
                f"  all of {rm_.release_supply_id} released: {rm_.release.o2_percent_after_release:.1f} % O2 "
                f"({rm_.release.method}); well mixed {rm_.release_mixed.o2_percent_after_release:.1f} %"]
        if rm_.leak:
            out.append(f"  vented draws {rm_.vented_m3_s * 6e4:.2f} L/min: steady {rm_.leak.o2_percent_steady:.2f} % O2")
        out += [f"  {n}" for n in rm_.notes]
    out += ["", "Findings"]
    if not plan.findings:
        out.append("  none")
    for f in plan.findings:
        out.append(f"  {SEVERITY_MARK[f.severity]:<12} {f.subject}: {f.text} [{f.figure}]")
    out += ["", "Estimates only: follow local codes, the gas supplier's safety data sheet and your lab's procedures."]
    return "\n".join(out)


def cmd_throttle(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench.regulator import throttle
    from gasbench.units import parse_pressure, parse_temperature

    gas = _gas(args)
    amb = _ambient(args)
    p_in = parse_pressure(args.inlet, amb, "inlet pressure").abs_pa
    p_out = parse_pressure(args.outlet, amb, "outlet pressure").abs_pa
    t = throttle(gas, p_in, p_out, parse_temperature(args.temperature))
    if args.json:
        emit_json(asdict(t))
        return 0
    emit_table("Regulator outlet (isenthalpic)", [
        ("gas", t.gas_name), ("inlet", f"{_bar(p_in, amb)} at {t.inlet_temperature_k - 273.15:.1f} °C"),
        ("outlet", _bar(p_out, amb)),
        ("outlet temperature", f"{t.outlet_temperature_k - 273.15:.1f} °C ({t.temperature_change_k:+.1f} K)"),
        ("solid forms", "yes" if t.solid_forms else "no"), ("liquid forms", "yes" if t.liquid_forms else "no"),
        ("method", t.method)], t.notes)
    return 0


def cmd_gap(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench.gap import breakdown
    from gasbench.units import parse_length, parse_pressure, parse_temperature

    gas = _gas(args)
    amb = _ambient(args)
    p = parse_pressure(args.pressure, amb, "gap pressure").abs_pa
    b = breakdown(gas, parse_length(args.spacing, "gap spacing"), p, parse_temperature(args.temperature))
    if args.json:
        d = asdict(b)
        if not b.within_validity:
            d["breakdown_kv"] = None  # no figure outside the methods' validity
        emit_json(d)
        return 0
    if not b.within_validity:
        shown = "WARNING: outside the validity of the methods (below)"
    elif math.isfinite(b.breakdown_kv):
        shown = f"{b.breakdown_kv:.2f} kV"
    else:
        shown = "none predicted: p·d is left of the Paschen curve's asymptote"
    emit_table("Spark gap self-breakdown (estimate)", [
        ("gas", b.gas_name), ("spacing", f"{b.spacing_m * 1000:g} mm"), ("pressure", _bar(p, amb)),
        ("p·d at 20 °C", f"{b.pd_bar_cm_20c:.4g} bar·cm"),
        ("breakdown", shown),
        ("method", b.method), ("valid for", b.validity)],
        ["real gaps differ (electrode shape, surface, pulse rise time): treat as an estimate"])
    return 0


def cmd_orifice(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench.flow import orifice_flow
    from gasbench.units import parse_length, parse_pressure, parse_temperature

    gas = _gas(args)
    amb = _ambient(args)
    up = parse_pressure(args.upstream, amb, "upstream pressure").abs_pa
    down = parse_pressure(args.downstream, amb, "downstream pressure").abs_pa
    o = orifice_flow(gas, parse_length(args.diameter, "orifice diameter"), up, down,
                     parse_temperature(args.temperature), args.cd)
    if args.json:
        emit_json(asdict(o))
        return 0
    emit_table("Orifice flow", [
        ("gas", gas.name), ("upstream", _bar(up, amb)), ("downstream", _bar(down, amb)),
        ("flow", f"{o.mass_flow_kg_s * 6e4:.4g} g/min = {o.standard_flow_slpm:.4g} slpm at 0 °C, 101.325 kPa"),
        ("regime", f"{'choked' if o.choked else 'subcritical'} (critical ratio {o.critical_ratio:.3f}, k = {o.k:.3f})"),
        ("method", o.method)])
    return 0


def cmd_room(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench import room as rm
    from gasbench.units import fmt_hours, parse_temperature, parse_volume

    gas = _gas(args)
    amb = _ambient(args)
    T = parse_temperature(args.temperature, "room temperature")
    V = parse_volume(args.room_volume, "room volume")
    if V <= 0:
        raise _input(f"room volume {args.room_volume!r} must be greater than zero")
    Q = rm.parse_ventilation(args.ventilation, V) if args.ventilation else 0.0
    notes = [rm.stratification_note(gas)]
    if args.release:
        vg = rm.release_volume(gas, args.release, T, amb)
        r = rm.release(V, vg, args.model, args.oxygen)
        hz = rm.gas_hazards(gas, r.o2_percent_after_release, args.oxygen)
        if args.json:
            emit_json(asdict(r) | {"gas": gas.name, "hazards": [asdict(h) for h in hz], "stratification": notes[0]})
            return 0
        emit_table("Room oxygen after a sudden release", [
            ("gas", gas.name), ("room", f"{V:g} m³"), ("released", f"{vg:.3f} m³ at room conditions"),
            ("oxygen after", f"{r.o2_percent_after_release:.2f} %"), ("effect", r.effect or "none expected (≥ 19.5 %)"),
            ("model", r.method)], list(r.notes) + [h.text for h in hz] + notes + [_CAUTION])
        return 0
    if args.ventilation and Q == 0 and args.ventilation_kind == "exhaust":
        raise _input(f"ventilation {args.ventilation!r} is zero: leave out --ventilation for an unventilated room")
    R = rm.leak_volume_flow(gas, args.leak, T, amb, args.flow_reference)
    lk = rm.leak_o2(V, R, Q, args.ventilation_kind, args.oxygen)
    hz = rm.gas_hazards(gas, lk.o2_percent_steady, args.oxygen)
    if args.json:
        emit_json(asdict(lk) | {"gas": gas.name, "model": lk.method, "hazards": [asdict(h) for h in hz],
                                "stratification": notes[0]})
        return 0
    mins = lambda m: fmt_hours(m / 60.0)  # noqa: E731
    emit_table("Room oxygen with a continuous leak", [
        ("gas", gas.name), ("room", f"{V:g} m³"), ("leak", f"{R * 6e4:.3f} L/min at room conditions"),
        ("ventilation", f"{Q * 3600:.1f} m³/h ({args.ventilation_kind})" if Q else "none"),
        ("steady oxygen", f"{lk.o2_percent_steady:.2f} %"), ("to 19.5 %", mins(lk.minutes_to_19_5)),
        ("to 18 %", mins(lk.minutes_to_18)), ("recovery to 19.5 %", mins(lk.minutes_to_recover)),
        ("effect", lk.effect or "none expected (≥ 19.5 %)"), ("model", lk.method)],
        [h.text for h in hz] + notes + [_CAUTION])
    return 0


def cmd_hold(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench import hold as hd
    from gasbench.units import (
        fmt_hours,
        parse_duration,
        parse_length,
        parse_pressure,
        parse_temperature,
        parse_temperature_difference,
        parse_volume,
    )

    gas = _gas(args)
    amb = _ambient(args)
    if args.volume:
        V = parse_volume(args.volume, "held volume")
    elif args.line_length and args.bore:
        V = hd.line_volume(parse_length(args.line_length, "line length"), parse_length(args.bore, "bore"))
    else:
        raise _input("give the held --volume, or --line-length and --bore of the line")
    if V <= 0:
        raise _input(f"held volume {args.volume!r} must be greater than zero")
    gauge = None
    if (args.gauge_range is None) != (args.gauge_class is None):
        raise _input("--gauge-range and --gauge-class go together")
    if args.gauge_range:
        if not (0 < args.gauge_class <= 5):
            raise _input(f"gauge class {args.gauge_class:g} must be between 0 and 5 (EN 837-1 classes 0.1 to 4)")
        span = parse_pressure(args.gauge_range, amb, "gauge range").gauge_pa(amb)
        if span <= 0:
            raise _input(f"gauge range {args.gauge_range!r} must be above zero")
        res = parse_pressure(args.resolution, 0.0, "resolution").abs_pa if args.resolution else None
        gauge = hd.GaugeSpec(span, args.gauge_class, res)
    u_T = parse_temperature_difference(args.t_uncertainty) if args.t_uncertainty else hd.U_T_DEFAULT
    target = hd.target_sccm(gas, args.target) if args.target else None
    reserve = parse_pressure(args.reserve, amb, "reserve").abs_pa if args.reserve else None
    fit = None
    if args.log:
        from pathlib import Path

        try:
            text = Path(args.log).read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError) as exc:
            raise _input(f"cannot read log {args.log}: {exc}") from None
        T_def = parse_temperature(args.t_start) if args.t_start else 293.15
        fit = hd.hold_from_log(gas, V, hd.parse_log(text, args.pressure_unit, amb), gauge, T_def, u_T, target,
                               reserve, amb)
        r = fit.result
    else:
        if not (args.start and args.end and args.duration):
            raise _input("give --start, --end and --duration (or --log FILE.csv)")
        r = hd.hold_two_readings(
            gas, V, parse_pressure(args.start, amb, "start pressure").abs_pa,
            parse_pressure(args.end, amb, "end pressure").abs_pa, parse_duration(args.duration, "hold duration"),
            parse_temperature(args.t_start, "start temperature") if args.t_start else None,
            parse_temperature(args.t_end, "end temperature") if args.t_end else None,
            gauge, u_T, target, reserve, amb)
    _record_hold(args, gas, r)
    if args.json:
        d = asdict(r)
        if fit is not None:
            d |= {"log_rows": fit.n, "slope_se_kg_s": fit.slope_se_kg_s, "residual_rms_kg": fit.residual_rms_kg,
                  "residual_max_kg": fit.residual_max_kg, "residual_rms_pa": fit.residual_rms_pa,
                  "curvature_significant": bool(fit.curvature_significant)}
        emit_json(d | {"guidance": list(hd.GUIDANCE)})
        return 0
    words = {"leak": "LEAK: the mass loss is larger than its uncertainty",
             "no-leak-resolved": f"no leak above {r.leak_rate_sccm + r.smallest_resolvable_sccm:.3g} sccm "
                                 f"(smallest this test resolves: {r.smallest_resolvable_sccm:.3g} sccm)",
             "inconclusive": "INCONCLUSIVE: this gauge cannot tell; hold longer or use a finer gauge"}
    rows = [("gas", gas.name), ("volume", f"{V * 1000:.4g} L"),
            ("start", f"{_bar(r.start_abs_pa, amb)} at {r.start_temperature_k - 273.15:.1f} °C"),
            ("end", f"{_bar(r.end_abs_pa, amb)} at {r.end_temperature_k - 273.15:.1f} °C"),
            ("hold", fmt_hours(r.duration_s / 3600)),
            ("mass loss", f"{r.mass_loss_kg * 1000:.3f} ± {r.mass_loss_uncertainty_kg * 1000:.3f} g (1σ)"),
            ("leak rate", f"{r.leak_rate_sccm:.4g} ± {r.leak_rate_uncertainty_sccm:.3g} sccm (0 °C, 101.325 kPa; 1σ)"),
            ("", f"{r.leak_rate_pa_m3_s:.3g} Pa·m³/s = {r.leak_rate_mbar_l_s:.3g} mbar·L/s"),
            ("", f"{r.kg_per_day * 1000:.3g} g/day = {r.percent_per_day:.3g} % of contents/day = "
                 f"{r.pressure_fall_per_day_pa / 1e5:.3g} bar/day at constant temperature"),
            ("verdict", words[r.verdict]),
            ("target", f"{r.target_sccm:.3g} sccm; hold needed to resolve it ≈ {fmt_hours(r.hold_needed_h)}"),
            ("to empty at this rate", fmt_hours(r.hours_to_empty) if r.leak_rate_kg_s > 0 else "—")]
    if r.hours_to_reserve is not None:
        rows.append(("to reserve at this rate", fmt_hours(r.hours_to_reserve)))
    if fit is not None:
        rows.append(("log fit", f"{fit.n} rows; residual rms {fit.residual_rms_pa / 1e5:.3g} bar, "
                                f"max {fit.residual_max_kg * 1000:.3g} g"))
    rows.append(("method", r.method))
    emit_table("Hold test", rows, list(r.notes) + list(hd.GUIDANCE[-2:]))
    if fit is not None and sys.stdout.isatty():
        _terminal_plot(fit)
    return 0


def _journal_if_exists(args: argparse.Namespace) -> Any:
    """The journal when its file exists (commands that only read or add to it never create one)."""
    from gasbench.journal import Journal, default_path

    path = default_path(getattr(args, "journal", None))
    return Journal(path) if path.exists() else None


def cmd_checklist(args: argparse.Namespace) -> int:
    import datetime as dt
    import shutil
    import subprocess
    from pathlib import Path

    from gasbench.checklist import LastHoldTest, build_checklist
    from gasbench.checklist.render import render_html, render_markdown, render_pdf, render_text
    from gasbench.plan import build_plan
    from gasbench.profile import load_profile

    if args.format == "pdf" and not args.output:
        raise _input("--format pdf needs --output FILE")
    if args.print and not args.output:
        raise _input("--print needs --output FILE")
    prof = load_profile(args.profile)
    plan = build_plan(prof)
    last = None
    j = _journal_if_exists(args)
    if j is not None:
        row = j.last_hold_test(prof.bench.name)
        j.close()
        if row is not None:
            last = LastHoldTest(dt.datetime.fromisoformat(row.at), row.verdict, row.leak_rate_sccm,
                                row.leak_rate_uncertainty_sccm)
    cl = build_checklist(prof, plan, Path(args.profile).resolve().parent, last, operator=args.operator)
    if args.format == "pdf":
        out = render_pdf(cl, args.output)
    else:
        text = {"txt": render_text, "md": render_markdown, "html": render_html}[args.format](cl)
        if not args.output:
            sys.stdout.write(text)
            return 0
        out = Path(args.output)
        try:
            out.write_text(text, encoding="utf-8")
        except OSError as exc:
            raise _input(f"cannot write {args.output}: {exc.strerror or exc}") from None
    print(f"checklist written to {out}")
    if args.print:
        cmd = shutil.which("lp") or shutil.which("lpr")
        if cmd is None:
            sys.stderr.write(f"gasbench: no print command (lp or lpr) on this system; print {out} yourself\n")
            return 1
        r = subprocess.run([cmd, str(out)], capture_output=True, text=True)
        if r.returncode != 0:
            sys.stderr.write(f"gasbench: {Path(cmd).name} failed: {r.stderr.strip() or r.returncode}\n")
            return 1
        print(f"sent to {Path(cmd).name}")
    return 0


def cmd_sessions(args: argparse.Namespace) -> int:
    from dataclasses import asdict

    from gasbench.journal import default_path

    j = _journal_if_exists(args)
    rows = j.sessions() if j is not None else []
    if args.json:
        emit_json({"journal": str(default_path(args.journal)), "sessions": [asdict(r) for r in rows]})
        return 0
    if not rows:
        print(f"no sessions in {default_path(args.journal)}")
        return 0
    print(f"{'#':>4}  {'started':<16}  {'stopped':<16}  {'readings':>8}  bench")
    for r in rows:
        print(f"{r.id:>4}  {r.started_at[:16]:<16}  {(r.stopped_at or 'left running')[:16]:<16}  {r.readings:>8}  {r.bench}")
    return 0


def cmd_export(args: argparse.Namespace) -> int:
    from pathlib import Path

    j = _journal_if_exists(args)
    if j is None:
        raise _input("no journal yet: start a session in the app first")
    if j.session(args.session) is None:
        raise _input(f"no session {args.session} in the journal (see 'gasbench sessions')")
    text = j.export_csv(args.session)
    if args.output:
        try:
            Path(args.output).write_text(text, encoding="utf-8")
        except OSError as exc:
            raise _input(f"cannot write {args.output}: {exc.strerror or exc}") from None
        print(f"session {args.session} written to {args.output}")
    else:
        sys.stdout.write(text)
    return 0


def _record_hold(args: argparse.Namespace, gas: Any, r: Any) -> None:
    """Store a hold test in the journal when the journal exists (tagged with --bench if given)."""
    import datetime as dt
    import json as _json

    j = _journal_if_exists(args)
    if j is None:
        return
    with j:
        j.add_hold_test(dt.datetime.now().astimezone().isoformat(timespec="seconds"), args.bench, args.supply,
                        gas.name, r.volume_m3, r.duration_s, r.verdict, r.leak_rate_sccm, r.leak_rate_uncertainty_sccm,
                        _json.dumps({"start_abs_pa": r.start_abs_pa, "end_abs_pa": r.end_abs_pa}))


def _terminal_plot(fit: Any) -> None:
    import plotext as plt

    hours = [t / 3600 for t in fit.t_s]
    plt.clear_figure()
    plt.plot_size(80, 18)
    plt.scatter(hours, [m * 1000 for m in fit.mass_kg], label="held mass (g)")
    plt.plot(hours, [m * 1000 for m in fit.fit_kg], label="least-squares fit")
    plt.xlabel("hours")
    plt.show()


_CAUTION = ("estimate only: use a fixed oxygen monitor with alarm where gas can accumulate; follow local codes "
            "and the gas supplier's safety data sheet")


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
    _add_gas(p)
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
    _add_gas(p)
    p.add_argument("--pressure", required=True, help="reading now, e.g. '200 bar'")
    p.add_argument("--temperature", required=True, help="temperature now, e.g. '15 degC'")
    p.add_argument("--to", required=True, help="temperature to evaluate, e.g. '50 degC'")
    p.add_argument("--service", help="service (working) pressure, e.g. '200 bar'")
    p.add_argument("--test", help="test pressure stamped on the cylinder, e.g. '300 bar'")
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_heat)

    p = sub.add_parser("runtime", help="hours until the reserve at given draws")
    _add_gas(p)
    p.add_argument("--volume", required=True)
    p.add_argument("--pressure", required=True)
    p.add_argument("--temperature", required=True)
    p.add_argument("--reserve", required=True, help="pressure at which to close or swap, e.g. '10 bar'")
    p.add_argument("--flow", required=True, action="append", help="a draw, e.g. '2 slpm'; repeat for more")
    _add_flow_reference(p)
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_runtime)

    _add_more_commands(sub)
    return ap


def _add_more_commands(sub: Any) -> None:
    """Sub-commands of the plan, hold-test, room, checklist and journal layers."""
    p = sub.add_parser("plan", help="session plan of a bench profile: run time, regulators, gaps, findings")
    p.add_argument("profile", help="bench profile (TOML)")
    p.add_argument("--leak", help="add a leak into the room, e.g. a hold test's '12 sccm' (of the largest supply's gas)")
    _add_json(p)
    p.set_defaults(func=cmd_plan)

    p = sub.add_parser("throttle", help="regulator outlet temperature (isenthalpic expansion)")
    _add_gas(p)
    p.add_argument("--inlet", required=True, help="inlet pressure, e.g. '150 bar'")
    p.add_argument("--outlet", required=True, help="outlet pressure, e.g. '3 bar'")
    p.add_argument("--temperature", required=True, help="inlet temperature, e.g. '20 degC'")
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_throttle)

    p = sub.add_parser("gap", help="estimated self-breakdown (firing) voltage of a spark gap")
    _add_gas(p)
    p.add_argument("--spacing", required=True, help="electrode spacing, e.g. '2 mm'")
    p.add_argument("--pressure", required=True, help="gap pressure, e.g. '3 bar' (gauge) or '400 Torr'")
    p.add_argument("--temperature", default="20 degC", help="gas temperature (default 20 degC)")
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_gap)

    p = sub.add_parser("orifice", help="flow through a bleed orifice or needle valve bore")
    _add_gas(p)
    p.add_argument("--diameter", required=True, help="bore, e.g. '0.2 mm'")
    p.add_argument("--upstream", required=True, help="upstream pressure, e.g. '2 bar'")
    p.add_argument("--downstream", required=True, help="downstream pressure, e.g. '50 mbar(a)' or '0 bar'")
    p.add_argument("--temperature", required=True)
    p.add_argument("--cd", type=float, default=0.62, help="discharge coefficient (default 0.62)")
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_orifice)

    p = sub.add_parser("hold", help="leak rate from an idle pressure drop (hold test)",
                       formatter_class=argparse.RawDescriptionHelpFormatter, epilog=HOLD_LOG_FORMAT)
    _add_gas(p)
    p.add_argument("--volume", help="held volume: cylinder water volume or trapped line volume, e.g. '50 L'")
    p.add_argument("--line-length", help="or compute the line volume: tube length, e.g. '3 m'")
    p.add_argument("--bore", help="... and inner diameter, e.g. '4 mm'")
    p.add_argument("--start", help="gauge reading at the start, e.g. '152 bar'")
    p.add_argument("--end", help="gauge reading at the end, e.g. '150 bar'")
    p.add_argument("--duration", help="hold time, e.g. '14 h'")
    p.add_argument("--t-start", help="temperature at the start, e.g. '21 degC'")
    p.add_argument("--t-end", help="temperature at the end, e.g. '17 degC'")
    p.add_argument("--t-uncertainty", default=None,
                   help="standard uncertainty of each temperature (default 0.5 K; 1 K when no temperatures are given)")
    p.add_argument("--gauge-range", help="gauge full scale, e.g. '250 bar'")
    p.add_argument("--gauge-class", type=float, help="gauge accuracy class (EN 837-1), e.g. 1.6")
    p.add_argument("--resolution", help="smallest reading step, e.g. '1 bar'; adds resolution/√12 to each "
                                        "reading's MPE/√3 (default: none beyond the class)")
    p.add_argument("--target", help="leak rate that matters, e.g. '10 sccm' (default 1 %% of contents per day)")
    p.add_argument("--reserve", help="reserve pressure, for time to reserve at this leak")
    p.add_argument("--log", metavar="FILE.csv", help="logged series instead of two readings")
    p.add_argument("--pressure-unit", help="pressure unit of the log if not in its header, e.g. 'bar' or 'psia'")
    p.add_argument("--bench", help="bench name to file the test under in the journal (as in the profile)")
    p.add_argument("--supply", help="supply id to file the test under in the journal")
    _add_journal(p)
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_hold)

    p = sub.add_parser("checklist", help="pre-session checklist filled with this bench's figures")
    p.add_argument("profile", help="bench profile (TOML)")
    p.add_argument("--format", choices=["txt", "md", "html", "pdf"], default="txt")
    p.add_argument("--output", metavar="FILE", help="write to FILE (required for pdf)")
    p.add_argument("--operator", help="operator's name for the sign-off")
    p.add_argument("--print", action="store_true", help="send the written file to the system's print command")
    _add_journal(p)
    p.set_defaults(func=cmd_checklist)

    p = sub.add_parser("open", help="open the app on a bench profile")
    p.add_argument("profile", help="bench profile (TOML)")
    _add_journal(p)
    p.set_defaults(func=lambda a: _run_app(a, a.profile))

    p = sub.add_parser("sessions", help="list the sessions in the journal")
    _add_journal(p)
    _add_json(p)
    p.set_defaults(func=cmd_sessions)

    p = sub.add_parser("export", help="write one session's readings out")
    p.add_argument("session", type=int, help="session number (see 'gasbench sessions')")
    p.add_argument("--format", choices=["csv"], default="csv")
    p.add_argument("--output", metavar="FILE", help="write to FILE instead of standard output")
    _add_journal(p)
    p.set_defaults(func=cmd_export)

    p = sub.add_parser("room", help="room oxygen after a release or during a leak")
    _add_gas(p)
    p.add_argument("--room-volume", required=True, help="room volume, e.g. '40 m3'")
    g1 = p.add_mutually_exclusive_group(required=True)
    g1.add_argument("--release", help="sudden release: free-gas volume at room conditions ('9 m3') or a mass ('11 kg')")
    g1.add_argument("--leak", help="continuous leak or vented draw: '5 slpm', '2 L/min', '3 g/min'")
    p.add_argument("--ventilation", help="air changes per hour ('2/h') or a flow ('60 m3/h')")
    p.add_argument("--ventilation-kind", choices=["exhaust", "supply"], default="exhaust")
    p.add_argument("--model", choices=["displacement", "mixed", "sealed"], default="displacement",
                   help="release model (default displacement, the most conservative)")
    p.add_argument("--temperature", default="20 degC", help="room temperature (default 20 degC)")
    p.add_argument("--oxygen", type=float, default=20.95, help="initial oxygen, %% (default 20.95)")
    _add_flow_reference(p)
    _add_ambient(p)
    _add_json(p)
    p.set_defaults(func=cmd_room)


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
    except BrokenPipeError:
        # the reader went away (``gasbench plan --json | head``): stop quietly, and keep Python
        # from complaining again when it flushes standard output at exit
        import os

        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0


def _run_app(args: argparse.Namespace, profile_path: str | None) -> int:
    from gasbench.tui.app import run_app

    return run_app(profile_path, getattr(args, "journal", None))
