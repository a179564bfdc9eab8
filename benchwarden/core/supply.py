"""Supplies: what a cylinder holds (:mod:`benchwarden.core.contents`, re-exported here), what it
does when it warms, how long it lasts.

All functions take SI floats (Pa absolute, K, m³, kg, s) and return small frozen records.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from benchwarden.core import gas as g
from benchwarden.core.contents import *  # noqa: F403 - re-exported: supply is the one name for a cylinder
from benchwarden.core.contents import MAX_SUPPLY_M3
from benchwarden.core.contents import __all__ as _contents_all
from benchwarden.errors import KELVIN, PA_ABS, InputError, RangeError
from benchwarden.units import (
    Flow,
    check_range,
)
from benchwarden.units.constants import ATM_PA, T0_K

__all__ = [*_contents_all, "STORAGE_LIMIT_K", "DEVELOPED_PRESSURE_K", "HeatUp", "heat_up", "mass_flow", "Runtime",
           "runtime"]

#: Highest temperature at which compressed-gas cylinders should be stored, [K]:
#: 52 °C / 125 °F (CGA P-1 "Safe handling of compressed gases in containers", from memory).
STORAGE_LIMIT_K = 52.0 + T0_K

#: Temperature at which the developed pressure must not exceed the test pressure, [K]:
#: 65 °C (ADR/RID packing instruction P200 and EN ISO 11114 filling rules, from memory).
DEVELOPED_PRESSURE_K = 65.0 + T0_K

@dataclass(frozen=True)
class HeatUp:
    gas_name: str
    temperature_from_k: float
    temperature_to_k: float
    pressure_from_abs_pa: float
    pressure_abs_pa: float
    pressure_gauge_pa: float
    ideal_pressure_abs_pa: float
    service_abs_pa: float | None
    test_abs_pa: float | None
    above_storage_limit: bool
    above_service_pressure: bool
    above_test_pressure: bool
    method: str

def heat_up(
    gas: g.Gas, p_abs: float, T1: float, T2: float, ambient_pa: float = ATM_PA,
    service_abs: float | None = None, test_abs: float | None = None,
) -> HeatUp:
    """Pressure of a closed cylinder taken from T1 to T2 at constant density (isochoric).

    Real gas: ρ = ρ(T1, p1), then p2 = p(ρ, T2), both from CoolProp HEOS. Ideal comparison
    p2 = p1·T2/T1. Compares p2 with the service pressure (rated at 15 °C, ISO 10286, from memory) and the
    test pressure, and T2 with the common 52 °C storage limit (CGA P-1, from memory).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    p_abs : Absolute pressure now, [Pa]
    T1, T2 : Temperatures now and then, [K]
    ambient_pa : Ambient pressure, [Pa]
    service_abs, test_abs : Service and test pressures (absolute), [Pa]

    Returns
    -------
    HeatUp
        Pressure after the change [Pa] (real and ideal gas) and whether it passes the storage limit,
        the service and the test pressure.

    Notes
    -----
    Isochoric: ρ = ρ(T1, p1) stays; p2 = p(ρ, T2).

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    ISO 10286 (service pressure at 15 °C); CGA P-1 (52 °C storage limit) — both from memory.

    Examples
    --------
    >>> h = heat_up(g.parse_gas("nitrogen"), 201.01325e5, 288.15, 323.15)
    >>> round(h.pressure_gauge_pa / 1e5, 1)
    234.8
    """
    if g.is_liquefied(gas, T1, p_abs):
        raise InputError(
            f"{gas.name} is liquid in the cylinder at {{0}}: its pressure follows the "
            "vapour pressure and the fill ratio, not the gas law; use the supplier's filling-ratio data",
            quantities=((T1, KELVIN),))
    rho = g.density(gas, T1, p_abs)
    p2 = g.pressure_from_density(gas, rho, T2)
    above_storage = T2 > STORAGE_LIMIT_K
    above_test = test_abs is not None and p2 > test_abs
    above_service = service_abs is not None and p2 > service_abs
    return HeatUp(gas.name, T1, T2, p_abs, p2, p2 - ambient_pa, p_abs * T2 / T1, service_abs, test_abs,
                  above_storage, above_service, above_test, "isochoric, real gas (CoolProp HEOS)")

def mass_flow(gas: g.Gas, flow: Flow, T: float | None = None, p_abs: float | None = None) -> float:
    """Mass flow [kg/s] of a parsed flow.

    A standard flow converts through the real density at its reference condition
    (ṁ = Q_std·ρ(T_ref, p_ref)); an actual volume flow through the density at (T, p),
    which must then be given.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    flow : a parsed flow (standard with its reference, mass, or actual volume)
    T : Temperature of an actual volume flow, [K]
    p_abs : Absolute pressure of an actual volume flow, [Pa]

    Returns
    -------
    float
        Mass flow [kg/s].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    DIN 1343 / ISO 13443 (standard reference conditions).

    Examples
    --------
    >>> round(mass_flow(g.parse_gas("nitrogen"), __import__("benchwarden.units").units.parse_flow("1 slpm")) * 6e4, 4)
    1.2505
    """
    if flow.kind == "mass":
        return flow.value
    if flow.kind == "standard":
        assert flow.reference is not None
        return flow.value * g.density(gas, flow.reference.temperature_k, flow.reference.pressure_pa)
    if T is None or p_abs is None:
        raise InputError(f"flow {flow.text!r} is an actual volume flow; give it as a standard flow "
                         "(slpm, sccm, Nm3/h) or a mass flow (g/min)")
    return flow.value * g.density(gas, T, p_abs)

@dataclass(frozen=True)
class Runtime:
    gas_name: str
    usable_mass_kg: float
    mass_now_kg: float
    mass_reserve_kg: float
    draw_kg_s: float
    hours_to_reserve: float
    method: str

def runtime(gas: g.Gas, volume_m3: float, p_abs: float, reserve_abs: float, T: float, draw_kg_s: float) -> Runtime:
    """Hours until the supply falls to its reserve at a constant total draw.

    usable = V·(ρ(T, p) − ρ(T, p_reserve)) with real-gas densities (CoolProp HEOS), at constant
    temperature; t = usable / ṁ.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    volume_m3 : Water volume, [m³]
    p_abs : Absolute pressure now, [Pa]
    reserve_abs : Absolute reserve pressure, [Pa]
    T : Temperature, [K]
    draw_kg_s : Total draw, [kg/s]

    Returns
    -------
    Runtime
        Usable mass, mass now and at the reserve [kg], and hours to the reserve [h].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.

    Examples
    --------
    >>> r = runtime(g.parse_gas("nitrogen"), 0.05, 201.01325e5, 11.01325e5, 293.15, 1.2505e-3 / 60 * 2)
    >>> round(r.hours_to_reserve, 2)
    68.91
    """
    check_range(volume_m3, "cylinder volume", 0.0, MAX_SUPPLY_M3, "m³", "a cylinder bundle at most")
    if reserve_abs >= p_abs:
        raise RangeError(what="reserve", value=reserve_abs, hi=p_abs, hi_open=True, unit=PA_ABS,
                         hi_name="the current pressure", why="else nothing is usable")
    if not math.isfinite(draw_kg_s) or draw_kg_s < 0:
        raise RangeError(what="total draw", value=draw_kg_s, lo=0.0, unit="kg/s")
    if g.is_liquefied(gas, T, p_abs):
        raise InputError(f"{gas.name} is liquid in the cylinder at {{0}}; run time needs the weight",
                         quantities=((T, KELVIN),))
    m_now = g.density(gas, T, p_abs) * volume_m3
    m_res = g.density(gas, T, reserve_abs) * volume_m3
    usable = m_now - m_res
    hours = usable / draw_kg_s / 3600.0 if draw_kg_s > 0 else math.inf
    return Runtime(gas.name, usable, m_now, m_res, draw_kg_s, hours, "real-gas mass above reserve / total draw")
