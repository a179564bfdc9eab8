"""Leak rates in their units: standard flow (sccm at 0 °C, 101.325 kPa), mass flow and pV
throughput, with the real density at the reference; and the volume a tube holds. Re-exported by
:mod:`benchwarden.core.hold`.
"""

from __future__ import annotations

import math

from benchwarden.core import gas as g
from benchwarden.units import Flow, check_positive
from benchwarden.units.constants import ATM_PA, SCCM_PER_M3_S, T0_K

__all__ = ["T_STD", "P_STD", "standard_density", "kg_s_from_sccm", "sccm_from_kg_s", "target_sccm",
           "pa_m3_s_from_sccm", "line_volume"]

#: Standard-flow reference for leak rates: 0 °C, 101.325 kPa.
T_STD, P_STD = T0_K, ATM_PA


def standard_density(gas: g.Gas) -> float:
    """Real density at 0 °C, 101.325 kPa [kg/m³] (CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    float
        Density at 0 °C, 101.325 kPa [kg/m³].

    References
    ----------
    DIN 1343 standard conditions (0 °C, 101.325 kPa) for sccm; CoolProp HEOS (Bell et al., Ind. Eng.
    Chem. Res. 53 (2014) 2498–2508).
    """
    return g.density(gas, T_STD, P_STD)


def kg_s_from_sccm(gas: g.Gas, sccm: float) -> float:
    """Standard flow [sccm at 0 °C, 101.325 kPa] as a mass flow [kg/s] (real density at the
    reference); the inverse of :func:`sccm_from_kg_s`.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    sccm : Standard flow, [sccm at 0 °C, 101.325 kPa]

    Returns
    -------
    float
        Mass flow [kg/s].

    References
    ----------
    DIN 1343 standard conditions (0 °C, 101.325 kPa) for sccm; CoolProp HEOS (Bell et al., Ind. Eng.
    Chem. Res. 53 (2014) 2498–2508).
    """
    return sccm / SCCM_PER_M3_S * standard_density(gas) if sccm else 0.0


def sccm_from_kg_s(gas: g.Gas, mdot: float) -> float:
    """Mass flow [kg/s] as sccm at 0 °C, 101.325 kPa (real density at the reference).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    mdot : Mass flow, [kg/s]

    Returns
    -------
    float
        Standard flow [sccm at 0 °C, 101.325 kPa].

    References
    ----------
    DIN 1343 standard conditions (0 °C, 101.325 kPa) for sccm; CoolProp HEOS (Bell et al., Ind. Eng.
    Chem. Res. 53 (2014) 2498–2508).
    """
    return mdot / standard_density(gas) * SCCM_PER_M3_S


def target_sccm(gas: g.Gas, flow: Flow) -> float:
    """A target leak rate (any standard or mass flow) as sccm at 0 °C, 101.325 kPa.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    flow : a standard or mass flow (as typed and parsed)

    Returns
    -------
    float
        The target as standard flow [sccm at 0 °C, 101.325 kPa].

    References
    ----------
    DIN 1343 standard conditions (0 °C, 101.325 kPa) for sccm; CoolProp HEOS (Bell et al., Ind. Eng.
    Chem. Res. 53 (2014) 2498–2508).
    """
    from benchwarden.core.supply import mass_flow

    return sccm_from_kg_s(gas, mass_flow(gas, flow))


def pa_m3_s_from_sccm(sccm: float) -> float:
    """pV throughput [Pa·m³/s] of a standard flow at 101.325 kPa: 1 sccm = 101325/6e7 Pa·m³/s.

    Parameters
    ----------
    sccm : Standard flow, [sccm at 0 °C, 101.325 kPa]

    Returns
    -------
    float
        pV throughput [Pa·m³/s].

    References
    ----------
    DIN 1343 standard conditions (0 °C, 101.325 kPa); 1 sccm = 1e-6 m³/min at them.

    Examples
    --------
    >>> round(pa_m3_s_from_sccm(1.0), 8)
    0.00168875
    """
    return sccm * P_STD / SCCM_PER_M3_S


def line_volume(length_m: float, bore_m: float) -> float:
    """Trapped volume of a tube [m³]: π/4·d²·L.

    Parameters
    ----------
    length_m : Tube length, [m]
    bore_m : Inner diameter, [m]

    Returns
    -------
    float
        Volume [m³].

    References
    ----------
    Volume of a cylinder, V = π/4·d²·L (geometry).

    Examples
    --------
    >>> round(line_volume(2.0, 4e-3) * 1e6, 2)   # 2 m of 4 mm bore: 25.13 cm³
    25.13
    """
    check_positive(length_m, "line length", "m")
    check_positive(bore_m, "line bore", "m")
    return math.pi / 4.0 * bore_m**2 * length_m
