"""Real-gas properties from CoolProp (the catalogue is in :mod:`benchwarden.core.gases`, re-exported
here).

Real-gas properties come from CoolProp's HEOS backend (the reference multiparameter
equations of state: Span et al. 2000 for nitrogen, Tegeler et al. 1999 for argon, Lemmon et
al. 2000 for air, Span & Wagner 1996 for CO2, ...). Mixtures use CoolProp's GERG-2008 /
Kunz-Wagner mixing with published binary parameters; where CoolProp has no parameters for a
pair, the Lorentz-Berthelot rule is applied and the result says it is an estimate.

CoolProp is imported lazily; each gas has one ``AbstractState`` per thread (about ten times
cheaper per call than ``PropsSI``). These cached states are the package's only global
mutable state.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from benchwarden.core import eos
from benchwarden.core.gases import (
    AIR_MOLAR_MASS,
    PURE_GASES,
    T0,
    Gas,
    Handling,
    PureGas,
    R,
    has_sublimation_line,
    parse_gas,
    pure_gas,
    sublimation_pressure,
    sublimation_temperature,
)
from benchwarden.errors import InputError, PropertyError
from benchwarden.units import fmt_pressure, fmt_temperature

__all__ = ["has_sublimation_line", "sublimation_pressure", "sublimation_temperature", "AIR_MOLAR_MASS", "PURE_GASES", "R", "T0", "Gas", "Handling", "PureGas", "parse_gas", "pure_gas"]


# CoolProp's states live in :mod:`benchwarden.core.eos` (one door: a failed update never leaves
# a half-set state behind); re-exported here for callers that need the module or a constant.
coolprop = eos.coolprop
state = eos.state
estimated_pairs = eos.estimated_pairs
SUPERANCILLARY_SWITCH = eos.SUPERANCILLARY_SWITCH


def limits(gas: Gas) -> tuple[float, float, float]:
    """Equation-of-state limits: (T_min [K], T_max [K], p_max [Pa])."""
    AS = state(gas)
    tmin, tmax, pmax = float(AS.Tmin()), float(AS.Tmax()), float(AS.pmax())
    if gas.is_mixture:
        tmin = max(tmin, 100.0)
    return tmin, tmax, min(pmax, 1e9)


def melting_temperature(gas: Gas, p: float) -> float | None:
    """Melting temperature [K] of a pure gas at absolute pressure p [Pa] from the melting
    line of its reference equation of state (CoolProp), or None where there is none."""
    if gas.is_mixture:
        return None
    CP = coolprop()
    AS = state(gas)
    try:
        if not AS.has_melting_line():
            return None
        return float(AS.melting_line(CP.iT, CP.iP, p))
    except ValueError:
        return None


def check_state(gas: Gas, T: float, p: float | None = None) -> None:
    """Refuse a state the equation of state does not cover: temperature or pressure out of
    range, or a solid (below the melting line), with one line naming the value."""
    if not isinstance(T, (int, float)) or not math.isfinite(T) or T <= 0:
        raise InputError(f"temperature {T!r} K is not a positive finite number")
    tmin, tmax, pmax = limits(gas)
    if not tmin <= T <= tmax:
        raise InputError(
            f"temperature {fmt_temperature(T)} is outside the equation of state for {gas.name} "
            f"({fmt_temperature(tmin)} to {fmt_temperature(tmax)})"
        )
    if p is None:
        return
    if not isinstance(p, (int, float)) or not math.isfinite(p) or p <= 0:
        raise InputError(f"absolute pressure {p!r} Pa must be greater than zero")
    if p > pmax:
        raise InputError(f"pressure {fmt_pressure(p, kind='absolute')} is beyond the equation of state for {gas.name} "
                         f"(up to {fmt_pressure(pmax, kind='absolute')})")
    Tm = melting_temperature(gas, p)
    if Tm is not None and T < Tm:
        raise InputError(
            f"{gas.name} is solid at {fmt_temperature(T)} and {fmt_pressure(p, kind='absolute')} (it melts at "
            f"{fmt_temperature(Tm)} at that pressure): no gas state there"
        )


def state_at(gas: Gas, pair: str, a: float, b: float, imposed: str | None = None) -> Any:
    """This thread's state of ``gas`` updated with one CoolProp input pair (through
    :func:`benchwarden.core.eos.update`: the answer of a fresh state, whatever ran before), or a
    :class:`PropertyError` naming the inputs."""
    AS = eos.update(gas, pair, a, b, imposed)
    if AS is None:
        what = {"PT_INPUTS": f"{fmt_pressure(a, kind='absolute')}, {fmt_temperature(b)}",
                "DmassT_INPUTS": f"{a:.6g} kg/m³, {fmt_temperature(b)}",
                "HmassP_INPUTS": f"h = {a / 1e3:.6g} kJ/kg, {fmt_pressure(b, kind='absolute')}",
                "PSmass_INPUTS": f"{fmt_pressure(a, kind='absolute')}, s = {b / 1e3:.6g} kJ/(kg·K)",
                "QT_INPUTS": f"saturation at {fmt_temperature(b)}"}.get(pair, "")
        raise PropertyError(f"the equation of state of {gas.name} has no solution at {what}")
    return AS


@dataclass(frozen=True)
class Phase:
    """The phase of a state: ``gas``, ``supercritical``, ``liquid`` or ``two-phase`` (with the
    molar vapour fraction, 0 to 1)."""

    kind: str
    vapour_fraction: float | None


def phase_of(gas: Gas, AS: Any) -> Phase:
    CP = coolprop()
    ph = AS.phase()
    q = float(AS.Q())
    if ph == CP.iphase_twophase or (gas.is_mixture and 0.0 <= q < 1.0 and ph not in (CP.iphase_gas,)):
        return Phase("two-phase", min(1.0, max(0.0, q)))
    if ph in (CP.iphase_liquid,):
        return Phase("liquid", 0.0)
    if ph in (CP.iphase_supercritical, CP.iphase_supercritical_gas, CP.iphase_supercritical_liquid):
        if not gas.is_mixture and ph == CP.iphase_supercritical_liquid:
            return Phase("supercritical", None)
        return Phase("supercritical", None)
    return Phase("gas", None)


def phase(gas: Gas, T: float, p: float) -> Phase:
    """Phase of the gas at T [K], p [Pa] from a full (T, p) flash (CoolProp HEOS; mixtures
    by successive substitution and stability analysis, CoolProp 8).

    >>> phase(parse_gas("co2:0.95,nitrogen:0.05"), 283.15, 51.01325e5).kind
    'two-phase'
    """
    check_state(gas, T, p)
    return phase_of(gas, state_at(gas, "PT_INPUTS", p, T))


@dataclass(frozen=True)
class PTState:
    """Density [kg/m³], compressibility factor and phase of one (T, p) flash."""

    density: float
    z: float
    phase: Phase


def pt_state(gas: Gas, T: float, p: float) -> PTState:
    """Density, Z and phase at T [K], p [Pa] from one (T, p) flash (CoolProp HEOS)."""
    check_state(gas, T, p)
    AS = state_at(gas, "PT_INPUTS", p, T)
    return PTState(float(AS.rhomass()), float(AS.compressibility_factor()), phase_of(gas, AS))


def density(gas: Gas, T: float, p: float) -> float:
    """Mass density [kg/m³] at temperature T [K] and absolute pressure p [Pa] (CoolProp HEOS,
    full (T, p) flash: a mixture inside its two-phase region gives the overall density of
    liquid and vapour together).

    >>> round(density(parse_gas("nitrogen"), 350.0, 20e6) / 0.0280134 / 1000, 4)  # Span et al. 2000
    6.3552
    """
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).rhomass())


def z_factor(gas: Gas, T: float, p: float) -> float:
    """Compressibility factor Z = p/(ρ_molar·R·T) (CoolProp HEOS)."""
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).compressibility_factor())


def pressure_from_density(gas: Gas, rho: float, T: float) -> float:
    """Absolute pressure [Pa] of the gas at mass density ρ [kg/m³] and temperature T [K]."""
    check_state(gas, T)
    if not math.isfinite(rho) or rho <= 0:
        raise InputError(f"density {rho!r} kg/m³ must be greater than zero")
    return float(state_at(gas, "DmassT_INPUTS", rho, T).p())


def enthalpy(gas: Gas, T: float, p: float) -> float:
    """Specific enthalpy [J/kg] at T [K], p [Pa] (CoolProp HEOS)."""
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).hmass())


def entropy(gas: Gas, T: float, p: float) -> float:
    """Specific entropy [J/(kg·K)] at T [K], p [Pa] (CoolProp HEOS)."""
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).smass())


def heat_capacity_ratio(gas: Gas, T: float, p: float) -> float:
    """Ratio of specific heats cp/cv at (T, p) from CoolProp HEOS."""
    check_state(gas, T, p)
    AS = state_at(gas, "PT_INPUTS", p, T)
    return float(AS.cpmass() / AS.cvmass())


def ideal_gas_heat_capacity_ratio(gas: Gas, T: float) -> float:
    """Ideal-gas heat-capacity ratio k0 = cp0/cv0 = cp0/(cp0 − R/M) at T [K], from the ideal-gas
    part of the reference equation of state (CoolProp HEOS).

    >>> round(ideal_gas_heat_capacity_ratio(parse_gas("co2"), 293.15), 3)   # CO2 at 20 °C: about 1.29
    1.291
    """
    AS = state_at(gas, "PT_INPUTS", 1e3, T, imposed="gas")  # cp0 depends on T alone
    cp0 = float(AS.cp0mass())
    return cp0 / (cp0 - R / gas.molar_mass)


def vapour_enthalpy(gas: Gas, T: float, p: float) -> float:
    """Specific enthalpy [J/kg] of the *vapour* at (T, p), also below the triple-point
    temperature where CoolProp's range check stops (the vapour branch of the same Helmholtz
    equation, evaluated with the gas phase imposed; used for CO2 vapour above its
    sublimation line). Pure gases only.

    >>> round(vapour_enthalpy(parse_gas("co2"), 204.15, 101325.0) / 1e3, 1)
    429.9
    """
    return float(_vapour_state(gas, T, p).hmass())


def vapour_density(gas: Gas, T: float, p: float) -> float:
    """Mass density [kg/m³] of the *vapour* at (T, p), also below the triple-point temperature
    (the vapour branch imposed, as in :func:`vapour_enthalpy`). Pure gases only."""
    return float(_vapour_state(gas, T, p).rhomass())


def _vapour_state(gas: Gas, T: float, p: float) -> Any:
    if gas.is_mixture:
        raise InputError("the vapour branch below the triple point is for pure gases")
    AS = eos.update(gas, "PT_INPUTS", p, T, imposed="gas")
    if AS is None:
        raise PropertyError(f"no vapour state of {gas.name} at {fmt_temperature(T)}, {fmt_pressure(p, kind='absolute')}")
    return AS


def saturated_vapour_enthalpy(gas: Gas, T: float) -> float:
    """Enthalpy [J/kg] of the saturated vapour of a pure gas at T [K]."""
    if gas.is_mixture:
        raise InputError("saturation is defined here only for pure gases")
    return float(state_at(gas, "QT_INPUTS", 1.0, T).hmass())


def critical_temperature(gas: Gas) -> float:
    """Critical temperature [K] of a pure gas (pseudo-critical for a mixture)."""
    AS = state(gas)
    if gas.is_mixture:
        return sum(x * float(state(Gas(((g, 1.0),))).T_critical()) for g, x in gas.components)
    return float(AS.T_critical())


def triple_point(gas: Gas) -> tuple[float, float]:
    """Triple point (T [K], p [Pa]) of a pure gas."""
    if gas.is_mixture:
        raise InputError("a mixture has no single triple point")
    CP = coolprop()
    AS = state(gas)
    return float(AS.Ttriple()), float(AS.trivial_keyed_output(CP.iP_triple))


def saturation_pressure(gas: Gas, T: float) -> float:
    """Vapour pressure [Pa] of a pure gas at T [K] between its triple and critical points."""
    if gas.is_mixture:
        raise InputError("saturation pressure is defined here only for pure gases")
    AS = state_at(gas, "QT_INPUTS", 0.0, T)
    return float(AS.p())


def critical_pressure(gas: Gas) -> float:
    """Critical pressure [Pa] of a pure gas (CoolProp HEOS; pseudo-critical, mole-fraction
    weighted, for a mixture)."""
    if gas.is_mixture:
        return sum(x * float(state(Gas(((c, 1.0),))).p_critical()) for c, x in gas.components)
    return float(state(gas).p_critical())


def saturation_densities(gas: Gas, T: float) -> tuple[float, float]:
    """(saturated liquid, saturated vapour) mass densities [kg/m³] of a pure gas at T [K]."""
    if gas.is_mixture:
        raise InputError("saturation is defined here only for pure gases")
    rho_l = float(state_at(gas, "QT_INPUTS", 0.0, T).rhomass())
    return rho_l, float(state_at(gas, "QT_INPUTS", 1.0, T).rhomass())


def saturated_vapour_density_at_p(gas: Gas, p: float) -> float:
    """Saturated vapour density [kg/m³] of a pure gas at absolute pressure p [Pa] (below its
    critical pressure; at or above it, the density at the critical temperature)."""
    if p >= critical_pressure(gas):
        return density(gas, critical_temperature(gas), p)
    return float(state_at(gas, "PQ_INPUTS", p, 1.0).rhomass())


def liquid_full_temperature(gas: Gas, rho: float) -> float | None:
    """Temperature [K] at which a closed cylinder of a pure gas at mean density ρ [kg/m³]
    becomes liquid-full: where the saturated liquid density falls to ρ (it decreases from the
    triple point to the critical point). None for a fill at or below the critical density
    (it never becomes liquid-full); the triple-point temperature for a fill denser than the
    liquid there."""
    if gas.is_mixture:
        return None
    AS = state(gas)
    Tc, rho_c = float(AS.T_critical()), float(AS.rhomass_critical())
    if rho <= rho_c:
        return None
    Tt = float(AS.Ttriple())
    if rho >= saturation_densities(gas, Tt)[0]:
        return Tt
    lo, hi = Tt, Tc - 1e-6
    for _ in range(80):  # bisection on the decreasing saturated liquid density
        mid = 0.5 * (lo + hi)
        if saturation_densities(gas, mid)[0] > rho:
            lo = mid
        else:
            hi = mid
        if hi - lo < 1e-6:
            break
    return 0.5 * (lo + hi)


#: A reading this close below the vapour pressure may still have liquid behind it (gauge error,
#: a cylinder a little warmer than stated): the plan and the throttle treat it as saturated,
#: ``contents`` answers with a flag (benchwarden rule, 5 %).
NEAR_VAPOUR_PRESSURE = 0.95

#: A liquefied gas's pressure this far above its vapour pressure means no vapour space is left
#: (gauge error and a few kelvin of temperature error stay inside it; common practice).
LIQUID_FULL_FACTOR = 1.10


def is_liquid_full(gas: Gas, T: float, p: float) -> bool:
    """Whether a gas sold liquefied, below its critical temperature, stands at a pressure
    well above its vapour pressure (more than 10 %): the cylinder is full of liquid
    (overfilled, or warmer than stated) and any further warming raises the pressure
    steeply — a hydraulic-rupture hazard."""
    if not gas.sold_liquefied or T >= critical_temperature(gas):
        return False
    return p > LIQUID_FULL_FACTOR * saturation_pressure(gas, T)


def is_liquefied(gas: Gas, T: float, p: float) -> bool:
    """Whether a cylinder of a gas sold liquefied (CO2, SF6) holds liquid at T [K], p [Pa].

    True when T is below the critical temperature and p is at least 95 % of the vapour pressure;
    below that the cylinder holds only vapour and its pressure does tell its contents.
    """
    if not gas.sold_liquefied:
        return False
    if T >= critical_temperature(gas):
        return False
    return p >= NEAR_VAPOUR_PRESSURE * saturation_pressure(gas, T)


def gas_branch_densities(gas: Gas, T: float, ps: Any) -> list[float] | None:
    """Densities of a mixture at T over the pressures ``ps`` on the gas branch, or None when a
    stability check (both ends and every 8th pressure) finds a state that is not a single
    stable phase (the caller then uses full flashes)."""
    n = len(ps)
    for j in sorted(set(range(0, n, 8)) | {n - 1}):
        if phase(gas, T, float(ps[j])).kind not in ("gas", "supercritical"):
            return None
    out: list[float] = []
    try:
        for p in ps:
            check_state(gas, T, float(p))
            out.append(float(state_at(gas, "PT_INPUTS", float(p), T, imposed="gas").rhomass()))
    except PropertyError:
        return None
    return out
