"""Regulators: outlet temperature by isenthalpic throttling, outlet drift, rating checks.

Throttling across a regulator is taken as adiabatic and isenthalpic (h_out = h_in), the
steady-flow energy balance with negligible kinetic energy; the outlet temperature follows from
the real-gas enthalpy (CoolProp HEOS). Nitrogen, argon and CO2 cool (positive Joule–Thomson
coefficient near room temperature); helium, hydrogen and neon warm (they are above their
inversion temperature). A real regulator body exchanges heat with the room, so the figure is
the coldest (or warmest) the gas can come out in steady flow.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from gasbench import gas as g
from gasbench.errors import InputError, PropertyError


@dataclass(frozen=True)
class Throttle:
    gas_name: str
    inlet_abs_pa: float
    outlet_abs_pa: float
    inlet_temperature_k: float
    outlet_temperature_k: float
    temperature_change_k: float
    solid_forms: bool
    liquid_forms: bool
    vapour_fraction: float | None
    notes: tuple[str, ...]
    method: str


def _solve_T_for_h(gas: g.Gas, h: float, p: float, T_guess: float) -> float:
    """Temperature at which h(T, p) = h for a gas-phase mixture (secant on T, CoolProp PT flash)."""
    tmin = max(g.limits(gas)[0], 100.0)
    T0, T1 = T_guess, T_guess - 5.0
    f0 = g.enthalpy(gas, T0, p) - h
    for _ in range(60):
        f1 = g.enthalpy(gas, max(T1, tmin), p) - h
        if abs(f1) < 1e-6 * max(1.0, abs(h)):
            return T1
        if f1 == f0:
            break
        T0, T1, f0 = T1, max(tmin, T1 - f1 * (T1 - T0) / (f1 - f0)), f1
    return T1


def throttle(gas: g.Gas, p_in: float, p_out: float, T_in: float, saturated_vapour: bool = False) -> Throttle:
    """Outlet state of an isenthalpic expansion from (p_in, T_in) to p_out.

    For a pure gas the outlet is found with CoolProp's (h, p) flash, which detects liquid
    forming (two-phase outlet). Below the triple-point pressure (CO2: 5.18 bar(a)) an outlet
    enthalpy lower than that of the vapour at the triple-point temperature means the gas must
    leave colder than the triple point: solid (dry ice) forms. This is a result, not an error.

    Examples
    --------
    Nitrogen from 200 bar(a), 20 °C to 5 bar(a) cools by about 30 K (CoolProp HEOS):

    >>> t = throttle(g.parse_gas("nitrogen"), 200e5, 5e5, 293.15)
    >>> round(t.temperature_change_k, 1)
    -31.5
    """
    if p_out >= p_in:
        raise InputError(
            f"outlet {p_out / 1e5:.4g} bar(a) is not below inlet {p_in / 1e5:.4g} bar(a): a regulator only reduces pressure"
        )
    notes: list[str] = []
    if not saturated_vapour and g.is_liquefied(gas, T_in, p_in):
        saturated_vapour = True
        notes.append(f"{gas.name} is liquefied at the inlet: taken as vapour drawn off the liquid "
                     "(a dip-tube cylinder delivering liquid forms far more solid)")
    if saturated_vapour:
        h = float(g._update(gas, "QT_INPUTS", 1.0, T_in).hmass())
    else:
        h = g.enthalpy(gas, T_in, p_in)
    if gas.is_mixture:
        T_out = _solve_T_for_h(gas, h, p_out, T_in)
        notes.append("mixture: outlet computed for the gas phase; condensation of a heavy component is not checked")
        return Throttle(gas.name, p_in, p_out, T_in, T_out, T_out - T_in, False, False, None,
                        tuple(notes), "isenthalpic, real gas (CoolProp HEOS, gas phase)")
    CP = g.coolprop()
    Tt, pt = g.triple_point(gas)
    if p_out < pt:
        h_vap_tt = g.enthalpy(gas, Tt + 1e-3, p_out)
        if h < h_vap_tt:
            notes.append(
                f"the expanded gas would be colder than the triple point ({Tt - 273.15:.1f} °C) at "
                f"{p_out / 1e5:.2f} bar(a): solid {gas.name} forms and can block the regulator"
            )
            return Throttle(gas.name, p_in, p_out, T_in, Tt, Tt - T_in, True, False, None, tuple(notes),
                            "isenthalpic, real gas (CoolProp HEOS); outlet bounded by the triple point")
    try:
        AS = g._update(gas, "HmassP_INPUTS", h, p_out)
    except PropertyError as exc:
        raise PropertyError(f"no outlet state for {gas.name} throttled to {p_out / 1e5:.3g} bar(a): {exc}") from None
    T_out = float(AS.T())
    q = float(AS.Q())
    phase = AS.phase()
    liquid = phase == CP.iphase_twophase or (0.0 <= q < 1.0)
    vapour_fraction = q if liquid else None
    solid = False
    if liquid:
        notes.append(f"liquid forms at the outlet (vapour fraction {q:.2f}) at {T_out - 273.15:.1f} °C")
        if p_out <= pt * 1.02:
            solid = True
            notes.append(f"outlet at the triple point pressure of {gas.name}: solid can form")
    if T_out < 273.15 and not solid:
        notes.append(f"outlet {T_out - 273.15:.1f} °C: moisture freezes on the body; ice can form outside")
    return Throttle(gas.name, p_in, p_out, T_in, T_out, T_out - T_in, solid, liquid, vapour_fraction,
                    tuple(notes), "isenthalpic, real gas (CoolProp HEOS)")


def joule_thomson_coefficient(gas: g.Gas, T: float, p: float, dp: float = 1e3) -> float:
    """Joule–Thomson coefficient μ_JT = (∂T/∂p)_h [K/Pa], by a small isenthalpic step."""
    h = g.enthalpy(gas, T, p)
    if gas.is_mixture:
        T1 = _solve_T_for_h(gas, h, p - dp, T)
        T2 = _solve_T_for_h(gas, h, p + dp, T)
    else:
        T1 = float(g._update(gas, "HmassP_INPUTS", h, p - dp).T())
        T2 = float(g._update(gas, "HmassP_INPUTS", h, p + dp).T())
    return (T2 - T1) / (2 * dp)


def outlet_drift(set_point_abs: float, inlet_at_setting_abs: float, inlet_abs: float,
                 effects: tuple[float, ...]) -> float:
    """Regulator outlet [Pa abs] at another inlet pressure, by the supply-pressure effect.

    The supply-pressure effect (SPE) of a stage is the outlet rise per unit fall of its inlet
    (manufacturers quote it as e.g. "0.02 bar per bar" or a percentage). For two stages the
    effect at the outlet is the product of the stages' effects (the first stage's drift is the
    second stage's inlet change):

        p_out = p_set + Π(SPE_i)·(p_in,set − p_in)

    >>> round(outlet_drift(5e5, 150e5, 20e5, (0.01,)) / 1e5, 2)
    6.3
    >>> round(outlet_drift(5e5, 150e5, 20e5, (0.01, 0.02)) / 1e5, 3)
    5.026
    """
    if not effects:
        return set_point_abs
    for e in effects:
        if not math.isfinite(e) or e < 0 or e > 1:
            raise InputError(f"supply-pressure effect {e!r} must be between 0 and 1 (outlet change per inlet change)")
    total = math.prod(effects)
    return set_point_abs + total * (inlet_at_setting_abs - inlet_abs)
