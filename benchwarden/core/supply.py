"""Supplies: what a cylinder holds, what it does when it warms, how long it lasts.

All functions take SI floats (Pa absolute, K, m³, kg, s) and return small frozen records.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from benchwarden.core import gas as g
from benchwarden.errors import InputError
from benchwarden.units import (
    REFERENCES,
    Flow,
    Reference,
    check_positive,
    check_range,
    fmt_pressure,
    fmt_temperature,
)
from benchwarden.units.constants import ATM_PA, T0_K, T_FULL_K

#: Largest water volume taken as one supply: a cylinder bundle (5 m³).
MAX_SUPPLY_M3 = 5.0

#: Highest temperature at which compressed-gas cylinders should be stored, [K]:
#: 52 °C / 125 °F (CGA P-1 "Safe handling of compressed gases in containers", from memory).
STORAGE_LIMIT_K = 52.0 + T0_K
#: Temperature at which the developed pressure must not exceed the test pressure, [K]:
#: 65 °C (ADR/RID packing instruction P200 and EN ISO 11114 filling rules, from memory).
DEVELOPED_PRESSURE_K = 65.0 + T0_K


@dataclass(frozen=True)
class Contents:
    gas_name: str
    volume_m3: float
    temperature_k: float
    pressure_abs_pa: float | None
    liquefied: bool
    density_kg_m3: float | None
    z: float | None
    mass_kg: float | None
    moles: float | None
    reference: Reference
    free_volume_m3: float | None
    ideal_mass_kg: float | None
    ideal_free_volume_m3: float | None
    real_vs_ideal_percent: float | None
    method: str
    notes: tuple[str, ...] = ()
    #: ``gas``, ``supercritical``, ``liquid``, ``two-phase``, ``liquefied`` (vapour over liquid:
    #: weigh it) or ``liquid-full`` (no vapour space: hydraulic-rupture hazard)
    phase: str = "gas"
    #: molar vapour fraction of a two-phase mixture
    vapour_fraction: float | None = None
    #: filling ratio [kg/L of water capacity] and whether it exceeds the gas's permitted one
    filling_ratio_kg_l: float | None = None
    overfilled: bool = False


def free_volume(gas: g.Gas, mass_kg: float, reference: Reference) -> float:
    """Free-gas volume [m³] of ``mass_kg`` at a reference condition, using the gas's real
    density there (CoolProp HEOS)."""
    return mass_kg / g.density(gas, reference.temperature_k, reference.pressure_pa)


def contents(
    gas: g.Gas,
    volume_m3: float,
    p_abs: float,
    T: float,
    reference: Reference = REFERENCES["15C"],
) -> Contents:
    """Contents of a cylinder of water volume V at absolute pressure p and temperature T.

    Real gas: m = ρ(T, p)·V with ρ from the reference equation of state (CoolProp HEOS).
    The ideal-gas comparison is the "P·V/T" figure, V_free = V·(p/p_ref)·(T_ref/T).

    Parameters
    ----------
    volume_m3 : Water (internal) volume of the cylinder, [m³]
    p_abs : Absolute pressure, [Pa]
    T : Gas temperature, [K]

    Notes
    -----
    A gas sold liquefied (CO2, SF6) below its critical temperature and at its vapour pressure
    has no pressure-based contents: ``liquefied`` is True and the mass fields are None; weigh it
    (see :func:`contents_by_weight`).

    Examples
    --------
    A 50 L nitrogen cylinder at 200 bar(g) and 15 °C (CoolProp HEOS):

    >>> c = contents(g.parse_gas("nitrogen"), 0.050, 201.01325e5, 288.15)
    >>> round(c.mass_kg, 2), round(c.free_volume_m3, 2), round(c.z, 4)
    (11.21, 9.46, 1.0485)
    """
    check_range(volume_m3, "cylinder volume", 0.0, MAX_SUPPLY_M3, "m³", "a cylinder bundle at most")
    g.check_state(gas, T, p_abs)
    ideal_free = volume_m3 * (p_abs / reference.pressure_pa) * (reference.temperature_k / T)
    ideal_mass = p_abs * volume_m3 * gas.molar_mass / (g.R * T)
    if g.is_liquid_full(gas, T, p_abs):
        p_sat = g.saturation_pressure(gas, T)
        return Contents(
            gas.name, volume_m3, T, p_abs, True, None, None, None, None, reference, None,
            None, None, None, "liquid-full: no vapour space",
            (f"STOP: {fmt_pressure(p_abs, kind='absolute')} is well above the vapour pressure of {gas.name} at "
             f"{fmt_temperature(T)} ({fmt_pressure(p_sat, kind='absolute')}): the cylinder is full of liquid (overfilled, or "
             "warmer than stated); warming it further raises the pressure steeply — a hydraulic-rupture "
             "hazard. Keep it cool, do not use it, and call the supplier.",),
            phase="liquid-full",
        )
    if g.is_liquefied(gas, T, p_abs):
        return Contents(
            gas.name, volume_m3, T, p_abs, True, None, None, None, None, reference, None,
            None, None, None, "liquefied: weigh the cylinder",
            (f"{gas.name} is liquid in the cylinder at {fmt_temperature(T)} (below its critical "
             f"temperature {fmt_temperature(g.critical_temperature(gas))}): the pressure is its vapour "
             "pressure and says nothing about how much is left; weigh it (gross − tare).",),
            phase="liquefied",
        )
    st = g.pt_state(gas, T, p_abs)
    ph, rho, z = st.phase, st.density, st.z
    mass = rho * volume_m3
    fv = free_volume(gas, mass, reference)
    notes: list[str] = []
    if ph.kind == "two-phase":
        notes.append(
            f"two phases in the cylinder: {100 * (ph.vapour_fraction or 0.0):.0f} % of the moles are vapour, "
            "the rest liquid (phase-equilibrium flash); the mass is the total, but the gas drawn off is "
            "not the filled mixture, and the pressure no longer falls in proportion to the contents"
        )
    elif ph.kind == "liquid":
        notes.append(f"{gas.name} is a liquid at {fmt_temperature(T)} and {fmt_pressure(p_abs, kind='absolute')}, not a gas: "
                     "check the temperature and pressure you gave")
    if gas.sold_liquefied and T < g.critical_temperature(gas):
        notes.append("below the vapour pressure: no liquid left, only vapour; pressure falls fast from here")
    pairs = g.estimated_pairs(gas)
    if pairs:
        notes.append("mixing parameters estimated (Lorentz-Berthelot) for " + ", ".join(f"{a}–{b}" for a, b in pairs))
    return Contents(
        gas.name, volume_m3, T, p_abs, False, rho, z, mass, mass / gas.molar_mass, reference, fv,
        ideal_mass, ideal_free, 100.0 * (fv - ideal_free) / ideal_free,
        "real gas, CoolProp HEOS reference equation of state" + (
            " (phase-equilibrium flash)" if gas.is_mixture else ""), tuple(notes),
        phase=ph.kind, vapour_fraction=ph.vapour_fraction,
    )


def contents_by_weight(
    gas: g.Gas, gross_kg: float, tare_kg: float, reference: Reference = REFERENCES["15C"],
    T: float = T_FULL_K, volume_m3: float | None = None,
) -> Contents:
    """Contents of a cylinder from its weights: m = gross − tare (the method for liquefied gases).

    >>> c = contents_by_weight(g.parse_gas("co2"), 75.0, 68.5)
    >>> round(c.mass_kg, 1), round(c.free_volume_m3, 3)
    (6.5, 3.473)
    """
    for v, what in ((gross_kg, "gross weight"), (tare_kg, "tare weight")):
        check_positive(v, what, "kg")
    if gross_kg < tare_kg:
        raise InputError(f"gross weight {gross_kg:g} kg is below the tare weight {tare_kg:g} kg")
    mass = gross_kg - tare_kg
    if mass <= 0:
        raise InputError(f"gross weight {gross_kg:g} kg equals the tare weight: the cylinder is empty")
    fv = free_volume(gas, mass, reference)
    ideal_fv = mass / gas.molar_mass * g.R * reference.temperature_k / reference.pressure_pa
    notes: list[str] = []
    ratio = None
    over = False
    limit = None if gas.is_mixture else gas.components[0][0].handling.max_filling_ratio_kg_l
    if volume_m3 is not None:
        check_positive(volume_m3, "cylinder volume", "m³")
        ratio = mass / (volume_m3 * 1000.0)
        if limit is not None and ratio > limit:
            over = True
            notes.append(f"STOP: {mass:.2f} kg in {volume_m3 * 1000:.3g} L is {ratio:.2f} kg/L, above the "
                         f"{limit:.2f} kg/L filling ratio permitted for {gas.name}: the cylinder is overfilled and "
                         "becomes liquid-full on warming — a hydraulic-rupture hazard. Check the weights; "
                         "if they are right, keep it cool, do not use it and call the supplier.")
    elif limit is not None:
        notes.append(f"give the cylinder's water volume to check the filling ratio (at most {limit:.2f} kg/L)")
    return Contents(
        gas.name, volume_m3 or math.nan, T, None, gas.sold_liquefied, None, None, mass,
        mass / gas.molar_mass, reference, fv, mass, ideal_fv, 100.0 * (fv - ideal_fv) / ideal_fv,
        "by weight (gross − tare)", tuple(notes), phase="liquefied" if gas.sold_liquefied else "gas",
        filling_ratio_kg_l=ratio, overfilled=over,
    )


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

    >>> h = heat_up(g.parse_gas("nitrogen"), 201.01325e5, 288.15, 323.15)
    >>> round(h.pressure_gauge_pa / 1e5, 1)
    234.8
    """
    if g.is_liquefied(gas, T1, p_abs):
        raise InputError(
            f"{gas.name} is liquid in the cylinder at {fmt_temperature(T1)}: its pressure follows the "
            "vapour pressure and the fill ratio, not the gas law; use the supplier's filling-ratio data"
        )
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

    >>> r = runtime(g.parse_gas("nitrogen"), 0.05, 201.01325e5, 11.01325e5, 293.15, 1.2505e-3 / 60 * 2)
    >>> round(r.hours_to_reserve, 2)
    68.91
    """
    check_range(volume_m3, "cylinder volume", 0.0, MAX_SUPPLY_M3, "m³", "a cylinder bundle at most")
    if reserve_abs >= p_abs:
        raise InputError(
            f"reserve {fmt_pressure(reserve_abs, kind='absolute')} is at or above the current pressure "
            f"{fmt_pressure(p_abs, kind='absolute')}: nothing is usable"
        )
    if not math.isfinite(draw_kg_s) or draw_kg_s < 0:
        raise InputError(f"total draw {draw_kg_s!r} kg/s must be zero or more")
    if g.is_liquefied(gas, T, p_abs):
        raise InputError(f"{gas.name} is liquid in the cylinder at {fmt_temperature(T)}; run time needs the weight")
    m_now = g.density(gas, T, p_abs) * volume_m3
    m_res = g.density(gas, T, reserve_abs) * volume_m3
    usable = m_now - m_res
    hours = usable / draw_kg_s / 3600.0 if draw_kg_s > 0 else math.inf
    return Runtime(gas.name, usable, m_now, m_res, draw_kg_s, hours, "real-gas mass above reserve / total draw")
