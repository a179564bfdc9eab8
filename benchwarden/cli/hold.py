"""The ``hold`` command: a leak rate from an idle pressure drop."""

from __future__ import annotations

import argparse
import datetime as dt
import sys
from dataclasses import asdict
from typing import Any

from benchwarden.cli.common import (
    add_ambient,
    add_display,
    add_gas,
    add_journal,
    add_json,
    computation,
    emit_json,
    emit_table,
    given,
    input_error,
    journal_if_exists,
    number,
    one_line,
)
from benchwarden.errors import JournalError
from benchwarden.render.budget import budget_assumption
from benchwarden.render.hold import hold_notes, hold_rows
from benchwarden.units import (
    parse_duration,
    parse_flow,
    parse_length,
    parse_temperature,
    parse_temperature_difference,
    parse_volume,
    pressure_abs,
)
from benchwarden.units.limits import conflict, in_range, within
from benchwarden.workflows import computations as comp
from benchwarden.workflows import hold_runs, holds
from benchwarden.workflows.ranges import read_log

HOLD_LOG_FORMAT = """\
log file (--log): CSV with a header row, comma-separated, decimal points (a semicolon-separated
file is read too; decimal commas and thousands separators are refused), '#' lines ignored:
  time       elapsed time with its unit in the header ('time (min)', 'elapsed_h'; s, min, h, d)
             or ISO 8601 timestamps ('2026-11-27T18:00', all with or all without a UTC offset)
  pressure   gauge unless the unit says absolute: 'pressure (bar)', 'pressure (psia)', 'p_bar'
             (or give --log-unit)
  temperature  optional: 'temperature (degC)', 'T_K'; without it the temperature is taken as
             constant (--t-start, default 20 degC) with 1 K uncertainty
example (examples/hold-log.csv in the source):
  time (h),pressure (bar),temperature (degC)
  0,152.0,21.0
  6,151.3,19.5
Uncertainty (GUM): each reading MPE/sqrt(3) from --gauge-class x --gauge-range, (+) --resolution/sqrt(12)
when given, each temperature --t-uncertainty; the log fit adds its standard error.
"""


def configure(sub: Any, name: str) -> None:
    p = sub.add_parser("hold", help="leak rate from an idle pressure drop (hold test)",
                       formatter_class=argparse.RawDescriptionHelpFormatter, epilog=HOLD_LOG_FORMAT)
    add_gas(p)
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
    p.add_argument("--gauge-class", type=number, help="gauge accuracy class (EN 837-1), e.g. 1.6")
    p.add_argument("--gauge-repeatability", help="the maker's repeatability (± limit), used for the difference "
                                                 "of the two readings, e.g. '0.05 bar'")
    p.add_argument("--resolution", help="smallest reading step, e.g. '1 bar'; adds resolution/√12 to each "
                                        "reading's MPE/√3 (default: none beyond the class)")
    p.add_argument("--target", help="leak rate that matters, e.g. '10 sccm' (default 1 %% of contents per day)")
    p.add_argument("--reserve", help="reserve pressure, for time to reserve at this leak")
    p.add_argument("--log", metavar="FILE.csv", help="logged series instead of two readings (format below)")
    p.add_argument("--log-unit", help="pressure unit of the log if not in its header, e.g. 'bar' or 'psia'")
    p.add_argument("--bench", help="bench name to file the test under in the journal (as in the profile)")
    p.add_argument("--supply", help="supply id to file the test under in the journal")
    add_journal(p)
    add_ambient(p)
    add_display(p)
    add_json(p)
    p.set_defaults(func=cmd_hold)


def _gauge(args: argparse.Namespace, amb: float) -> comp.GaugeSpec | None:
    if (args.gauge_range is None) != (args.gauge_class is None):
        raise input_error("--gauge-range and --gauge-class go together")
    if args.gauge_repeatability is not None and args.gauge_range is None:
        raise input_error("--gauge-repeatability needs --gauge-range and --gauge-class")
    if args.gauge_range is None:
        if args.resolution:
            raise input_error("--resolution needs --gauge-range and --gauge-class")
        return None
    span = pressure_abs(args.gauge_range, amb, "gauge range") - amb
    res = (within(pressure_abs(args.resolution, 0.0, "resolution"), "resolution", 0.01, span, "Pa", text=args.resolution,
                  words="from 0.01 Pa to the gauge range") if args.resolution else None)
    rep = (pressure_abs(args.gauge_repeatability, amb, "gauge repeatability") - amb
           if args.gauge_repeatability is not None else None)
    return holds.gauge_spec(span, args.gauge_class, res, rep)


def _volume(args: argparse.Namespace) -> float:
    """The held volume: given, or computed from the line's length and bore (not both)."""
    conflict(given(args, "--volume", "--line-length", "--bore") if args.volume else [],
             "the held volume is given, or computed from the line's length and bore")
    if args.volume:
        V = parse_volume(args.volume, "held volume")
    elif args.line_length and args.bore:
        L = in_range("line length", parse_length(args.line_length, "line length"), text=args.line_length)
        bore = in_range("bore", parse_length(args.bore, "bore"), text=args.bore)
        V = comp.line_volume(L, bore)
    else:
        raise input_error("give the held --volume, or --line-length and --bore of the line")
    return in_range("held volume", V, text=args.volume)


def _reserve(args: argparse.Namespace, amb: float) -> float | None:
    """The reserve: from 0 bar(g) to below the start pressure (when two readings are given)."""
    if not args.reserve:
        return None
    reserve = pressure_abs(args.reserve, amb, "reserve")
    start = pressure_abs(args.start, amb, "start pressure") if args.start and not args.log else None
    hi = start - amb if start is not None else 2e8
    within(reserve - amb, "reserve", 0.0, hi, "Pa(g)", text=args.reserve, hi_open=start is not None,
           hi_name="the start pressure" if start is not None else "")
    return reserve


def cmd_hold(args: argparse.Namespace) -> int:
    g_, amb, d = computation(args)
    if args.log:
        conflict(["--log", *given(args, "--start", "--end", "--duration")],
                 "a log's readings replace the two readings and their duration")
    V = _volume(args)
    gauge = _gauge(args, amb)
    u_T = (in_range("temperature uncertainty", parse_temperature_difference(args.t_uncertainty),
                    text=args.t_uncertainty)
           if args.t_uncertainty else comp.U_T_DEFAULT)
    target = comp.target_sccm(g_, parse_flow(args.target, what="target leak rate")) if args.target else None
    if target is not None:
        in_range("target leak rate", target, text=args.target)
    reserve = _reserve(args, amb)
    given_to = {"gauge": gauge, "u_T": u_T, "target_sccm": target, "reserve_abs": reserve, "ambient_pa": amb,
                "supply_id": args.supply}
    if args.log:
        run = hold_runs.compute(g_, V, log_text=read_log(args.log), log_unit=args.log_unit,
                                t_default_k=parse_temperature(args.t_start) if args.t_start else 293.15, **given_to)
    else:
        if not (args.start and args.end and args.duration):
            raise input_error("give --start, --end and --duration (or --log FILE.csv)")
        run = hold_runs.compute(
            g_, V, start_abs_pa=pressure_abs(args.start, amb, "start pressure"),
            end_abs_pa=pressure_abs(args.end, amb, "end pressure"),
            duration_s=in_range("hold duration", parse_duration(args.duration, "hold duration"), text=args.duration),
            t_start_k=parse_temperature(args.t_start, "start temperature") if args.t_start else None,
            t_end_k=parse_temperature(args.t_end, "end temperature") if args.t_end else None, **given_to)
    r, fit = run.result, run.fit
    saved = _record(args, run)
    if args.json:
        out = asdict(r) | {"saved_to_journal": saved, "budget_assumption": budget_assumption(r)}
        if fit is not None:
            out |= {"log_rows": fit.n, "slope_se_kg_s": fit.slope_se_kg_s, "residual_rms_kg": fit.residual_rms_kg,
                    "residual_max_kg": fit.residual_max_kg, "residual_rms_pa": fit.residual_rms_pa,
                    "curvature_significant": bool(fit.curvature_significant)}
        emit_json(out | {"guidance": list(comp.GUIDANCE)})
        return 0
    emit_table("Hold test", hold_rows(run, d), hold_notes(run, d) + list(hold_runs.GUIDANCE[-2:]))
    if fit is not None and sys.stdout.isatty():
        _terminal_plot(fit)
    return 0


def _record(args: argparse.Namespace, run: hold_runs.HoldRun) -> bool:
    """Store the hold test in the journal when the journal exists (tagged with --bench/--supply)."""
    try:
        j = journal_if_exists(args)
        if j is None:
            return False
        with j:
            hold_runs.record(j, run, dt.datetime.now().astimezone(), args.bench)
    except JournalError as exc:
        # the result still counts: print it, and say it was not stored
        sys.stderr.write(one_line(f"benchwarden: warning: the hold test was not stored: {exc}") + "\n")
        return False
    return True


def _terminal_plot(fit: comp.LogFit) -> None:
    import plotext as plt

    hours = [t / 3600 for t in fit.t_s]
    plt.clear_figure()
    plt.plot_size(80, 18)
    plt.scatter(hours, [m * 1000 for m in fit.mass_kg], label="held mass (g)")
    plt.plot(hours, [m * 1000 for m in fit.fit_kg], label="least-squares fit")
    plt.xlabel("hours")
    plt.show()
