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
from typing import Any

from benchwarden.core import gas as g
from benchwarden.core.flash import flash_ph, solve_increasing
from benchwarden.errors import KELVIN, PA_ABS, InputError, PropertyError, RangeError
from benchwarden.units import T0_K


@dataclass(frozen=True)
class Throttle:
    """Outlet state of a regulator (SI). ``flags`` are codes the renderers word
    (:mod:`benchwarden.render.equipment`): ``inlet-saturated`` (vapour drawn off the liquid),
    ``inlet-near-vapour-pressure`` (a reading within 5 % below the vapour pressure, treated as
    saturated), ``component-condenses``, ``liquid-forms``, ``dry-ice``, ``solid-at-triple-point``,
    ``outlet-below-freezing``."""

    gas_name: str
    inlet_abs_pa: float
    outlet_abs_pa: float
    inlet_temperature_k: float
    outlet_temperature_k: float
    temperature_change_k: float
    solid_forms: bool
    liquid_forms: bool
    vapour_fraction: float | None
    flags: tuple[str, ...]
    method: str
    #: kelvin above the line where solid forms at the outlet pressure (CO2: the sublimation line
    #: below its triple-point pressure, the melting line above); 0 where solid forms; None for a
    #: gas without one in reach
    dry_ice_margin_k: float | None = None
    #: mass fraction of solid (dry ice) in the outlet flow
    solid_fraction: float | None = None
    #: the inlet taken as saturated vapour, and the vapour pressure at the inlet temperature [Pa abs]
    inlet_saturated: bool = False
    inlet_vapour_pressure_abs_pa: float | None = None


#: Density of solid CO2 near its normal sublimation point, [kg/m³] (about 1.56 g/cm³,
#: CRC Handbook of Chemistry and Physics, from memory); only its reciprocal enters, as a small
#: correction to the vapour volume in the Clausius–Clapeyron equation.
DRY_ICE_DENSITY = 1562.0


def sublimation_enthalpy(gas: g.Gas, T: float) -> float:
    """Enthalpy of sublimation [J/kg] of CO2 at T [K] below its triple point, by the
    Clausius–Clapeyron equation Δh = T·(v_vap − v_solid)·dp/dT on the sublimation line
    (Span & Wagner 1996, eq. 3.12), with the vapour volume from the equation of state.

    Parameters
    ----------
    gas : CO2
    T : Temperature, [K] (below the triple point)

    Returns
    -------
    float
        Enthalpy of sublimation [J/kg].

    References
    ----------
    Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509–1596, eq. 3.12 (sublimation line).

    Examples
    --------
    >>> round(sublimation_enthalpy(g.parse_gas("co2"), 194.69) / 1e3)   # handbooks: ≈ 571 kJ/kg
    574
    """
    p = g.sublimation_pressure(gas, T)
    dT = 1e-3
    dpdT = (g.sublimation_pressure(gas, T + dT) - g.sublimation_pressure(gas, T - dT)) / (2 * dT)
    v_vap = 1.0 / g.vapour_density(gas, T, p)
    return T * (v_vap - 1.0 / DRY_ICE_DENSITY) * dpdT


def _vapour_outlet(gas: g.Gas, h: float, p_out: float, T_lo: float, T_hi: float) -> float:
    """Temperature of the vapour with enthalpy h at p_out, between T_lo and T_hi."""
    return solve_increasing(lambda T: g.vapour_enthalpy(gas, T, p_out) - h, T_lo, T_hi)


def _solid_line_temperature(gas: g.Gas, p: float) -> float | None:
    """Temperature [K] below which solid forms at p: the sublimation line below the triple-point
    pressure, the melting line (or the triple-point temperature) above; None without one."""
    if gas.is_mixture or not g.has_sublimation_line(gas):
        return None
    Tt, pt = g.triple_point(gas)
    if p < pt:
        return g.sublimation_temperature(gas, p)
    return g.melting_temperature(gas, p) or Tt


def _inlet(gas: g.Gas, p_in: float, T_in: float, saturated_vapour: bool) -> tuple[bool, list[str], float | None]:
    """(take the inlet as saturated vapour, flags, vapour pressure) for a throttle's inlet; refuses
    a gas sold liquefied read far above its vapour pressure (not vapour over liquid)."""
    if saturated_vapour or not gas.sold_liquefied or T_in >= g.critical_temperature(gas):
        return saturated_vapour, [], None
    p_sat = g.saturation_pressure(gas, T_in)
    if p_in > g.LIQUID_FULL_FACTOR * p_sat:
        raise InputError(
            f"inlet {{0}} is far above the vapour pressure of {gas.name} at {{1}} ({{2}}): not vapour over liquid — "
            "liquid-full, warmer than stated, or another gas", quantities=((p_in, PA_ABS), (T_in, KELVIN), (p_sat, PA_ABS)))
    if p_in >= p_sat:
        return True, ["inlet-saturated"], p_sat
    if p_in >= g.NEAR_VAPOUR_PRESSURE * p_sat:
        return True, ["inlet-saturated", "inlet-near-vapour-pressure"], p_sat
    return False, [], p_sat


def throttle(gas: g.Gas, p_in: float, p_out: float, T_in: float, saturated_vapour: bool = False) -> Throttle:
    """Outlet state of an isenthalpic expansion from (p_in, T_in) to p_out.

    Parameters
    ----------
    gas : the gas
    p_in, p_out : Absolute inlet and outlet pressures, [Pa]
    T_in : Inlet temperature, [K]
    saturated_vapour : take the inlet as saturated vapour at T_in (vapour drawn off the liquid)

    Returns
    -------
    Throttle
        Outlet temperature [K], phase, vapour or solid fraction [-] and codes (``flags``).

    Notes
    -----
    h_out = h_in (adiabatic, steady flow, negligible kinetic energy). Pure gases use CoolProp's
    (h, p) flash, which finds liquid forming (two-phase outlet). Below the triple-point pressure
    (CO2: 5.18 bar(a)) the coldest the vapour can be is the sublimation temperature at the outlet
    pressure (Span & Wagner 1996 sublimation line): when the inlet enthalpy is below that of the
    vapour there, the outlet sits on the sublimation line and solid (dry ice) forms, its mass
    fraction from the enthalpy balance with the Clausius–Clapeyron sublimation enthalpy.
    Otherwise the outlet is vapour, evaluated on the vapour branch of the equation of state also
    below the triple-point temperature; ``dry_ice_margin_k`` says how far above the solid line.
    Mixtures use a phase-equilibrium (h, p) flash (:func:`benchwarden.core.flash.flash_ph`)
    that says when a component condenses. Freezing is a result, not an error.

    A gas sold liquefied, below its critical temperature: up to 10 % above its vapour pressure
    the inlet is saturated vapour drawn off the liquid; within 5 % below it, it is *treated* as
    saturated (conservative: more solid forms; ``inlet-near-vapour-pressure``); further above,
    the input is refused (a liquid-full cylinder, a warmer cylinder, or another gas).

    References
    ----------
    Span, R. and Wagner, W., J. Phys. Chem. Ref. Data 25 (1996) 1509–1596 (equation of state,
    sublimation line eq. 3.12). Shapiro, "The Dynamics and Thermodynamics of Compressible Fluid
    Flow" (1953), ch. 2 (the steady-flow energy equation).

    Examples
    --------
    Nitrogen from 200 bar(a), 20 °C to 5 bar(a) cools by about 30 K (CoolProp HEOS):

    >>> t = throttle(g.parse_gas("nitrogen"), 200e5, 5e5, 293.15)
    >>> round(t.temperature_change_k, 1)
    -31.5

    CO2 vapour drawn off the liquid at 20 °C and expanded to 1.51 bar(a) leaves on the
    sublimation line at about −73.5 °C, with dry ice forming:

    >>> t = throttle(g.parse_gas("co2"), 58.01e5, 1.5133e5, 293.15)
    >>> round(t.outlet_temperature_k - 273.15, 1), t.solid_forms
    (-73.5, True)
    """
    if p_out >= p_in:
        raise RangeError(what="outlet pressure", value=p_out, hi=p_in, hi_open=True, unit=PA_ABS,
                         hi_name="the inlet pressure", why="a regulator only reduces pressure")
    g.check_state(gas, T_in, p_in)
    saturated, flags, p_sat = _inlet(gas, p_in, T_in, saturated_vapour)
    h = g.saturated_vapour_enthalpy(gas, T_in) if saturated else g.enthalpy(gas, T_in, p_in)
    extra: dict[str, Any] = {"inlet_saturated": saturated, "inlet_vapour_pressure_abs_pa": p_sat}
    if gas.is_mixture:
        return _mixture_outlet(gas, h, p_in, p_out, T_in, flags, extra)
    Tt, pt = g.triple_point(gas)
    T_solid = _solid_line_temperature(gas, p_out)
    if p_out < pt and g.has_sublimation_line(gas):
        assert T_solid is not None
        return _below_triple_point(gas, h, p_in, p_out, T_in, T_solid, flags, extra)
    try:
        fl = flash_ph(gas, h, p_out, T_in)
    except PropertyError:
        raise PropertyError(f"no outlet state for {gas.name} throttled to {{0}}", quantities=((p_out, PA_ABS),)) from None
    liquid = fl.phase.kind in ("two-phase", "liquid")
    solid = liquid and p_out <= pt * 1.02
    flags += ["liquid-forms"] * liquid + ["solid-at-triple-point"] * solid + ["outlet-below-freezing"] * (fl.T < T0_K)
    margin = None if T_solid is None else (0.0 if solid else fl.T - T_solid)
    return Throttle(gas.name, p_in, p_out, T_in, fl.T, fl.T - T_in, solid, liquid,
                    fl.phase.vapour_fraction if liquid else None, tuple(flags), "isenthalpic, real gas (CoolProp HEOS)",
                    dry_ice_margin_k=margin, **extra)


def _mixture_outlet(gas: g.Gas, h: float, p_in: float, p_out: float, T_in: float, flags: list[str],
                    extra: dict[str, Any]) -> Throttle:
    """A mixture's outlet by a phase-equilibrium (h, p) flash: does a component condense?"""
    fl = flash_ph(gas, h, p_out, T_in)
    liquid = fl.phase.kind in ("two-phase", "liquid")
    flags = flags + ["component-condenses"] * liquid + ["outlet-below-freezing"] * (fl.T < T0_K)
    return Throttle(gas.name, p_in, p_out, T_in, fl.T, fl.T - T_in, False, liquid,
                    fl.phase.vapour_fraction if liquid else None, tuple(flags),
                    "isenthalpic, real gas (CoolProp HEOS, phase-equilibrium (h, p) flash)", **extra)


def _below_triple_point(gas: g.Gas, h: float, p_in: float, p_out: float, T_in: float, T_solid: float,
                        flags: list[str], extra: dict[str, Any]) -> Throttle:
    """An outlet below the triple-point pressure: on the sublimation line with solid forming when
    the enthalpy is below the vapour's there (Span & Wagner 1996), else vapour above the line."""
    h_vap_sub = g.vapour_enthalpy(gas, T_solid, p_out)
    if h <= h_vap_sub:
        solid = min(1.0, (h_vap_sub - h) / sublimation_enthalpy(gas, T_solid))
        return Throttle(gas.name, p_in, p_out, T_in, T_solid, T_solid - T_in, True, False, 1.0 - solid,
                        tuple(flags + ["dry-ice", "outlet-below-freezing"]),
                        "isenthalpic, real gas (CoolProp HEOS); Span & Wagner 1996 sublimation line below the "
                        "triple point", dry_ice_margin_k=0.0, solid_fraction=solid, **extra)
    T_out = _vapour_outlet(gas, h, p_out, T_solid, max(T_in, T_solid + 1.0) + 50.0)
    flags = flags + ["outlet-below-freezing"] * (T_out < T0_K)
    return Throttle(gas.name, p_in, p_out, T_in, T_out, T_out - T_in, False, False, None, tuple(flags),
                    "isenthalpic, real gas (CoolProp HEOS, vapour branch)", dry_ice_margin_k=T_out - T_solid, **extra)


def joule_thomson_coefficient(gas: g.Gas, T: float, p: float, dp: float = 1e3) -> float:
    """Joule–Thomson coefficient μ_JT = (∂T/∂p)_h [K/Pa], by a small isenthalpic step.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]
    dp : Pressure step, [Pa]

    Returns
    -------
    float
        μ_JT [K/Pa].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    h = g.enthalpy(gas, T, p)
    T1 = flash_ph(gas, h, p - dp, T).T
    T2 = flash_ph(gas, h, p + dp, T).T
    return (T2 - T1) / (2 * dp)


def outlet_drift(set_point_abs: float, inlet_at_setting_abs: float, inlet_abs: float,
                 effects: tuple[float, ...]) -> float:
    """Regulator outlet [Pa abs] at another inlet pressure, by the supply-pressure effect.

    The supply-pressure effect (SPE) of a stage is the outlet rise per unit fall of its inlet
    (manufacturers quote it as e.g. "0.02 bar per bar" or a percentage). For two stages the
    effect at the outlet is the product of the stages' effects (the first stage's drift is the
    second stage's inlet change):

        p_out = p_set + Π(SPE_i)·(p_in,set − p_in)

    Parameters
    ----------
    set_point_abs : Outlet set point (absolute), [Pa]
    inlet_at_setting_abs : Inlet pressure when it was set, [Pa]
    inlet_abs : Inlet pressure now, [Pa]
    effects : Supply-pressure effect of each stage, [Pa/Pa]

    Returns
    -------
    float
        Outlet absolute pressure [Pa].

    References
    ----------
    Manufacturers' data sheets define the supply-pressure effect (e.g. EN ISO 2503 for gas
    welding regulators; from memory).

    Examples
    --------
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
