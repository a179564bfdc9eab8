"""Build the session plan of a bench profile (records in :mod:`benchwarden.workflows.model`,
whose docstring gives the method summary; findings from :mod:`benchwarden.workflows.findings`).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from benchwarden.core import flow as fl
from benchwarden.core import gap as gp
from benchwarden.core import gas as g
from benchwarden.core import regulator as rg
from benchwarden.core import supply as sp
from benchwarden.core.hold import kg_s_from_sccm
from benchwarden.core.tables import DensityTable
from benchwarden.storage.profile import Draw, Profile, Regulator, Supply
from benchwarden.units import ATM_PA, REFERENCES, T0_K
from benchwarden.workflows import findings as fd
from benchwarden.workflows.holds import profile_gauge_spec
from benchwarden.workflows.model import (
    PROJECTION_POINTS,
    DrawPlan,
    GapPlan,
    Memo,
    Observed,
    Plan,
    RegulatorPlan,
    SupplyPlan,
    memo_get,
)
from benchwarden.workflows.roomplan import full_mass, largest_supply, room_plan

__all__ = ["build_plan", "observed_draw", "SupplyModel", "full_mass", "largest_supply"]


# ----------------------------------------------------------------------------- helpers


def _supply_T(prof: Profile, s: Supply) -> float:
    return s.reading_temperature if s.reading_temperature is not None else prof.ambient.temperature


def _is_liquefied(gas: g.Gas, T: float, p: float | None = None) -> bool:
    """A gas sold liquefied below its critical temperature holds liquid, unless a reading
    well below its vapour pressure says only vapour is left (:func:`benchwarden.core.gas.is_liquefied`)."""
    if p is not None:
        return g.is_liquefied(gas, T, p)
    return gas.sold_liquefied and T < g.critical_temperature(gas)


_memo = memo_get



class SupplyModel:
    """Mass ↔ pressure of one supply at constant temperature (table-based, see module doc)."""

    def __init__(self, gas: g.Gas, V: float, T: float, p_hi: float, ambient: float,
                 p_now: float | None = None) -> None:
        self.gas, self.V, self.T = gas, V, T
        self.liquefied = _is_liquefied(gas, T, p_now)
        self.p_sat = g.saturation_pressure(gas, T) if self.liquefied else math.inf
        top = min(p_hi, self.p_sat * 0.999)
        self.table = DensityTable(gas, min(ambient * 0.5, top * 0.5), top, T, T)
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


#: Beyond this a time to reserve is "not within a year": no clock time is given (benchwarden rule).
HORIZON_HOURS = 24.0 * 366


def _clock_after(t0: dt.datetime, hours: float) -> str | None:
    """The clock time ``hours`` after ``t0``, or None when it is not finite or beyond a year."""
    if not math.isfinite(hours) or hours > HORIZON_HOURS:
        return None
    return (t0 + dt.timedelta(hours=max(hours, 0.0))).isoformat(timespec="minutes")


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
        if outlet_abs <= d.orifice.downstream.abs_at(amb):
            return 0.0, f"orifice {d.orifice.diameter * 1000:g} mm: no flow (outlet at or below downstream)", None
        o = fl.orifice_flow(gas, d.orifice.diameter, outlet_abs, d.orifice.downstream.abs_at(amb), T, d.orifice.cd)
        phases = "" if (o.inlet_phase, o.throat_phase) == ("gas", "gas") else \
            f"; inlet {o.inlet_phase}, throat {o.throat_phase}"
        return (o.mass_flow_kg_s, f"orifice {d.orifice.diameter * 1000:g} mm, Cd {d.orifice.cd:g} "
                f"({'choked' if o.choked else 'subcritical'}{phases})", o.choked)
    assert d.valve is not None
    if outlet_abs <= d.valve.downstream.abs_at(amb):
        return 0.0, f"valve Kv {d.valve.kv_value:g}: no flow (outlet at or below downstream)", None
    v = fl.valve_flow(gas, d.valve.kv_value, outlet_abs, d.valve.downstream.abs_at(amb), T, d.valve.xt)
    return v.mass_flow_kg_s, f"valve Kv {d.valve.kv_value:g} (IEC 60534{', choked' if v.choked else ''})", v.choked


# ----------------------------------------------------------------------------- main


def build_plan(prof: Profile, now: dt.datetime | None = None, points: int = PROJECTION_POINTS,
               extra_leak_m3_s: float = 0.0, start_at: dt.datetime | None = None,
               leaks_sccm: Mapping[str, float] | None = None, memo: Memo | None = None) -> Plan:
    """Compute the session plan of a bench profile (see module docstring for the methods).

    The clock times count from ``start_at`` when given (a running session), else from the
    profile's planned start time today, else from ``now``. ``leaks_sccm``: a leak found on a
    supply's current cylinder, counted as one more draw on it (time to reserve, reserve clock,
    projection and cost include it)."""
    session_h = prof.session.duration / 3600.0
    now = now or dt.datetime.now().astimezone().replace(second=0, microsecond=0)
    start = start_at or now
    if start_at is None and prof.session.start:
        hh, mm = (int(x) for x in prof.session.start.split(":"))
        start = now.replace(hour=hh, minute=mm)
    states = {s.id: _supply_state(prof, s, memo) for s in prof.supplies}
    reg_plans = {r.id: _regulator_plan(prof, r, states[r.supply], memo) for r in prof.regulators}
    draw_plans = [_draw_plan(prof, d, reg_plans, memo) for d in prof.draws]
    supply_plans = [_supply_plan(prof, s, states[s.id], reg_plans, draw_plans,
                                 max(0.0, (leaks_sccm or {}).get(s.id, 0.0)), start, points, memo)
                    for s in prof.supplies]
    room_plan_ = room_plan(prof, draw_plans, supply_plans, extra_leak_m3_s, memo)
    fits = all(sp_.fits_session or sp_.draw_kg_s == 0 for sp_ in supply_plans)
    plan = Plan(prof.bench.name, prof.ambient_pa, prof.ambient.temperature, session_h,
                start.isoformat(timespec="minutes"), tuple(supply_plans), tuple(reg_plans.values()),
                tuple(draw_plans), room_plan_, (), fits)
    return dataclasses.replace(plan, findings=tuple(fd.plan_findings(prof, plan)))


@dataclass(frozen=True)
class _State:
    """A supply now: pressure [Pa(a)], temperature [K], mass [kg], its mass ↔ pressure model and,
    for a gas weighed in, its state by weight."""

    p_now: float
    T: float
    mass_now: float
    model: SupplyModel
    by_weight: sp.WeightState | None


def _supply_state(prof: Profile, s: Supply, memo: Memo | None) -> _State:
    amb, gas = prof.ambient_pa, s.gas
    T = _supply_T(prof, s)
    p_read = None if s.reading is None else s.reading.abs_at(amb)
    liquefied = _memo(memo, ("liquefied", gas.key, T, p_read), _is_liquefied, gas, T, p_read)
    fill = (s.gross - s.tare) if gas.sold_liquefied and s.gross is not None and s.tare is not None else 0.0
    ws = _memo(memo, ("by-weight", gas.key, fill, s.water_volume, T), sp.state_by_weight, gas, fill,
               s.water_volume, T) if fill > 0 else None
    if ws is not None and (liquefied or s.reading is None):
        p_now = ws.pressure_abs_pa  # the vapour pressure, or a liquid-full cylinder's hydraulic pressure
    elif liquefied:
        p_now = g.saturation_pressure(gas, T)
    else:
        assert p_read is not None
        p_now = p_read
    p_hi = max(p_now, s.service_pressure.abs_at(amb)) * 1.02
    p_arg = None if s.reading is None else p_now
    model = _memo(memo, ("model", gas.key, s.water_volume, T, p_hi, amb, liquefied),
                  SupplyModel, gas, s.water_volume, T, p_hi, amb, p_arg)
    if liquefied:
        mass_now = model.rho_vsat * s.water_volume if s.gross is None or s.tare is None else s.gross - s.tare
    else:
        mass_now = _memo(memo, ("rho", gas.key, T, p_now), g.density, gas, T, p_now) * s.water_volume
    return _State(p_now, T, mass_now, model, ws)


def _regulator_plan(prof: Profile, r: Regulator, st: _State, memo: Memo | None) -> RegulatorPlan:
    """A regulator's outlet now and at the reserve, its outlet temperature, its hot-day inlet."""
    amb = prof.ambient_pa
    s = prof.supply(r.supply)
    p_now, T = st.p_now, st.T
    set_abs = r.set_point.abs_at(amb)
    res_abs = s.reserve.abs_at(amb)
    hot = _memo(memo, ("hot", s.gas.key, s.water_volume, T, p_now, prof.ambient.hot_day, amb),
                _hot_day_pressure, s, prof, p_now, T)
    # a regulator reduces pressure only while its inlet is above its set point; below that it
    # stands wide open and its outlet follows the cylinder down (and the gaps' voltage with it)
    regulating = p_now > set_abs * (1.0 + 1e-9)
    outlet = set_abs if regulating else p_now
    out_res = min(rg.outlet_drift(set_abs, p_now, res_abs, r.effects), res_abs)
    if regulating:
        sat = st.model.liquefied
        th = _memo(memo, ("throttle", s.gas.key, p_now, set_abs, T, sat),
                   rg.throttle, s.gas, p_now, set_abs, T, saturated_vapour=sat)
        t_out, solid, liquid, notes = th.outlet_temperature_k, th.solid_forms, th.liquid_forms, th.flags
        margin = th.dry_ice_margin_k
    else:
        t_out, solid, liquid, notes, margin = T, False, False, (), None
    return RegulatorPlan(r.id, s.id, r.stages, p_now, set_abs, out_res, t_out, solid, liquid, notes,
                         r.inlet_rating.abs_at(amb), hot, math.prod(r.effects), regulating, outlet, margin)


def _draw_plan(prof: Profile, d: Draw, reg_plans: Mapping[str, RegulatorPlan], memo: Memo | None) -> DrawPlan:
    """A draw's flow from its regulator's outlet now, and a gap's firing voltage and margins."""
    T_amb = prof.ambient.temperature
    r = prof.regulator(d.regulator)
    s = prof.supply(r.supply)
    rp = reg_plans[r.id]
    mdot, how, choked = _memo(memo, ("draw", repr(d), s.gas.key, rp.outlet_abs_pa, prof.ambient_pa, T_amb,
                                     _draw_rate(prof, d)), _draw_flow, prof, d, s.gas, rp.outlet_abs_pa)
    rho_std = _memo(memo, ("rho", s.gas.key, T0_K, ATM_PA), g.density, s.gas, T0_K, ATM_PA)
    gap_plan = None
    if d.kind == "gap" and d.spacing is not None:
        b0 = gp.breakdown(s.gas, d.spacing, rp.outlet_abs_pa, T_amb)
        b1 = gp.breakdown(s.gas, d.spacing, rp.outlet_at_reserve_abs_pa, T_amb)
        m0 = tuple(gp.flashover_margin(x.name, b0.breakdown_high_kv, x.clearance, x.rating / 1000 if x.rating else None)
                   for x in d.exposed)
        m1 = tuple(gp.flashover_margin(x.name, b1.breakdown_high_kv, x.clearance, x.rating / 1000 if x.rating else None)
                   for x in d.exposed)
        gap_plan = GapPlan(d.spacing, b0.breakdown_kv, b1.breakdown_kv, b0.method, b0.validity, m0, m1,
                           b0.within_validity and b1.within_validity, max(b0.pd_bar_cm_20c, b1.pd_bar_cm_20c))
    return DrawPlan(d.id, d.kind, r.id, s.id, how, mdot, mdot / rho_std * 60e3, d.vents_to_room, choked,
                    _draw_rate(prof, d), gap_plan)


def _supply_plan(prof: Profile, s: Supply, st: _State, reg_plans: Mapping[str, RegulatorPlan],
                 draw_plans: list[DrawPlan], leak_sccm: float, start: dt.datetime, points: int,
                 memo: Memo | None) -> SupplyPlan:
    """A supply's usable gas, draw (its draws and a found leak), time to the reserve with the
    gauge's band, shots, cost, and the projection of its pressure, outlets and gap voltages."""
    import numpy as np

    amb, T_amb, model = prof.ambient_pa, prof.ambient.temperature, st.model
    session_h = prof.session.duration / 3600.0
    res_abs = s.reserve.abs_at(amb)
    mass_res = model.mass_at(res_abs)
    if math.isnan(mass_res):  # reserve above the vapour pressure of a liquefied gas
        mass_res = model.rho_vsat * s.water_volume
    usable = max(0.0, st.mass_now - mass_res)
    draws_here = [dp for dp in draw_plans if dp.supply_id == s.id]
    mdot = sum(dp.mass_flow_kg_s for dp in draws_here) + kg_s_from_sccm(s.gas, leak_sccm)
    hours = usable / mdot / 3600.0 if mdot > 0 else math.inf
    band = (hours, hours)
    spec = profile_gauge_spec(s.gauge)
    if spec is not None and not model.liquefied and mdot > 0:
        mpe = spec.mpe_pa  # the gauge's own rule (EN 837-1)
        lo_p, hi_p = max(st.p_now - mpe, res_abs * 1.0001), st.p_now + mpe
        band = (max(0.0, (model.mass_at(lo_p) - mass_res) / mdot / 3600.0),
                max(0.0, (model.mass_at(hi_p) - mass_res) / mdot / 3600.0))
    rates = [dp.rate_hz for dp in draws_here if dp.rate_hz]
    shots = hours * 3600.0 * max(rates) if rates and math.isfinite(hours) else None
    cost = None
    if s.fill_price is not None:
        cost = s.fill_price / full_mass(prof, s, memo) * mdot * 3600.0
    t_h = np.linspace(0.0, session_h, points)
    masses = np.clip(st.mass_now - mdot * t_h * 3600.0, 1e-6 * max(st.mass_now, 1e-9), None)
    p_proj = model.pressures(masses)
    outlets: dict[str, tuple[float, ...]] = {}
    gap_kv: dict[str, tuple[float, ...]] = {}
    for r in prof.regulators:
        if r.supply != s.id:
            continue
        rp = reg_plans[r.id]
        o = rp.set_point_abs_pa + rp.effect_total * (st.p_now - p_proj)
        outlets[r.id] = tuple(float(x) for x in o)
        for dp in draw_plans:
            if dp.regulator_id == r.id and dp.gap is not None:
                gap_kv[dp.id] = tuple(float(x) for x in gp.breakdown_series(s.gas, dp.gap.spacing_m, o, T_amb))
    ref = REFERENCES["15C"]
    fv = _memo(memo, ("free", s.gas.key, st.mass_now, ref.key), sp.free_volume, s.gas, st.mass_now, ref) \
        if st.mass_now > 0 else 0.0
    return SupplyPlan(
        s.id, s.gas.name, s.gas.short_name, model.liquefied, st.p_now, st.T, res_abs, st.mass_now, fv, ref.label,
        usable, mdot, hours, band, _clock_after(start, hours), shots, cost, s.currency, hours >= session_h,
        tuple(float(x) for x in t_h), tuple(float(x) for x in p_proj), outlets, gap_kv, leak_sccm,
        **_memo(memo, ("state", s.gas.key, st.by_weight, model.liquefied, s.water_volume, st.p_now, st.T),
                _state_fields, s.gas, st.by_weight, model.liquefied, s.water_volume, st.p_now, st.T))


def _state_fields(gas: g.Gas, ws: sp.WeightState | None, liquefied: bool, V: float, p: float,
                  T: float) -> dict[str, Any]:
    """A supply's phase and, read by pressure, the sensitivity of its contents to temperature
    (:func:`benchwarden.core.supply.temperature_sensitivity`, at the default 1 K)."""
    if ws is not None:
        return {"phase": ws.phase, "liquid_full_temperature_k": ws.liquid_full_temperature_k}
    if liquefied:  # liquid under its vapour, no weights: the plan asks for them
        return {"phase": "two-phase"}
    u_T = sp.TEMPERATURE_UNCERTAINTY_K
    slope, u_m, _ = sp.temperature_sensitivity(gas, V, p, T, u_T)
    kind = g.pt_state(gas, T, p).phase.kind
    if kind == "supercritical" and p < g.critical_pressure(gas):
        kind = "gas"
    return {"phase": kind, "mass_sensitivity_kg_per_k": slope, "mass_uncertainty_kg": u_m,
            "temperature_uncertainty_k": u_T}


def _hot_day_pressure(s: Supply, prof: Profile, p_now: float, T: float) -> float:
    """Supply pressure on the profile's hot day: isochoric heat-up of the gas (real gas), or for
    a liquefied gas its vapour pressure — above the critical temperature the pressure of the
    whole fill at its mean density (steep: this is why fill ratios are regulated)."""
    hot = prof.ambient.hot_day
    if not _is_liquefied(s.gas, T, p_now):
        return sp.heat_up(s.gas, p_now, T, hot, prof.ambient_pa).pressure_abs_pa
    if s.gross is not None and s.tare is not None and s.gross > s.tare:
        return sp.state_by_weight(s.gas, s.gross - s.tare, s.water_volume, hot).pressure_abs_pa
    if _is_liquefied(s.gas, hot):
        return g.saturation_pressure(s.gas, hot)
    return math.inf


# ----------------------------------------------------------------------------- observed draw


def observed_draw(gas: g.Gas, volume_m3: float, reserve_abs: float, planned_kg_s: float,
                  readings: list[tuple[dt.datetime, float, float]], u_p: float = 0.0, supply_id: str = "",
                  u_T: float = 0.0) -> Observed | None:
    """The observed draw of a supply: the real-gas mass (CoolProp HEOS, ρ(T, p)·V) of its readings
    fitted against time with the one fit and budget of hold tests
    (:func:`benchwarden.core.hold.fit_mass_loss`: least squares, its standard error ⊕ the GUM
    budget of the first and last reading, ``u_p`` [Pa] and ``u_T`` [K] each). ``resolved`` when
    the draw exceeds twice that uncertainty (only then does it project a reserve time);
    ``faster_than_planned`` when it is resolved and exceeds the plan by more than twice it.
    Returns None with fewer than two readings or no elapsed time.
    """
    import numpy as np

    from benchwarden.core.hold import fit_mass_loss

    if len(readings) < 2:
        return None
    t0 = readings[0][0]
    t = np.array([(r[0] - t0).total_seconds() for r in readings])
    if t[-1] - t[0] <= 0:
        return None
    p = np.array([r[1] for r in readings])
    T = np.array([r[2] for r in readings])
    m = np.array([g.density(gas, Tk, pk) * volume_m3 for pk, Tk in zip(p, T, strict=True)])
    mf = fit_mass_loss(gas, volume_m3, t, p, T, m, u_p, u_T)
    draw, u = mf.rate_kg_s, mf.u_kg_s
    T_last = readings[-1][2]
    m_now = float(m[-1])
    m_res = g.density(gas, T_last, reserve_abs) * volume_m3
    # a draw not resolved beyond its expanded uncertainty (U = 2u, GUM) projects nothing: the
    # plan's projection stands, and no alarm or finding rests on it
    resolved = draw > 2.0 * u
    hours = (m_now - m_res) / draw / 3600.0 if draw > 0 and resolved else math.inf
    at = _clock_after(readings[-1][0], hours) if resolved else None
    # the fitted line as pressures at the first and last reading (for plots)
    fitted = [float(np.polyval(mf.coef, x - mf.t_mean_s)) for x in (t[0], t[-1])]
    fit_p = tuple(g.pressure_from_density(gas, max(x, 1e-9) / volume_m3, T_last) for x in fitted)
    fit_at = (readings[0][0].isoformat(timespec="seconds"), readings[-1][0].isoformat(timespec="seconds"))
    return Observed(supply_id, len(readings), draw, u, planned_kg_s, resolved and draw - planned_kg_s > 2.0 * u,
                    m_now, max(hours, 0.0), at, "least-squares fit of real-gas mass vs time (CoolProp HEOS)", fit_at,
                    fit_p, resolved)
