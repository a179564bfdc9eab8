"""Draw flows: per-shot refresh, bleed orifices and needle valves.

A draw's flow is a standard flow (see :mod:`gasbench.units`), a volume per shot times the
repetition rate, an orifice at the regulated pressure, or a valve of known flow coefficient
(IEC 60534 through the `fluids` library).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from gasbench import gas as g
from gasbench.errors import InputError
from gasbench.units import check_positive


def heat_capacity_ratio(gas: g.Gas, T: float, p: float) -> float:
    """Ratio of specific heats cp/cv at (T, p) from CoolProp HEOS."""
    g._check_range(gas, T, p)
    AS = g._update(gas, "PT_INPUTS", p, T)
    return float(AS.cpmass() / AS.cvmass())


def critical_pressure_ratio(k: float) -> float:
    """Critical (choking) pressure ratio p*/p0 = (2/(k+1))^(k/(k−1)) of an isentropic nozzle.

    >>> round(critical_pressure_ratio(1.4), 4)
    0.5283
    """
    return (2.0 / (k + 1.0)) ** (k / (k - 1.0))


@dataclass(frozen=True)
class OrificeFlow:
    mass_flow_kg_s: float
    standard_flow_slpm: float
    choked: bool
    critical_ratio: float
    k: float
    method: str


def orifice_flow(
    gas: g.Gas, diameter_m: float, p_up: float, p_down: float, T: float, cd: float = 0.62,
) -> OrificeFlow:
    """Mass flow through a sharp-edged orifice or small nozzle (isentropic nozzle with a
    discharge coefficient; ideal-gas relations with the real inlet density and real k).

    Subcritical (p_down/p_up > r*):
        ṁ = Cd·A·√(2·ρ1·p1·k/(k−1)·[r^(2/k) − r^((k+1)/k)])
    Choked (r ≤ r* = (2/(k+1))^(k/(k−1))):
        ṁ = Cd·A·√(k·ρ1·p1·(2/(k+1))^((k+1)/(k−1)))

    Parameters
    ----------
    diameter_m : Orifice bore, [m]
    p_up, p_down : Absolute pressures upstream and downstream, [Pa]
    T : Upstream temperature, [K]
    cd : Discharge coefficient, [-] (0.61–0.62 for a sharp-edged orifice, common practice)

    Notes
    -----
    Textbook compressible nozzle flow (e.g. Shapiro, "The Dynamics and Thermodynamics of
    Compressible Fluid Flow", 1953, ch. 4). The standard flow is at 0 °C, 101.325 kPa.

    Examples
    --------
    >>> r = orifice_flow(g.parse_gas("nitrogen"), 0.2e-3, 3.0e5, 1.0e5, 293.15)
    >>> r.choked, round(r.standard_flow_slpm, 3)
    (True, 0.652)
    """
    check_positive(diameter_m, "orifice diameter", "m")
    if not 0 < cd <= 1:
        raise InputError(f"discharge coefficient {cd:g} must be > 0 and ≤ 1")
    if p_down >= p_up:
        raise InputError(
            f"downstream pressure {p_down / 1e5:.4g} bar(a) is not below upstream {p_up / 1e5:.4g} bar(a): no flow"
        )
    rho1 = g.density(gas, T, p_up)
    k = heat_capacity_ratio(gas, T, p_up)
    A = math.pi * diameter_m**2 / 4.0
    r_crit = critical_pressure_ratio(k)
    r = p_down / p_up
    choked = r <= r_crit
    if choked:
        mdot = cd * A * math.sqrt(k * rho1 * p_up * (2.0 / (k + 1.0)) ** ((k + 1.0) / (k - 1.0)))
    else:
        mdot = cd * A * math.sqrt(2.0 * rho1 * p_up * k / (k - 1.0) * (r ** (2.0 / k) - r ** ((k + 1.0) / k)))
    rho_std = g.density(gas, 273.15, 101325.0)
    return OrificeFlow(mdot, mdot / rho_std * 60e3, choked, r_crit, k,
                       "isentropic nozzle with discharge coefficient (choked/subcritical)")


@dataclass(frozen=True)
class ValveFlow:
    mass_flow_kg_s: float
    standard_flow_slpm: float
    choked: bool
    method: str


def valve_flow(gas: g.Gas, kv: float, p_up: float, p_down: float, T: float, xT: float = 0.7) -> ValveFlow:
    """Flow through a valve of flow coefficient Kv [m³/h] by IEC 60534-2-1 (gas, turbulent),
    solved for the flow with `fluids.control_valve.size_control_valve_g` (Caleb Bell's
    implementation of the standard), bracketing the standard flow until Kv matches.

    Cv (US) = 1.156·Kv. ``xT`` is the valve's pressure-differential ratio factor at choked flow.

    >>> v = valve_flow(g.parse_gas("nitrogen"), 0.01, 5e5, 1e5, 293.15)
    >>> v.choked, round(v.standard_flow_slpm, 1)
    (True, 12.7)
    """
    from fluids.control_valve import size_control_valve_g

    check_positive(kv, "valve Kv", "m³/h")
    if p_down >= p_up:
        raise InputError(
            f"downstream pressure {p_down / 1e5:.4g} bar(a) is not below upstream {p_up / 1e5:.4g} bar(a): no flow"
        )
    Z = g.z_factor(gas, T, p_up)
    k = heat_capacity_ratio(gas, T, p_up)
    MW = gas.molar_mass * 1000.0

    def kv_of(Q: float) -> dict[str, Any]:
        out = size_control_valve_g(T=T, MW=MW, mu=1.8e-5, gamma=k, Z=Z, P1=p_up, P2=p_down, Q=Q,
                                   xT=xT, allow_laminar=False, full_output=True)
        assert isinstance(out, dict)
        return out

    lo, hi = 1e-12, 1.0
    while kv_of(hi)["Kv"] < kv:
        hi *= 10.0
        if hi > 1e6:  # pragma: no cover - defensive
            raise InputError(f"valve Kv {kv:g} gives no finite flow")
    for _ in range(200):
        mid = math.sqrt(lo * hi)
        if kv_of(mid)["Kv"] < kv:
            lo = mid
        else:
            hi = mid
        if hi / lo < 1 + 1e-10:
            break
    Q = math.sqrt(lo * hi)
    rho_std = g.density(gas, 273.15, 101325.0)
    return ValveFlow(Q * rho_std, Q * 60e3, bool(kv_of(Q)["choked"]),
                     "IEC 60534-2-1 gas sizing (fluids), solved for flow")


def per_shot_mass_flow(gas: g.Gas, volume_m3: float, p_abs: float, T: float, rate_hz: float) -> float:
    """Mass flow [kg/s] of a draw that replaces ``volume_m3`` of gas at (T, p) on every shot:
    ṁ = ρ(T, p)·V_shot·f (real density, CoolProp HEOS)."""
    check_positive(volume_m3, "volume per shot", "m³")
    if not math.isfinite(rate_hz) or rate_hz < 0:
        raise InputError(f"repetition rate {rate_hz!r} Hz must be zero or more")
    return g.density(gas, T, p_abs) * volume_m3 * rate_hz
