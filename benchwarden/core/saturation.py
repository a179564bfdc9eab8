"""Saturation, critical and triple points, and what they mean for a cylinder of a gas sold
liquefied (liquefied, liquid-full) — re-exported by :mod:`benchwarden.core.gas`.

References
----------
CoolProp HEOS (Bell et al. 2014, see :mod:`benchwarden.core.properties`) with the reference
equations of state: Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509–1596 (CO2); Guder &
Wagner, J. Phys. Chem. Ref. Data 38 (2009) 33–94 (SF6).
"""

from __future__ import annotations

from typing import Any

from benchwarden.core import eos
from benchwarden.core.gases import Gas, parse_gas  # noqa: F401 - parse_gas: the doctests use it
from benchwarden.core.properties import coolprop, density, state, state_at
from benchwarden.errors import KELVIN, PA_ABS, InputError, PropertyError

__all__ = ["vapour_enthalpy", "vapour_density", "saturated_vapour_enthalpy", "critical_temperature", "triple_point",
           "saturation_pressure", "critical_pressure", "saturation_densities",
           "saturated_vapour_density_at_p", "liquid_full_temperature", "NEAR_VAPOUR_PRESSURE",
           "LIQUID_FULL_FACTOR", "is_liquid_full", "is_liquefied"]

def saturated_vapour_enthalpy(gas: Gas, T: float) -> float:
    """Enthalpy [J/kg] of the saturated vapour of a pure gas at T [K].

    Parameters
    ----------
    gas : a pure gas
    T : Temperature, [K]

    Returns
    -------
    float
        Saturated vapour specific enthalpy [J/kg].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if gas.is_mixture:
        raise InputError("saturation is defined here only for pure gases")
    return float(state_at(gas, "QT_INPUTS", 1.0, T).hmass())

def critical_temperature(gas: Gas) -> float:
    """Critical temperature [K] of a pure gas (pseudo-critical for a mixture).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    float
        Critical (or pseudo-critical) temperature [K].

    Notes
    -----
    A mixture's figure is the mole-fraction-weighted (Kay's rule) pseudo-critical temperature.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    Kay, W. B., Ind. Eng. Chem. 28 (1936) 1014 (pseudo-critical rule).
    """
    AS = state(gas)
    if gas.is_mixture:
        return sum(x * float(state(Gas(((g, 1.0),))).T_critical()) for g, x in gas.components)
    return float(AS.T_critical())

def triple_point(gas: Gas) -> tuple[float, float]:
    """Triple point (T [K], p [Pa]) of a pure gas.

    Parameters
    ----------
    gas : a pure gas

    Returns
    -------
    tuple of float
        (T [K], p [Pa]) of the triple point.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if gas.is_mixture:
        raise InputError("a mixture has no single triple point")
    CP = coolprop()
    AS = state(gas)
    return float(AS.Ttriple()), float(AS.trivial_keyed_output(CP.iP_triple))

def saturation_pressure(gas: Gas, T: float) -> float:
    """Vapour pressure [Pa] of a pure gas at T [K] between its triple and critical points.

    Parameters
    ----------
    gas : a pure gas
    T : Temperature, [K]

    Returns
    -------
    float
        Vapour pressure [Pa].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if gas.is_mixture:
        raise InputError("saturation pressure is defined here only for pure gases")
    AS = state_at(gas, "QT_INPUTS", 0.0, T)
    return float(AS.p())

def critical_pressure(gas: Gas) -> float:
    """Critical pressure [Pa] of a pure gas (CoolProp HEOS; pseudo-critical, mole-fraction
    weighted, for a mixture).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    float
        Critical (or pseudo-critical) pressure [Pa].

    Notes
    -----
    A mixture's figure is the mole-fraction-weighted (Kay's rule) pseudo-critical pressure.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    Kay, W. B., Ind. Eng. Chem. 28 (1936) 1014 (pseudo-critical rule).
    """
    if gas.is_mixture:
        return sum(x * float(state(Gas(((c, 1.0),))).p_critical()) for c, x in gas.components)
    return float(state(gas).p_critical())

def saturation_densities(gas: Gas, T: float) -> tuple[float, float]:
    """(saturated liquid, saturated vapour) mass densities [kg/m³] of a pure gas at T [K].

    Parameters
    ----------
    gas : a pure gas
    T : Temperature, [K]

    Returns
    -------
    tuple of float
        (saturated liquid, saturated vapour) densities [kg/m³].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if gas.is_mixture:
        raise InputError("saturation is defined here only for pure gases")
    rho_l = float(state_at(gas, "QT_INPUTS", 0.0, T).rhomass())
    return rho_l, float(state_at(gas, "QT_INPUTS", 1.0, T).rhomass())

def saturated_vapour_density_at_p(gas: Gas, p: float) -> float:
    """Saturated vapour density [kg/m³] of a pure gas at absolute pressure p [Pa] (below its
    critical pressure; at or above it, the density at the critical temperature).

    Parameters
    ----------
    gas : a pure gas
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        Saturated vapour density [kg/m³].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if p >= critical_pressure(gas):
        return density(gas, critical_temperature(gas), p)
    return float(state_at(gas, "PQ_INPUTS", p, 1.0).rhomass())

def liquid_full_temperature(gas: Gas, rho: float) -> float | None:
    """Temperature [K] at which a closed cylinder of a pure gas at mean density ρ [kg/m³]
    becomes liquid-full: where the saturated liquid density falls to ρ (it decreases from the
    triple point to the critical point). None for a fill at or below the critical density
    (it never becomes liquid-full); the triple-point temperature for a fill denser than the
    liquid there.

    Parameters
    ----------
    gas : a pure gas
    rho : Mean density of the fill (mass / water volume), [kg/m³]

    Returns
    -------
    float or None
        Temperature [K] at which the fill becomes liquid-full, or None.

    Notes
    -----
    Bisection on the saturated liquid density ρ_L(T), which falls monotonically from the
    triple point to the critical point.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
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
    steeply — a hydraulic-rupture hazard.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    bool
        True where the cylinder is full of liquid.

    Notes
    -----
    Threshold :data:`LIQUID_FULL_FACTOR` (10 % above the vapour pressure: gauge error and a
    few kelvin stay inside it; common practice).

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if not gas.sold_liquefied or T >= critical_temperature(gas):
        return False
    return p > LIQUID_FULL_FACTOR * saturation_pressure(gas, T)

def is_liquefied(gas: Gas, T: float, p: float) -> bool:
    """Whether a cylinder of a gas sold liquefied (CO2, SF6) holds liquid at T [K], p [Pa].

    True when T is below the critical temperature and p is at least 95 % of the vapour pressure;
    below that the cylinder holds only vapour and its pressure does tell its contents.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    bool
        True where the cylinder holds liquid.

    Notes
    -----
    Threshold :data:`NEAR_VAPOUR_PRESSURE` (a reading within 5 % below the vapour pressure
    is taken as saturated: benchwarden rule).

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if not gas.sold_liquefied:
        return False
    if T >= critical_temperature(gas):
        return False
    return p >= NEAR_VAPOUR_PRESSURE * saturation_pressure(gas, T)


def vapour_enthalpy(gas: Gas, T: float, p: float) -> float:
    """Specific enthalpy [J/kg] of the *vapour* at (T, p), also below the triple-point
    temperature where CoolProp's range check stops (the vapour branch of the same Helmholtz
    equation, evaluated with the gas phase imposed; used for CO2 vapour above its
    sublimation line). Pure gases only.

    Parameters
    ----------
    gas : a pure gas
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        Vapour specific enthalpy [J/kg].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509–1596 (CO2).

    Examples
    --------
    >>> round(vapour_enthalpy(parse_gas("co2"), 204.15, 101325.0) / 1e3, 1)
    429.9
    """
    return float(_vapour_state(gas, T, p).hmass())


def vapour_density(gas: Gas, T: float, p: float) -> float:
    """Mass density [kg/m³] of the *vapour* at (T, p), also below the triple-point temperature
    (the vapour branch imposed, as in :func:`vapour_enthalpy`). Pure gases only.

    Parameters
    ----------
    gas : a pure gas
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        Vapour mass density [kg/m³].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    return float(_vapour_state(gas, T, p).rhomass())


def _vapour_state(gas: Gas, T: float, p: float) -> Any:
    if gas.is_mixture:
        raise InputError("the vapour branch below the triple point is for pure gases")
    AS = eos.update(gas, "PT_INPUTS", p, T, imposed="gas")
    if AS is None:
        raise PropertyError(f"no vapour state of {gas.name} at {{0}}, {{1}}", quantities=((T, KELVIN), (p, PA_ABS)))
    return AS
