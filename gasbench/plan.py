"""The session plan: every supply, regulator, draw and gap of a bench profile, projected over
the planned session, with ranked findings.

Method summary
--------------
* Contents and usable mass: real gas (CoolProp HEOS) at the reading and at the reserve,
  constant temperature (the reading's); liquefied gases by weight, where the pressure stays at
  the vapour pressure until the liquid is gone.
* Draws are evaluated at the regulator set point (orifice and valve flows, per-shot refresh) and
  held constant over the session, so the mass balance is exact: mass at start − draw × time =
  mass at the reserve at the time to reserve.
* Projection: supply mass falls linearly; pressure from a Z(ρ) table (see
  :class:`gasbench.gas.DensityTable`); regulator outlet by the supply-pressure effect; gap
  firing voltage at that outlet (:mod:`gasbench.gap`).
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass, field
from typing import Any, Literal

from gasbench import flow as fl
from gasbench import gap as gp
from gasbench import gas as g
from gasbench import regulator as rg
from gasbench import room as rm
from gasbench import supply as sp
from gasbench.profile import Draw, Profile, Regulator, Supply
from gasbench.units import REFERENCES

Severity = Literal["stop", "warning", "attention", "info"]
SEVERITY_RANK: dict[str, int] = {"stop": 0, "warning": 1, "attention": 2, "info": 3}
SEVERITY_MARK: dict[str, str] = {"stop": "✖ STOP", "warning": "▲ WARNING", "attention": "● ATTENTION", "info": "ℹ INFO"}
PROJECTION_POINTS = 200


@dataclass(frozen=True)
class Finding:
    severity: Severity
    code: str
    subject: str
    text: str
    figure: str


@dataclass(frozen=True)
class GapPlan:
    spacing_m: float
    breakdown_start_kv: float
    breakdown_reserve_kv: float
    method: str
    validity: str
    margins_start: tuple[gp.Margin, ...]
    margins_reserve: tuple[gp.Margin, ...]


@dataclass(frozen=True)
class DrawPlan:
    id: str
    kind: str
    regulator_id: str
    supply_id: str
    how: str
    mass_flow_kg_s: float
    standard_flow_slpm: float
    vents_to_room: bool
    choked: bool | None
    rate_hz: float | None
    gap: GapPlan | None


@dataclass(frozen=True)
class RegulatorPlan:
    id: str
    supply_id: str
    stages: int
    inlet_abs_pa: float
    set_point_abs_pa: float
    outlet_at_reserve_abs_pa: float
    outlet_temperature_k: float
    solid_forms: bool
    liquid_forms: bool
    throttle_notes: tuple[str, ...]
    inlet_rating_abs_pa: float
    supply_hot_day_abs_pa: float
    effect_total: float


@dataclass(frozen=True)
class SupplyPlan:
    id: str
    gas_name: str
    gas_short: str
    liquefied: bool
    pressure_abs_pa: float
    temperature_k: float
    reserve_abs_pa: float
    mass_kg: float
    free_volume_m3: float
    reference_label: str
    usable_mass_kg: float
    draw_kg_s: float
    hours_to_reserve: float
    hours_band: tuple[float, float]
    reserve_at: str | None
    shots_to_reserve: float | None
    cost_per_hour: float | None
    currency: str
    fits_session: bool
    projection_hours: tuple[float, ...]
    projection_pressure_abs_pa: tuple[float, ...]
    projection_outlets_abs_pa: dict[str, tuple[float, ...]] = field(default_factory=dict)
    projection_gap_kv: dict[str, tuple[float, ...]] = field(default_factory=dict)


@dataclass(frozen=True)
class RoomPlan:
    volume_m3: float
    ventilation_m3_s: float
    ventilation_kind: str
    vented_m3_s: float
    leak: rm.Leak | None
    release_supply_id: str
    release: rm.Release
    release_mixed: rm.Release
    notes: tuple[str, ...]


@dataclass(frozen=True)
class Plan:
    bench_name: str
    ambient_pa: float
    temperature_k: float
    session_hours: float
    start: str
    supplies: tuple[SupplyPlan, ...]
    regulators: tuple[RegulatorPlan, ...]
    draws: tuple[DrawPlan, ...]
    room: RoomPlan | None
    findings: tuple[Finding, ...]
    fits: bool
    method: str = __doc__.split("Method summary")[1].strip() if __doc__ else ""


# ----------------------------------------------------------------------------- helpers


def _supply_T(prof: Profile, s: Supply) -> float:
    return s.reading_temperature if s.reading_temperature is not None else prof.ambient.temperature


def _is_liquefied(gas: g.Gas, T: float, p: float | None = None) -> bool:
    """A gas sold liquefied below its critical temperature holds liquid, unless a reading
    well below its vapour pressure says only vapour is left (:func:`gasbench.gas.is_liquefied`)."""
    if p is not None:
        return g.is_liquefied(gas, T, p)
    return gas.sold_liquefied and T < g.critical_temperature(gas)


class _SupplyModel:
    """Mass ↔ pressure of one supply at constant temperature (table-based, see module doc)."""

    def __init__(self, gas: g.Gas, V: float, T: float, p_hi: float, ambient: float,
                 p_now: float | None = None) -> None:
        self.gas, self.V, self.T = gas, V, T
        self.liquefied = _is_liquefied(gas, T, p_now)
        self.p_sat = g.saturation_pressure(gas, T) if self.liquefied else math.inf
        top = min(p_hi, self.p_sat * 0.999)
        self.table = g.DensityTable(gas, min(ambient * 0.5, top * 0.5), top, T, T)
        self.rho_vsat = g.density(gas, T, self.p_sat * 0.999) if self.liquefied else math.inf

    def mass_at(self, p: float) -> float:
        return float(self.table.density([p], self.T)[0]) * self.V if p < self.p_sat * 0.999 else math.nan

    def pressures(self, masses: Any) -> Any:
        import numpy as np

        rho = np.clip(np.asarray(masses, dtype=float) / self.V, 1e-9, None)
        p = self.table.pressure(rho, self.T)
        if self.liquefied:
            p = np.where(rho >= self.rho_vsat, self.p_sat, p)
        return p


def _draw_rate(prof: Profile, d: Draw) -> float | None:
    return d.repetition_rate if d.repetition_rate is not None else prof.session.repetition_rate


def _draw_flow(prof: Profile, d: Draw, gas: g.Gas, outlet_abs: float) -> tuple[float, str, bool | None]:
    amb, T = prof.ambient_pa, prof.ambient.temperature
    if d.flow is not None:
        return sp.mass_flow(gas, d.flow), d.flow.describe(), None
    if d.per_shot is not None:
        rate = _draw_rate(prof, d) or 0.0
        m = fl.per_shot_mass_flow(gas, d.per_shot, outlet_abs, T, rate)
        return m, f"{d.per_shot * 1e6:g} cm³ per shot at the outlet pressure × {rate:g} Hz", None
    if d.orifice is not None:
        o = fl.orifice_flow(gas, d.orifice.diameter, outlet_abs, d.orifice.downstream.abs_at(amb), T, d.orifice.cd)
        return o.mass_flow_kg_s, f"orifice {d.orifice.diameter * 1000:g} mm, Cd {d.orifice.cd:g} ({'choked' if o.choked else 'subcritical'})", o.choked
    assert d.valve is not None
    v = fl.valve_flow(gas, d.valve.kv_value, outlet_abs, d.valve.downstream.abs_at(amb), T, d.valve.xt)
    return v.mass_flow_kg_s, f"valve Kv {d.valve.kv_value:g} (IEC 60534{', choked' if v.choked else ''})", v.choked


def _hours_str(h: float) -> str:
    from gasbench.units import fmt_hours

    return fmt_hours(h)


# ----------------------------------------------------------------------------- main


def build_plan(prof: Profile, now: dt.datetime | None = None, points: int = PROJECTION_POINTS,
               extra_leak_m3_s: float = 0.0, start_at: dt.datetime | None = None) -> Plan:
    """Compute the session plan of a bench profile (see module docstring for the methods).

    The clock times count from ``start_at`` when given (a running session), else from the
    profile's planned start time today, else from ``now``."""
    import numpy as np

    amb = prof.ambient_pa
    T_amb = prof.ambient.temperature
    session_h = prof.session.duration / 3600.0
    now = now or dt.datetime.now().astimezone().replace(second=0, microsecond=0)
    start = start_at or now
    if start_at is None and prof.session.start:
        hh, mm = (int(x) for x in prof.session.start.split(":"))
        start = now.replace(hour=hh, minute=mm)
    findings: list[Finding] = []
    ref = REFERENCES["15C"]

    def add(sev: Severity, code: str, subject: str, text: str, figure: str) -> None:
        findings.append(Finding(sev, code, subject, text, figure))

    # -- regulators: outlet at start
    reg_plans: dict[str, RegulatorPlan] = {}
    supply_models: dict[str, _SupplyModel] = {}
    supply_state: dict[str, tuple[float, float, float]] = {}  # p_now, T, mass_now
    for s in prof.supplies:
        gas = s.gas
        T = _supply_T(prof, s)
        liquefied = _is_liquefied(gas, T, None if s.reading is None else s.reading.abs_at(amb))
        if liquefied:
            p_now = g.saturation_pressure(gas, T)
            if s.reading is not None and abs(s.reading.abs_at(amb) - p_now) > 0.15 * p_now:
                add("attention", "liquefied-reading", s.id,
                    f"reading {s.reading.text} differs from the vapour pressure of {gas.name} at "
                    f"{T - 273.15:.0f} °C by more than 15 %: check the gauge or the temperature",
                    f"vapour pressure {(p_now - amb) / 1e5:.1f} bar(g)")
        else:
            assert s.reading is not None
            p_now = s.reading.abs_at(amb)
        model = _SupplyModel(gas, s.water_volume, T, max(p_now, s.service_pressure.abs_at(amb)) * 1.02, amb,
                             None if s.reading is None else p_now)
        supply_models[s.id] = model
        if liquefied:
            if s.gross is None or s.tare is None:
                add("warning", "liquefied-no-weight", s.id,
                    f"{gas.name} is liquid in the cylinder at {T - 273.15:.0f} °C: its pressure says nothing "
                    "about the contents; add gross and tare weights to the profile", "no weights")
                mass_now = model.rho_vsat * s.water_volume
            else:
                mass_now = s.gross - s.tare
        else:
            mass_now = g.density(gas, T, p_now) * s.water_volume
        supply_state[s.id] = (p_now, T, mass_now)

    for r in prof.regulators:
        s = prof.supply(r.supply)
        p_now, T, _ = supply_state[s.id]
        set_abs = r.set_point.abs_at(amb)
        res_abs = s.reserve.abs_at(amb)
        out_res = rg.outlet_drift(set_abs, p_now, res_abs, r.effects)
        th = rg.throttle(s.gas, p_now, set_abs, T, saturated_vapour=supply_models[s.id].liquefied)
        hot = _hot_day_pressure(s, prof, p_now, T)
        reg_plans[r.id] = RegulatorPlan(r.id, s.id, r.stages, p_now, set_abs, out_res, th.outlet_temperature_k,
                                        th.solid_forms, th.liquid_forms, th.notes, r.inlet_rating.abs_at(amb),
                                        hot, math.prod(r.effects))
        _regulator_findings(add, r, s, reg_plans[r.id], p_now, amb, prof.ambient.hot_day)

    # -- draws
    draw_plans: list[DrawPlan] = []
    for d in prof.draws:
        r = prof.regulator(d.regulator)
        s = prof.supply(r.supply)
        rp = reg_plans[r.id]
        mdot, how, choked = _draw_flow(prof, d, s.gas, rp.set_point_abs_pa)
        rho_std = g.density(s.gas, 273.15, 101325.0)
        gap_plan = None
        if d.kind == "gap" and d.spacing is not None:
            b0 = gp.breakdown(s.gas, d.spacing, rp.set_point_abs_pa, T_amb)
            b1 = gp.breakdown(s.gas, d.spacing, rp.outlet_at_reserve_abs_pa, T_amb)
            m0 = tuple(gp.flashover_margin(x.name, b0.breakdown_kv, x.clearance, x.rating / 1000 if x.rating else None)
                       for x in d.exposed)
            m1 = tuple(gp.flashover_margin(x.name, b1.breakdown_kv, x.clearance, x.rating / 1000 if x.rating else None)
                       for x in d.exposed)
            gap_plan = GapPlan(d.spacing, b0.breakdown_kv, b1.breakdown_kv, b0.method, b0.validity, m0, m1)
            for a, b in zip(m0, m1, strict=True):
                worst = a if a.margin_kv < b.margin_kv else b
                when = "at the start" if worst is a else "at the reserve (regulator drift)"
                if worst.status != "ok":
                    add("stop" if worst.status == "stop" else "attention", "flashover", d.id,
                        f"gap {d.id} fires near {max(b0.breakdown_kv, b1.breakdown_kv):.1f} kV; {worst.part} withstands "
                        f"about {worst.withstand_kv:.1f} kV ({when}): "
                        + ("it will flash over — lower the gap pressure or increase the clearance"
                           if worst.status == "stop" else "little margin — consider a lower gap pressure"),
                        f"margin {worst.margin_kv:+.1f} kV ({worst.margin_percent:+.0f} %)")
        draw_plans.append(DrawPlan(d.id, d.kind, r.id, s.id, how, mdot, mdot / rho_std * 60e3, d.vents_to_room,
                                   choked, _draw_rate(prof, d), gap_plan))

    # -- supplies
    supply_plans: list[SupplyPlan] = []
    for s in prof.supplies:
        p_now, T, mass_now = supply_state[s.id]
        model = supply_models[s.id]
        res_abs = s.reserve.abs_at(amb)
        mass_res = model.mass_at(res_abs)
        if math.isnan(mass_res):  # reserve above the vapour pressure of a liquefied gas
            mass_res = model.rho_vsat * s.water_volume
        usable = max(0.0, mass_now - mass_res)
        draws_here = [dp for dp in draw_plans if dp.supply_id == s.id]
        mdot = sum(dp.mass_flow_kg_s for dp in draws_here)
        hours = usable / mdot / 3600.0 if mdot > 0 else math.inf
        band = (hours, hours)
        if s.gauge is not None and not model.liquefied and mdot > 0:
            mpe = s.gauge.accuracy_class / 100.0 * s.gauge.range.typed_pa
            lo_p, hi_p = max(p_now - mpe, res_abs * 1.0001), p_now + mpe
            h_lo = max(0.0, (model.mass_at(lo_p) - mass_res) / mdot / 3600.0)
            h_hi = (model.mass_at(hi_p) - mass_res) / mdot / 3600.0
            band = (h_lo, h_hi)
        reserve_at = (start + dt.timedelta(hours=hours)).isoformat(timespec="minutes") if math.isfinite(hours) else None
        rates = [dp.rate_hz for dp in draws_here if dp.rate_hz]
        shots = hours * 3600.0 * max(rates) if rates and math.isfinite(hours) else None
        cost = None
        if s.fill_price is not None:
            if model.liquefied and s.gross is not None and s.tare is not None:
                full = s.gross - s.tare
            else:
                full = g.density(s.gas, 288.15, s.service_pressure.abs_at(amb)) * s.water_volume
            cost = s.fill_price / full * mdot * 3600.0
        fits = hours >= session_h
        # projection
        t_h = np.linspace(0.0, session_h, points)
        masses = np.clip(mass_now - mdot * t_h * 3600.0, 1e-6 * max(mass_now, 1e-9), None)
        p_proj = model.pressures(masses)
        outlets: dict[str, tuple[float, ...]] = {}
        gap_kv: dict[str, tuple[float, ...]] = {}
        for r in prof.regulators:
            if r.supply != s.id:
                continue
            rp = reg_plans[r.id]
            o = rp.set_point_abs_pa + rp.effect_total * (p_now - p_proj)
            outlets[r.id] = tuple(float(x) for x in o)
            for dp in draw_plans:
                if dp.regulator_id == r.id and dp.gap is not None:
                    gap_kv[dp.id] = tuple(float(x) for x in gp.breakdown_series(s.gas, dp.gap.spacing_m, o, T_amb))
        fv = sp.free_volume(s.gas, mass_now, ref) if mass_now > 0 else 0.0
        supply_plans.append(SupplyPlan(
            s.id, s.gas.name, s.gas.short_name, model.liquefied, p_now, T, res_abs, mass_now, fv, ref.label, usable, mdot, hours,
            band, reserve_at, shots, cost, s.currency, fits, tuple(float(x) for x in t_h),
            tuple(float(x) for x in p_proj), outlets, gap_kv))
        if mdot > 0 and not fits:
            add("stop" if hours < 0.5 * session_h else "warning", "reserve-before-end", s.id,
                f"{s.id} reaches its reserve after {_hours_str(hours)}, before the planned "
                f"{_hours_str(session_h)} session ends: swap the cylinder first or shorten the session",
                f"{hours:.2f} h of {session_h:.2f} h")
        elif mdot > 0 and band[0] < session_h:
            add("attention", "reserve-within-gauge-error", s.id,
                f"{s.id} lasts {_hours_str(hours)}, but within the gauge's error it could be only "
                f"{_hours_str(band[0])}, less than the session", f"{band[0]:.2f}–{band[1]:.2f} h")
        pairs = g.estimated_pairs(s.gas)
        if pairs:
            add("info", "estimated-mixing", s.id,
                f"{s.gas.name}: no published mixing parameters for " + ", ".join(f"{a}–{b}" for a, b in pairs)
                + "; properties use the Lorentz-Berthelot estimate", "estimate")
        if s.gauge is None and not model.liquefied:
            add("info", "no-gauge", s.id, f"{s.id} has no gauge in the profile: run time has no uncertainty band",
                "no band")

    room_plan = _room_plan(prof, draw_plans, supply_plans, add, extra_leak_m3_s)
    findings.sort(key=lambda f: SEVERITY_RANK[f.severity])
    fits = all(sp_.fits_session or sp_.draw_kg_s == 0 for sp_ in supply_plans)
    return Plan(prof.bench.name, amb, T_amb, session_h, start.isoformat(timespec="minutes"), tuple(supply_plans),
                tuple(reg_plans.values()), tuple(draw_plans), room_plan, tuple(findings), fits)


def _hot_day_pressure(s: Supply, prof: Profile, p_now: float, T: float) -> float:
    """Supply pressure on the profile's hot day: isochoric heat-up of the gas (real gas), or for
    a liquefied gas its vapour pressure — above the critical temperature the pressure of the
    whole fill at its mean density (steep: this is why fill ratios are regulated)."""
    hot = prof.ambient.hot_day
    if not _is_liquefied(s.gas, T, p_now):
        return sp.heat_up(s.gas, p_now, T, hot, prof.ambient_pa).pressure_abs_pa
    if _is_liquefied(s.gas, hot):
        return g.saturation_pressure(s.gas, hot)
    if s.gross is None or s.tare is None:
        return math.inf
    return g.pressure_from_density(s.gas, (s.gross - s.tare) / s.water_volume, hot)


def _regulator_findings(add: Any, r: Regulator, s: Supply, rp: RegulatorPlan, p_now: float, amb: float,
                        hot_day_k: float) -> None:
    bar = lambda x: f"{(x - amb) / 1e5:.1f} bar(g)"  # noqa: E731
    if p_now > rp.inlet_rating_abs_pa:
        add("stop", "inlet-rating", r.id, f"{s.id} at {bar(p_now)} is above the inlet rating of {r.id}",
            f"{bar(p_now)} > {bar(rp.inlet_rating_abs_pa)}")
    elif rp.supply_hot_day_abs_pa > rp.inlet_rating_abs_pa:
        add("warning", "inlet-rating-hot", r.id,
            f"on a {hot_day_k - 273.15:.0f} °C day {s.id} would reach {bar(rp.supply_hot_day_abs_pa)}, above "
            f"the inlet rating of {r.id}", f"{bar(rp.supply_hot_day_abs_pa)} > {bar(rp.inlet_rating_abs_pa)}")
    if rp.solid_forms:
        add("stop", "regulator-solid", r.id,
            f"{s.gas.name} expanding to the set point forms solid (dry ice) in {r.id}: it can block and then "
            "release suddenly — use a regulator made for this service or a higher outlet pressure",
            f"outlet at {rp.outlet_temperature_k - 273.15:.1f} °C")
    elif rp.liquid_forms:
        add("warning", "regulator-liquid", r.id, f"liquid {s.gas.name} forms at the outlet of {r.id}",
            f"outlet at {rp.outlet_temperature_k - 273.15:.1f} °C")
    elif rp.outlet_temperature_k < 273.15:
        add("attention", "regulator-icing", r.id,
            f"gas leaves {r.id} at about {rp.outlet_temperature_k - 273.15:.0f} °C in steady flow: frost on the "
            "body, stiff diaphragm; a heated regulator or lower flow helps",
            f"{rp.outlet_temperature_k - 273.15:.1f} °C")
    hi = r.outlet_max.abs_at(amb)
    if rp.outlet_at_reserve_abs_pa > hi:
        add("attention", "outlet-drift-range", r.id,
            f"{r.id}'s outlet drifts above its range as {s.id} empties", f"{bar(rp.outlet_at_reserve_abs_pa)} at reserve")
    if r.downstream_rating is not None:
        down = r.downstream_rating.abs_at(amb)
        if rp.outlet_at_reserve_abs_pa > down:
            add("warning", "outlet-drift-rating", r.id,
                f"{r.id}'s outlet drifts above the downstream rating as {s.id} empties",
                f"{bar(rp.outlet_at_reserve_abs_pa)} > {bar(down)}")
        if r.relief_setting is None:
            add("attention", "no-relief", r.id,
                f"{r.id} has no relief valve: a failed regulator puts the full cylinder pressure on the "
                "downstream parts", f"downstream rated {bar(down)}")
        elif r.relief_setting.abs_at(amb) > down:
            add("warning", "relief-above-rating", r.id,
                f"the relief of {r.id} opens above the downstream working pressure",
                f"{r.relief_setting.text} > {r.downstream_rating.text}")
    if r.relief_setting is not None and r.relief_setting.abs_at(amb) <= rp.set_point_abs_pa:
        add("warning", "relief-below-set-point", r.id, f"the relief of {r.id} is at or below its set point: it will vent",
            f"{r.relief_setting.text} ≤ {r.set_point.text}")


def _room_plan(prof: Profile, draws: list[DrawPlan], supplies: list[SupplyPlan], add: Any,
               extra_leak_m3_s: float) -> RoomPlan | None:
    if prof.room is None:
        add("attention", "no-room", "room", "the profile has no room: oxygen figures are not evaluated",
            "no room")
        return None
    room = prof.room
    T, amb = prof.ambient.temperature, prof.ambient_pa
    Q = rm.parse_ventilation(room.ventilation, room.volume) if room.ventilation else 0.0
    vented = extra_leak_m3_s
    by_id = {s.id: s for s in prof.supplies}
    for dp in draws:
        if dp.vents_to_room:
            vented += dp.mass_flow_kg_s / g.density(by_id[dp.supply_id].gas, T, amb)
    notes: list[str] = []
    leak = rm.leak_o2(room.volume, vented, Q, room.ventilation_kind, room.oxygen_percent) if vented > 0 else None
    if leak is not None:
        if leak.o2_percent_steady < rm.OSHA_DEFICIENT:
            sev: Severity = "stop" if leak.minutes_to_19_5 < 60 * prof.session.duration / 3600 else "warning"
            add(sev, "room-vented", "room",
                f"gas vented by the draws lowers the room's oxygen to {leak.o2_percent_steady:.1f} % "
                + (f"and passes 19.5 % after {leak.minutes_to_19_5:.0f} min" if math.isfinite(leak.minutes_to_19_5) else "")
                + ": duct the exhaust outside or increase ventilation",
                f"{leak.o2_percent_steady:.1f} % O2 steady")
    # largest supply released at once
    biggest = max(supplies, key=lambda x: x.free_volume_m3)
    gas = by_id[biggest.id].gas
    vg = biggest.mass_kg / g.density(gas, T, amb)
    rel = rm.release(room.volume, vg, "displacement", room.oxygen_percent)
    rel_mixed = rm.release(room.volume, vg, "mixed", room.oxygen_percent)
    notes.append(rm.stratification_note(gas))
    if rel.o2_percent_after_release < rm.OSHA_DEFICIENT:
        sev2: Severity = "stop" if rel.o2_percent_after_release < rm.EIGA_HAZARD and not room.oxygen_monitor else "warning"
        add(sev2, "room-release", "room",
            f"if all of {biggest.id} escapes at once the room falls to {rel.o2_percent_after_release:.1f} % oxygen "
            f"({rel.effect}); "
            + ("fit an oxygen monitor with alarm, " if not room.oxygen_monitor else "")
            + "keep only the cylinders in use indoors and ventilate",
            f"{rel.o2_percent_after_release:.1f} % O2 (displacement model)")
    for hz in rm.gas_hazards(gas, rel.o2_percent_after_release, room.oxygen_percent):
        add("warning" if hz.kind == "toxic" else "stop", f"room-{hz.kind}", "room",
            f"if all of {biggest.id} escapes: {hz.text}", f"{hz.percent:.2f} %")
    return RoomPlan(room.volume, Q, room.ventilation_kind, vented, leak, biggest.id, rel, rel_mixed, tuple(notes))


# ----------------------------------------------------------------------------- observed draw


@dataclass(frozen=True)
class Observed:
    """Actual draw of a supply fitted from readings during a session."""

    supply_id: str
    n: int
    draw_kg_s: float
    draw_uncertainty_kg_s: float
    planned_kg_s: float
    faster_than_planned: bool
    mass_now_kg: float
    hours_to_reserve: float
    reserve_at: str | None
    method: str
    fit_at: tuple[str, ...] = ()
    fit_pressure_abs_pa: tuple[float, ...] = ()


def observed_draw(gas: g.Gas, volume_m3: float, reserve_abs: float, planned_kg_s: float,
                  readings: list[tuple[dt.datetime, float, float]], u_p: float = 0.0, supply_id: str = "",
                  ) -> Observed | None:
    """Fit the real-gas mass against time from (time, p_abs, T) readings by least squares.

    Mass per reading m = ρ(T, p)·V (CoolProp HEOS); the slope's uncertainty combines the fit's
    standard error (numpy ``polyfit`` covariance, with two readings none) and the gauge's
    reading uncertainty ``u_p`` on the first and last reading (GUM). ``faster_than_planned``
    when the observed draw exceeds the plan by more than twice that uncertainty.
    Returns None with fewer than two readings or no elapsed time.
    """
    import numpy as np

    if len(readings) < 2:
        return None
    t0 = readings[0][0]
    t = np.array([(r[0] - t0).total_seconds() for r in readings])
    if t[-1] - t[0] <= 0:
        return None
    m = np.array([g.density(gas, T, p) * volume_m3 for _, p, T in readings])
    if len(t) >= 3:
        coef, cov = np.polyfit(t, m, 1, cov="unscaled")
        resid = m - np.polyval(coef, t)
        s2 = float(resid @ resid) / (len(t) - 2) if len(t) > 2 else 0.0
        se = math.sqrt(max(0.0, float(cov[0, 0]) * s2))
        slope = float(coef[0])
    else:
        slope = float((m[-1] - m[0]) / (t[-1] - t[0]))
        se = 0.0
    span = float(t[-1] - t[0])
    p_last, T_last = readings[-1][1], readings[-1][2]
    dp = max(p_last * 1e-5, 1.0)
    dmdp = (g.density(gas, T_last, p_last + dp) - g.density(gas, T_last, p_last - dp)) * volume_m3 / (2 * dp)
    u = math.hypot(se, math.sqrt(2.0) * dmdp * u_p / span)
    draw = -slope
    m_now = float(m[-1])
    m_res = g.density(gas, T_last, reserve_abs) * volume_m3
    hours = (m_now - m_res) / draw / 3600.0 if draw > 0 else math.inf
    at = (readings[-1][0] + dt.timedelta(hours=hours)).isoformat(timespec="minutes") if math.isfinite(hours) else None
    # the fitted line as pressures at the first and last reading (for plots)
    fitted = [float(m[0] + slope * 0.0), float(m[0] + slope * span)] if len(t) < 3 else \
        [float(np.polyval(coef, t[0])), float(np.polyval(coef, t[-1]))]
    fit_p = tuple(g.pressure_from_density(gas, max(x, 1e-9) / volume_m3, T_last) for x in fitted)
    fit_at = (readings[0][0].isoformat(timespec="seconds"), readings[-1][0].isoformat(timespec="seconds"))
    return Observed(supply_id, len(readings), draw, u, planned_kg_s, draw - planned_kg_s > 2.0 * u, m_now,
                    max(hours, 0.0), at, "least-squares fit of real-gas mass vs time (CoolProp HEOS)", fit_at, fit_p)


def live_findings(plan: Plan, observed: dict[str, Observed], session_end: dt.datetime | None) -> list[Finding]:
    """Findings during a session: a draw faster than planned beyond its uncertainty, and a
    reserve (planned or observed) that arrives before the planned end of the session."""
    out: list[Finding] = []
    for s in plan.supplies:
        ob = observed.get(s.id)
        if ob is not None and ob.faster_than_planned:
            out.append(Finding(
                "warning", "faster-than-planned", s.id,
                f"{s.id} empties faster than planned: check for leaks or a flow set too high",
                f"observed {ob.draw_kg_s * 6e4:.3g} ± {ob.draw_uncertainty_kg_s * 6e4:.2g} g/min vs planned "
                f"{ob.planned_kg_s * 6e4:.3g} g/min"))
        if session_end is None:
            continue
        at = ob.reserve_at if ob is not None and ob.reserve_at else s.reserve_at
        if at is not None and dt.datetime.fromisoformat(at) < session_end:
            out.append(Finding(
                "warning", "reserve-before-end-live", s.id,
                f"{s.id} reaches its reserve at {at[11:16]}, before the session's planned end "
                f"{session_end.isoformat(timespec='minutes')[11:16]}: swap the cylinder or stop early",
                f"reserve at {at[11:16]}"))
    return out


#: A hold test older than this asks for a new one (gasbench default, also used by the checklist).
HOLD_TEST_MAX_AGE_DAYS = 7.0


def hold_test_findings(last: tuple[str, float, float, float] | None) -> list[Finding]:
    """A finding from the bench's last hold test: (verdict, sccm, uncertainty sccm, age in days)."""
    if last is None:
        return [Finding("attention", "no-hold-test", "leaks", "no hold test recorded for this bench: run one (t)",
                        "none")]
    verdict, rate, u, age = last
    figure = f"{verdict}, {rate:.3g} ± {u:.2g} sccm, {age:.1f} days ago"
    if verdict == "leak":
        return [Finding("stop", "hold-test-leak", "leaks", "the last hold test found a leak: find and fix it first",
                        figure)]
    if verdict == "inconclusive":
        return [Finding("attention", "hold-test-inconclusive", "leaks",
                        "the last hold test could not tell: hold longer or use a finer gauge", figure)]
    if age > HOLD_TEST_MAX_AGE_DAYS:
        return [Finding("attention", "hold-test-old", "leaks",
                        f"the last hold test is older than {HOLD_TEST_MAX_AGE_DAYS:.0f} days: repeat it", figure)]
    return [Finding("info", "hold-test-ok", "leaks", "last hold test resolved no leak", figure)]
