"""The plan as text and as JSON (SI numbers, the unit in the key name)."""

from __future__ import annotations

import datetime as dt
from dataclasses import asdict
from typing import Any

from benchwarden.render.display import Display
from benchwarden.render.findings import SEVERITY_MARK, describe, finding_dict
from benchwarden.render.numbers import fmt_count
from benchwarden.render.room import room_lines
from benchwarden.render.supply import mass_words, supply_state_words
from benchwarden.workflows.bench import Assessment
from benchwarden.workflows.findings import counts

__all__ = ["plan_json", "format_plan", "CAUTION_LINE"]

CAUTION_LINE = ("Estimates only: follow local codes, the gas supplier's safety data sheet and your lab's "
                "procedures; an estimate is never a guarantee of safety.")


def plan_json(a: Assessment, display: Display | None = None) -> dict[str, Any]:
    """The assessed plan as a JSON-ready dict: the plan's records (SI), every finding with its
    code, severity and numbers, and the latest hold test."""
    d = asdict(a.plan)
    for sp_ in d["supplies"]:
        sp_["hours_band_low"], sp_["hours_band_high"] = sp_.pop("hours_band")
    if d.get("room") is not None and a.plan.room is not None:
        d["room"]["o2_percent_worst_case"] = a.plan.room.o2_percent_worst_case
    d["findings"] = [finding_dict(f, display) for f in a.findings]
    d["finding_counts"] = counts(a.findings)
    d["last_hold_test"] = None if a.last_hold is None else asdict(a.last_hold) | {"at": a.last_hold.at.isoformat()}
    return d


def _start(plan: object) -> dt.datetime:
    return dt.datetime.fromisoformat(plan.start)  # type: ignore[attr-defined]


def format_plan(a: Assessment, display: Display | None = None) -> str:
    """Human-readable plan (aligned text, (g)/(a) marks, in the display's pressure unit)."""
    plan = a.plan
    d = display or Display(ambient_pa=plan.ambient_pa)
    out = [f"Plan: {plan.bench_name}",
           f"  session {d.hours(plan.session_hours)} from {d.clock(plan.start)}; ambient "
           f"{d.absolute(plan.ambient_pa)}, {d.temperature(plan.temperature_k)}; "
           + ("fits" if plan.fits else "DOES NOT FIT"), "", "Supplies"]
    for s in plan.supplies:
        band = (f" (gauge band {d.hours(s.hours_band[0])} – {d.hours(s.hours_band[1])})"
                if s.hours_band[0] != s.hours_band[1] else "")
        out += [f"  {s.id}: {s.gas_name}" + (" (liquefied; by weight)" if s.liquefied else ""),
                f"    now {d.gauge(s.pressure_abs_pa, a.steps.get(s.id))}, {d.temperature(s.temperature_k)}; "
                f"reserve {d.gauge(s.reserve_abs_pa)}",
                f"    contents {mass_words(s.mass_kg, s.mass_uncertainty_kg)} = {s.free_volume_m3:.3f} m³ at "
                f"{s.reference_label}; usable {s.usable_mass_kg:.3f} kg",
                f"    state {supply_state_words(s, d)}",
                f"    draw {s.draw_kg_s * 6e4:.3f} g/min"
                + (f" (including the leak found, {s.leak_sccm:.3g} sccm)" if s.leak_sccm > 0 else "")
                + f"; to reserve {d.hours(s.hours_to_reserve)}{band}"
                + (f", at {d.clock(s.reserve_at, _start(plan))}" if s.reserve_at else "")]
        if s.shots_to_reserve:
            out.append(f"    shots to reserve {fmt_count(s.shots_to_reserve)}")
        if s.cost_per_hour is not None:
            out.append(f"    gas cost {s.cost_per_hour:.2f} {s.currency}/h")
    out += ["", "Regulators"]
    for r in plan.regulators:
        out.append(f"  {r.id} on {r.supply_id} ({r.stages}-stage): outlet {d.gauge(r.set_point_abs_pa)} → "
                   f"{d.gauge(r.outlet_at_reserve_abs_pa)} at reserve; gas leaves at {d.temperature(r.outlet_temperature_k)}"
                   + (f" ({r.dry_ice_margin_k:.1f} K above the dry-ice line)" if r.dry_ice_margin_k is not None else ""))
    out += ["", "Draws"]
    for dr in plan.draws:
        flow = (dr.how if "(standard, at" in dr.how
                else f"{dr.how} = {dr.standard_flow_slpm:.3g} slpm (0 °C, 101.325 kPa)")
        out.append(f"  {dr.id} ({dr.kind}, {dr.regulator_id}): {flow}"
                   + ("" if dr.vents_to_room else "; not vented to the room"))
        if dr.gap:
            if not dr.gap.within_validity:
                out.append(f"    firing voltage: no estimate (p·d {dr.gap.pd_bar_cm_max:.0f} bar·cm is beyond the methods)")
                continue
            out.append(f"    fires at ≈ {dr.gap.breakdown_start_kv:.1f} kV → {dr.gap.breakdown_reserve_kv:.1f} kV at "
                       f"reserve [{dr.gap.method}]")
            for m0, m1 in zip(dr.gap.margins_start, dr.gap.margins_reserve, strict=True):
                upper = (f", against the upper estimate {m0.firing_kv:.1f} kV"
                         if m0.firing_kv > dr.gap.breakdown_start_kv * 1.0001 else "")
                out.append(f"    {m0.part}: withstands ≈ {m0.withstand_kv:.1f} kV, margin {m0.margin_kv:+.1f} → "
                           f"{m1.margin_kv:+.1f} kV ({m1.status}{upper})")
    if plan.room:
        rm_ = plan.room
        out += ["", "Room"] + [f"  {line}" for line in room_lines(rm_)]
    out += ["", "Findings"]
    if not a.findings:
        out.append("  none")
    for f in a.findings:
        text, figure = describe(f, d)
        out.append(f"  {SEVERITY_MARK[f.severity]:<12} {f.subject}: {text} [{figure}]")
    out += ["", CAUTION_LINE]
    return "\n".join(out)
