"""Real-gas properties from CoolProp's HEOS backend: range checks, (T, p) and (ρ, T) flashes,
phases, enthalpy, entropy, heat-capacity ratios (re-exported by :mod:`benchwarden.core.gas`).

References
----------
Bell, Wronski, Quoilin & Lemort, "Pure and pseudo-pure fluid thermophysical property evaluation
and the open-source thermophysical property library CoolProp", Ind. Eng. Chem. Res. 53 (2014)
2498–2508, with each fluid's reference equation of state (Span et al. 2000 nitrogen, Tegeler et
al. 1999 argon, Lemmon et al. 2000 air, Span & Wagner 1996 CO2, Guder & Wagner 2009 SF6, ...);
mixtures by GERG-2008 / Kunz–Wagner (J. Chem. Eng. Data 57 (2012) 3032–3091).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from benchwarden.core import eos
from benchwarden.core.gases import Gas, R, parse_gas  # noqa: F401 - parse_gas: the doctests use it
from benchwarden.errors import KELVIN, PA_ABS, PropertyError, RangeError

__all__ = ["coolprop", "state", "estimated_pairs", "SUPERANCILLARY_SWITCH", "limits",
           "melting_temperature", "check_state", "state_at", "Phase", "phase_of", "phase",
           "PTState", "pt_state", "density", "z_factor", "pressure_from_density", "enthalpy",
           "entropy", "heat_capacity_ratio", "ideal_gas_heat_capacity_ratio"]

# CoolProp's states live in :mod:`benchwarden.core.eos` (one door), re-exported here.
coolprop = eos.coolprop
state = eos.state
estimated_pairs = eos.estimated_pairs
SUPERANCILLARY_SWITCH = eos.SUPERANCILLARY_SWITCH


def limits(gas: Gas) -> tuple[float, float, float]:
    """Equation-of-state limits: (T_min [K], T_max [K], p_max [Pa]).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    tuple of float
        (T_min [K], T_max [K], p_max [Pa]) of the equation of state.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    AS = state(gas)
    tmin, tmax, pmax = float(AS.Tmin()), float(AS.Tmax()), float(AS.pmax())
    if gas.is_mixture:
        tmin = max(tmin, 100.0)
    return tmin, tmax, min(pmax, 1e9)


def melting_temperature(gas: Gas, p: float) -> float | None:
    """Melting temperature [K] of a pure gas at absolute pressure p [Pa] from the melting
    line of its reference equation of state (CoolProp), or None where there is none.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    p : Absolute pressure, [Pa]

    Returns
    -------
    float or None
        Melting temperature [K], or None where no melting line is known.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
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
    range, or a solid (below the melting line), with one line naming the value.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa], or None to check the temperature alone

    Returns
    -------
    None
        Raises :class:`~benchwarden.errors.RangeError` (with its data) outside the EOS or solid.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if not isinstance(T, (int, float)) or not math.isfinite(T) or T <= 0:
        raise RangeError(what="temperature", value=T, lo=0.0, lo_open=True, unit=KELVIN, why="a finite temperature")
    tmin, tmax, pmax = limits(gas)
    if not tmin <= T <= tmax:
        raise RangeError(what="temperature", value=T, lo=tmin, hi=tmax, unit=KELVIN,
                         why=f"the equation of state for {gas.name}")
    if p is None:
        return
    if not isinstance(p, (int, float)) or not math.isfinite(p) or p <= 0:
        raise RangeError(what="absolute pressure", value=p, lo=0.0, lo_open=True, unit=PA_ABS)
    if p > pmax:
        raise RangeError(what="pressure", value=p, hi=pmax, unit=PA_ABS, why=f"the equation of state for {gas.name}")
    Tm = melting_temperature(gas, p)
    if Tm is not None and T < Tm:
        raise RangeError(what="temperature", value=T, lo=Tm, unit=KELVIN, lo_name="the melting point",
                         where=f"{gas.name} at {{0}}", why="solid below it: no gas state there",
                         quantities=((p, PA_ABS),))


def state_at(gas: Gas, pair: str, a: float, b: float, imposed: str | None = None) -> Any:
    """This thread's state of ``gas`` updated with one CoolProp input pair (through
    :func:`benchwarden.core.eos.update`: the answer of a fresh state, whatever ran before), or a
    :class:`PropertyError` naming the inputs.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    pair : CoolProp input pair, e.g. ``"PT_INPUTS"``
    a, b : the pair's values, SI ([Pa], [K], [kg/m³], [J/kg], [J/(kg·K)])
    imposed : a phase to impose for this call (``"gas"``, ``"liquid"``), or None

    Returns
    -------
    AbstractState
        This thread's CoolProp state, updated; raises :class:`~benchwarden.errors.PropertyError`
        naming the inputs where there is no solution.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    AS = eos.update(gas, pair, a, b, imposed)
    if AS is None:
        what, figures = {"PT_INPUTS": ("{0}, {1}", ((a, PA_ABS), (b, KELVIN))),
                         "DmassT_INPUTS": ("{0}, {1}", ((a, "kg/m³"), (b, KELVIN))),
                         "HmassP_INPUTS": ("h = {0}, {1}", ((a, "J/kg"), (b, PA_ABS))),
                         "PSmass_INPUTS": ("{0}, s = {1}", ((a, PA_ABS), (b, "J/(kg·K)"))),
                         "QT_INPUTS": ("saturation at {0}", ((b, KELVIN),))}.get(pair, ("", ()))
        raise PropertyError(f"the equation of state of {gas.name} has no solution at {what}", quantities=figures)
    return AS


@dataclass(frozen=True)
class Phase:
    """The phase of a state: ``gas``, ``supercritical``, ``liquid`` or ``two-phase`` (with the
    molar vapour fraction, 0 to 1)."""

    kind: str
    vapour_fraction: float | None


def phase_of(gas: Gas, AS: Any) -> Phase:
    """The :class:`Phase` of a CoolProp state just updated (CoolProp's phase index; a mixture
    with a vapour fraction below 1 is two-phase).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    AS : a CoolProp state just updated

    Returns
    -------
    Phase
        Phase kind and vapour fraction [-] of the state.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
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

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    Phase
        Phase kind and vapour fraction [-].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.

    Examples
    --------
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
    """Density, Z and phase at T [K], p [Pa] from one (T, p) flash (CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    PTState
        Density [kg/m³], compressibility factor Z [-] and phase.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    check_state(gas, T, p)
    AS = state_at(gas, "PT_INPUTS", p, T)
    return PTState(float(AS.rhomass()), float(AS.compressibility_factor()), phase_of(gas, AS))


def density(gas: Gas, T: float, p: float) -> float:
    """Mass density [kg/m³] at temperature T [K] and absolute pressure p [Pa] (CoolProp HEOS,
    full (T, p) flash: a mixture inside its two-phase region gives the overall density of
    liquid and vapour together).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        Mass density [kg/m³].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.

    Examples
    --------
    >>> round(density(parse_gas("nitrogen"), 350.0, 20e6) / 0.0280134 / 1000, 4)  # Span et al. 2000
    6.3552
    """
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).rhomass())


def z_factor(gas: Gas, T: float, p: float) -> float:
    """Compressibility factor Z = p/(ρ_molar·R·T) (CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        Compressibility factor Z [-].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).compressibility_factor())


def pressure_from_density(gas: Gas, rho: float, T: float) -> float:
    """Absolute pressure [Pa] of the gas at mass density ρ [kg/m³] and temperature T [K].

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    rho : Mass density, [kg/m³]
    T : Temperature, [K]

    Returns
    -------
    float
        Absolute pressure [Pa].

    Notes
    -----
    A (ρ, T) flash: inside the two-phase region of a pure gas it returns the vapour pressure.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    check_state(gas, T)
    if not math.isfinite(rho) or rho <= 0:
        raise RangeError(what="density", value=rho, lo=0.0, lo_open=True, unit="kg/m³")
    return float(state_at(gas, "DmassT_INPUTS", rho, T).p())


def enthalpy(gas: Gas, T: float, p: float) -> float:
    """Specific enthalpy [J/kg] at T [K], p [Pa] (CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        Specific enthalpy [J/kg].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).hmass())


def entropy(gas: Gas, T: float, p: float) -> float:
    """Specific entropy [J/(kg·K)] at T [K], p [Pa] (CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        Specific entropy [J/(kg·K)].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    check_state(gas, T, p)
    return float(state_at(gas, "PT_INPUTS", p, T).smass())


def heat_capacity_ratio(gas: Gas, T: float, p: float) -> float:
    """Ratio of specific heats cp/cv at (T, p) from CoolProp HEOS.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]
    p : Absolute pressure, [Pa]

    Returns
    -------
    float
        cp/cv of the real fluid [-].

    Notes
    -----
    The real-fluid ratio: near saturation it is far from the ideal-gas value (CO2 at 55
    bar(g), 20 °C: about 3.3); nozzle comparisons use :func:`ideal_gas_heat_capacity_ratio`.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    check_state(gas, T, p)
    AS = state_at(gas, "PT_INPUTS", p, T)
    return float(AS.cpmass() / AS.cvmass())


def ideal_gas_heat_capacity_ratio(gas: Gas, T: float) -> float:
    """Ideal-gas heat-capacity ratio k0 = cp0/cv0 = cp0/(cp0 − R/M) at T [K], from the ideal-gas
    part of the reference equation of state (CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    T : Temperature, [K]

    Returns
    -------
    float
        cp0/cv0 of the ideal gas [-].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.

    Examples
    --------
    >>> round(ideal_gas_heat_capacity_ratio(parse_gas("co2"), 293.15), 3)   # CO2 at 20 °C: about 1.29
    1.291
    """
    AS = state_at(gas, "PT_INPUTS", 1e3, T, imposed="gas")  # cp0 depends on T alone
    cp0 = float(AS.cp0mass())
    return cp0 / (cp0 - R / gas.molar_mass)
