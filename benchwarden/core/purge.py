"""Purging a volume (regulator, line, discharge channel) of air after a cylinder change.

Pressure-cycle purge: fill with the purge gas to p_high, vent to p_low, repeat. With the
volume well mixed at each fill, the impurity fraction after n cycles is

    x_n = x_f + (x_0 − x_f)·(p_low/p_high)^n

where x_f is the purge gas's own impurity (the floor no number of cycles goes below). The gas
used per cycle is the mass that raises the volume from p_low to p_high (real gas).

Flow-through flush at a volume flow Q (at the volume's conditions):
* well mixed (the usual estimate): x(t) = x_f + (x_0 − x_f)·e^(−Q·t/V);
* plug flow (the ideal lower bound): one volume exchange, t = V/Q.

These are the standard dilution models of purging (e.g. CGA P-59 / ISA practice on purging,
from memory); the tests check them against the closed forms and a numerical integration.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from benchwarden.core import gas as g
from benchwarden.errors import PA_ABS, InputError, RangeError
from benchwarden.units import ATM_PA, T0_K, check_range

__all__ = ["CyclePurge", "cycle_purge", "Flush", "flush", "O2_IN_AIR"]

#: Oxygen in dry air, mole fraction (the starting impurity unless another is given).
O2_IN_AIR = 0.2095


@dataclass(frozen=True)
class CyclePurge:
    cycles: int
    fractions: tuple[float, ...]  # impurity after each cycle (mole fraction)
    floor: float
    gas_per_cycle_kg: float
    gas_kg: float
    gas_standard_litres: float  # at 0 °C, 101.325 kPa
    method: str


def cycle_purge(gas: g.Gas, volume_m3: float, p_high: float, p_low: float, T: float, x0: float, target: float,
                purity_impurity: float = 0.0, max_cycles: int = 200) -> CyclePurge:
    """Cycles of fill to ``p_high`` and vent to ``p_low`` [Pa abs] needed to bring the impurity
    of ``volume_m3`` from ``x0`` to ``target`` (mole fractions), see module docstring.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction) (the purge gas)
    volume_m3 : Purged volume, [m³]
    p_high : Fill pressure, absolute, [Pa]
    p_low : Vent pressure, absolute, [Pa]
    T : Temperature, [K]
    x0 : Impurity before the purge, mole fraction [-]
    target : Impurity to reach, mole fraction [-]
    purity_impurity : The purge gas's own impurity, mole fraction [-]
    max_cycles : Most cycles allowed (more is refused)

    Returns
    -------
    CyclePurge
        Cycles needed, the impurity after each [-], the floor [-], gas per cycle and in all [kg, standard L].

    References
    ----------
    Dilution models of purging (CGA P-59 / ISA practice, from memory); CoolProp HEOS (Bell et al.,
    Ind. Eng. Chem. Res. 53 (2014) 2498–2508).

    Examples
    --------
    >>> r = cycle_purge(g.parse_gas("nitrogen"), 1e-3, 5e5, 1e5, 293.15, 0.2095, 10e-6)
    >>> r.cycles                     # (1/5)^n·0.2095 ≤ 1e-5: n = 7
    7
    """
    check_range(volume_m3, "purged volume", 0.0, 10.0, "m³")
    for x, what in ((x0, "initial impurity"), (target, "target impurity"), (purity_impurity, "purge gas impurity")):
        if not (math.isfinite(x) and 0 <= x <= 1):
            raise InputError(f"{what} {x!r} must be a fraction between 0 and 1")
    if not p_high > p_low > 0:
        raise RangeError(what="low purge pressure", value=p_low, lo=0.0, lo_open=True, hi=p_high, hi_open=True,
                         unit=PA_ABS, hi_name="the high pressure")
    if target >= x0:
        raise InputError("the target impurity is not below the starting one: no purge is needed")
    if target <= purity_impurity:
        raise InputError(f"target {target:.3g} is at or below the purge gas's own impurity {purity_impurity:.3g}: "
                         "no number of cycles reaches it; use a purer gas")
    r = p_low / p_high
    n = math.ceil(math.log((target - purity_impurity) / (x0 - purity_impurity)) / math.log(r) - 1e-12)
    if n > max_cycles:
        raise InputError(f"{n} cycles needed: more than {max_cycles}; widen the pressure ratio or flush instead")
    fractions = tuple(purity_impurity + (x0 - purity_impurity) * r**k for k in range(1, n + 1))
    per = (g.density(gas, T, p_high) - g.density(gas, T, p_low)) * volume_m3
    rho_std = g.density(gas, T0_K, ATM_PA)
    return CyclePurge(n, fractions, purity_impurity, per, per * n, per * n / rho_std * 1000.0,
                      "pressure-cycle dilution, well mixed: x_n = x_f + (x_0 − x_f)·(p_low/p_high)^n")


@dataclass(frozen=True)
class Flush:
    time_s: float
    plug_flow_time_s: float
    exchanges: float
    gas_kg: float
    gas_standard_litres: float
    method: str


def flush(gas: g.Gas, volume_m3: float, flow_kg_s: float, p: float, T: float, x0: float, target: float,
          purity_impurity: float = 0.0) -> Flush:
    """Time for a flow-through flush at mass flow ``flow_kg_s`` to bring the impurity of a
    well-mixed volume at (p, T) from ``x0`` to ``target``: t = (V/Q)·ln((x0 − x_f)/(target − x_f))
    with Q = ṁ/ρ(p, T); the plug-flow bound is one exchange, V/Q.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction) (the purge gas)
    volume_m3 : Flushed volume, [m³]
    flow_kg_s : Purge gas mass flow, [kg/s]
    p : Absolute pressure of the volume, [Pa]
    T : Temperature, [K]
    x0 : Impurity before the flush, mole fraction [-]
    target : Impurity to reach, mole fraction [-]
    purity_impurity : The purge gas's own impurity, mole fraction [-]

    Returns
    -------
    Flush
        Time well mixed and plug-flow bound [s], volume exchanges [-], gas used [kg, standard L].

    References
    ----------
    Dilution models of purging (CGA P-59 / ISA practice, from memory); CoolProp HEOS (Bell et al.,
    Ind. Eng. Chem. Res. 53 (2014) 2498–2508).

    Examples
    --------
    >>> f = flush(g.parse_gas("nitrogen"), 1e-3, 1.25e-3 / 60, 101325.0, 273.15, 0.2095, 10e-6)
    >>> round(f.exchanges, 2), round(f.time_s)      # ln(20950) exchanges of 1 L at 1 L/min
    (9.95, 597)
    """
    check_range(volume_m3, "purged volume", 0.0, 10.0, "m³")
    if not (math.isfinite(flow_kg_s) and flow_kg_s > 0):
        raise InputError("the flush flow must be above zero")
    if target >= x0:
        raise InputError("the target impurity is not below the starting one: no flush is needed")
    if target <= purity_impurity:
        raise InputError(f"target {target:.3g} is at or below the purge gas's own impurity {purity_impurity:.3g}")
    Q = flow_kg_s / g.density(gas, T, p)
    tau = volume_m3 / Q
    exchanges = math.log((x0 - purity_impurity) / (target - purity_impurity))
    t = tau * exchanges
    rho_std = g.density(gas, T0_K, ATM_PA)
    return Flush(t, tau, exchanges, flow_kg_s * t, flow_kg_s * t / rho_std * 1000.0,
                 "flow-through dilution, well mixed: x = x_f + (x_0 − x_f)·e^(−Q·t/V); plug flow: t = V/Q")
