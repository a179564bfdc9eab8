"""Draw flows: per-shot refresh, bleed orifices and needle valves.

A draw's flow is a standard flow (see :mod:`benchwarden.units`), a volume per shot times the
repetition rate, an orifice at the regulated pressure, or a valve of known flow coefficient
(IEC 60534 through the `fluids` library).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from benchwarden.core import gas as g
from benchwarden.core.flash import Flash, isentrope, isentrope_state
from benchwarden.errors import PA_ABS, InputError, RangeError
from benchwarden.units import ATM_PA, T0_K, check_positive, check_range

heat_capacity_ratio = g.heat_capacity_ratio


def critical_pressure_ratio(k: float) -> float:
    """Critical (choking) pressure ratio p*/p0 = (2/(k+1))^(k/(k−1)) of an isentropic nozzle.

    Parameters
    ----------
    k : Heat-capacity ratio cp/cv, [-]

    Returns
    -------
    float
        p*/p0 [-].

    References
    ----------
    Shapiro, "The Dynamics and Thermodynamics of Compressible Fluid Flow" (1953), ch. 4.

    Examples
    --------
    >>> round(critical_pressure_ratio(1.4), 4)
    0.5283
    """
    return (2.0 / (k + 1.0)) ** (k / (k - 1.0))


def ideal_nozzle_mass_flux(rho1: float, p1: float, k: float, r: float) -> tuple[float, bool]:
    """Mass flux [kg/(m²·s)] of an ideal-gas isentropic nozzle and whether it is choked.

    Subcritical (r = p2/p1 > r*): G = √(2·ρ1·p1·k/(k−1)·[r^(2/k) − r^((k+1)/k)]);
    choked (r ≤ r* = (2/(k+1))^(k/(k−1))): G = √(k·ρ1·p1·(2/(k+1))^((k+1)/(k−1)))
    (Shapiro 1953, ch. 4). Kept as the labelled comparison for the real-gas nozzle.

    Parameters
    ----------
    rho1 : Inlet density, [kg/m³]
    p1 : Inlet absolute pressure, [Pa]
    k : Heat-capacity ratio, [-]
    r : Pressure ratio p2/p1, [-]

    Returns
    -------
    tuple
        (G [kg/(m²·s)], choked).

    References
    ----------
    Shapiro, "The Dynamics and Thermodynamics of Compressible Fluid Flow" (1953), ch. 4.

    Examples
    --------
    >>> round(ideal_nozzle_mass_flux(1.2, 1e5, 1.4, 0.3)[0], 2)   # choked: 0.6847·√(ρ·p)
    237.19
    """
    r_crit = critical_pressure_ratio(k)
    if r <= r_crit:
        return math.sqrt(k * rho1 * p1 * (2.0 / (k + 1.0)) ** ((k + 1.0) / (k - 1.0))), True
    return math.sqrt(2.0 * rho1 * p1 * k / (k - 1.0) * (r ** (2.0 / k) - r ** ((k + 1.0) / k))), False


def _golden_max(f: Any, lo: float, hi: float, rel: float = 1e-6) -> tuple[float, float]:
    """Maximum of a unimodal f on [lo, hi] by golden-section search: (x, f(x))."""
    phi = (math.sqrt(5.0) - 1.0) / 2.0
    a, b = lo, hi
    c, d = b - phi * (b - a), a + phi * (b - a)
    fc, fd = f(c), f(d)
    while b - a > rel * hi:
        if fc > fd:
            b, d, fd = d, c, fc
            c = b - phi * (b - a)
            fc = f(c)
        else:
            a, c, fc = c, d, fd
            d = a + phi * (b - a)
            fd = f(d)
    return (c, fc) if fc > fd else (d, fd)


def nozzle_throat(gas: g.Gas, p1: float, T1: float, p2: float) -> tuple[float, bool, float, Flash]:
    """(G [kg/(m²·s)], choked, critical pressure ratio, throat state) of a real-fluid isentropic
    nozzle from rest at (p1, T1) to p2 (:func:`real_nozzle_mass_flux`); the throat state is at p*
    when choked, else at p2, with its phase (a two-phase throat in homogeneous equilibrium).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    p1 : Inlet absolute pressure, [Pa]
    T1 : Inlet temperature, [K]
    p2 : Downstream absolute pressure, [Pa]

    Returns
    -------
    tuple
        (G [kg/(m²·s)], choked, p*/p1 [-], throat state).

    References
    ----------
    ISO 9300:2022 (real-gas critical flow function);
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    h1 = g.enthalpy(gas, T1, p1)
    s1 = g.entropy(gas, T1, p1)

    def flux(p: float, verify: bool = False) -> float:
        h, rho, _ = isentrope(gas, s1, p, T1 * (p / p1) ** 0.25, verify)
        return rho * math.sqrt(max(0.0, 2.0 * (h1 - h)))

    # p* lies well inside (0.15·p1, 0.95·p1) for every gas and state of a bench; a mixture is
    # followed on its gas branch and its phase checked once, at the state that sets the flow
    p_star, G_star = _golden_max(flux, 0.15 * p1, 0.95 * p1, rel=1e-4)
    choked = p2 <= p_star
    p_t = p_star if choked else p2
    throat = isentrope_state(gas, s1, p_t, T1 * (p_t / p1) ** 0.25, True)
    G = throat.density * math.sqrt(max(0.0, 2.0 * (h1 - throat.h))) if (gas.is_mixture or not choked) else G_star
    return G, choked, p_star / p1, throat


def real_nozzle_mass_flux(gas: g.Gas, p1: float, T1: float, p2: float) -> tuple[float, bool, float]:
    """Mass flux [kg/(m²·s)] of a real-gas isentropic nozzle from rest at (p1, T1) to p2:
    (G, choked, critical pressure ratio).

    Method: along the isentrope s = s(T1, p1), G(p) = ρ(p, s)·√(2·(h1 − h(p, s))) with ρ and h
    from the equation of state (CoolProp HEOS; a two-phase throat is taken in homogeneous
    equilibrium). The flow chokes at the pressure p* where G is largest (there the velocity
    equals the real speed of sound); below p* the flux stays G(p*). This is the real-gas form
    of the nozzle equation used for critical-flow nozzles (ISO 9300 computes its real-gas
    critical flow function C* the same way).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    p1 : Inlet absolute pressure, [Pa]
    T1 : Inlet temperature, [K]
    p2 : Downstream absolute pressure, [Pa]

    Returns
    -------
    tuple
        (G [kg/(m²·s)], choked, p*/p1 [-]).

    References
    ----------
    ISO 9300:2022 (real-gas critical flow function); Shapiro (1953), ch. 4;
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    G, choked, r, _ = nozzle_throat(gas, p1, T1, p2)
    return G, choked, r


def liquid_orifice_mass_flux(rho1: float, p1: float, p2: float) -> float:
    """Mass flux [kg/(m²·s)] of an incompressible liquid through an orifice, G = √(2·ρ1·(p1 − p2)).

    The upper bound for a short orifice fed with liquid (or a liquid-rich two-phase mixture):
    the liquid has no time to flash inside it and passes as a liquid jet (Fauske, "Flashing
    flows or: some practical guidelines for emergency releases", Plant/Operations Progress 4
    (1985) 132–134: non-equilibrium below about 0.1 m of length; from memory). The homogeneous
    equilibrium figure is the lower bound.

    Parameters
    ----------
    rho1 : Liquid (or inlet) density, [kg/m³]
    p1, p2 : Absolute pressures upstream and downstream, [Pa]

    Returns
    -------
    float
        Mass flux G [kg/(m²·s)].

    References
    ----------
    ISO 5167-2:2003 (orifice equation without the expansibility factor); Fauske (1985).

    Examples
    --------
    >>> round(liquid_orifice_mass_flux(1000.0, 2e5, 1e5))   # water, 1 bar: √(2·1000·1e5)
    14142
    """
    return math.sqrt(2.0 * rho1 * max(0.0, p1 - p2))


@dataclass(frozen=True)
class OrificeFlow:
    #: the flow that feeds a release or a room figure: the homogeneous-equilibrium nozzle for a
    #: gas inlet, the larger of it and the liquid figure for a liquid or two-phase inlet
    mass_flow_kg_s: float
    standard_flow_slpm: float
    choked: bool
    critical_ratio: float
    #: the ideal-gas heat-capacity ratio cp0/cv0 of the comparison; None when the inlet is not a gas
    k: float | None
    #: the ideal-gas nozzle (Shapiro 1953) for comparison; None when the inlet is not a gas
    ideal_mass_flow_kg_s: float | None
    method: str
    #: ``gas``, ``supercritical``, ``liquid`` or ``two-phase`` upstream and at the throat
    inlet_phase: str = "gas"
    throat_phase: str = "gas"
    #: mass fraction of vapour at a two-phase throat
    throat_vapour_fraction: float | None = None
    #: homogeneous-equilibrium (isentropic) figure and, for a liquid or two-phase inlet, the
    #: incompressible-liquid figure [kg/s]
    mass_flow_hem_kg_s: float = math.nan
    mass_flow_liquid_kg_s: float | None = None


def _cylinder_phase(gas: g.Gas, kind: str, p: float) -> str:
    return "gas" if kind == "supercritical" and p < g.critical_pressure(gas) else kind


def _below_upstream(p_down: float, p_up: float) -> None:
    """Refuse a downstream pressure [Pa] not below the upstream one [Pa] (no flow), with its data."""
    if p_down >= p_up:
        raise RangeError(what="downstream pressure", value=p_down, hi=p_up, hi_open=True, unit=PA_ABS,
                         hi_name="the upstream pressure", why="no flow otherwise")


def orifice_flow(
    gas: g.Gas, diameter_m: float, p_up: float, p_down: float, T: float, cd: float = 0.62,
) -> OrificeFlow:
    """Mass flow through a sharp-edged orifice or small nozzle: a real-fluid isentropic nozzle
    (:func:`real_nozzle_mass_flux`) times a discharge coefficient, ṁ = Cd·A·G.

    Parameters
    ----------
    gas : the gas
    diameter_m : Orifice bore, [m]
    p_up, p_down : Absolute pressures upstream and downstream, [Pa]
    T : Upstream temperature, [K]
    cd : Discharge coefficient, [-] (0.61–0.62 for a sharp-edged orifice, common practice)

    Returns
    -------
    OrificeFlow
        Mass flow [kg/s], standard flow [slpm], choking and its pressure ratio [-], inlet and
        throat phases, the ideal-gas comparison [kg/s].

    Notes
    -----
    The inlet and throat phases are reported (``inlet_phase``, ``throat_phase``): CO2 vapour
    expanding from near its vapour pressure condenses at the throat. For a liquid or two-phase
    inlet both the homogeneous-equilibrium figure (``mass_flow_hem_kg_s``, a lower bound) and the
    incompressible-liquid figure (``mass_flow_liquid_kg_s``, :func:`liquid_orifice_mass_flux`, an
    upper bound for a short orifice) are given, and ``mass_flow_kg_s`` — the figure that feeds
    a release or the room — is the larger: the conservative one.

    The ideal-gas nozzle with the ideal-gas density p·M/(R·T) and heat-capacity ratio
    k = cp0/cv0 (Shapiro 1953, ch. 4) is returned as ``ideal_mass_flow_kg_s`` for comparison
    where the inlet is a gas (omitted otherwise): it agrees within 0.5 % at a few bar and is off
    by several percent at cylinder pressure. The standard flow is at 0 °C, 101.325 kPa.

    References
    ----------
    Shapiro, "The Dynamics and Thermodynamics of Compressible Fluid Flow" (1953), ch. 4; ISO
    9300:2022 (real-gas critical flow function); Fauske (1985) for short orifices with liquid.

    Examples
    --------
    >>> r = orifice_flow(g.parse_gas("nitrogen"), 0.2e-3, 3.0e5, 1.0e5, 293.15)
    >>> r.choked, round(r.standard_flow_slpm, 3), r.inlet_phase, r.throat_phase
    (True, 0.652, 'gas', 'gas')
    """
    check_range(diameter_m, "orifice diameter", 0.0, 0.05, "m", "a bleed orifice or needle-valve bore")
    if not 0 < cd <= 1:
        raise InputError(f"discharge coefficient {cd:g} must be > 0 and ≤ 1")
    _below_upstream(p_down, p_up)
    inlet = g.pt_state(gas, T, p_up)
    inlet_phase = _cylinder_phase(gas, inlet.phase.kind, p_up)
    A = math.pi * diameter_m**2 / 4.0
    G, choked, r_crit, throat = nozzle_throat(gas, p_up, T, p_down)
    hem = cd * A * G
    throat_phase = _cylinder_phase(gas, throat.phase.kind, r_crit * p_up if choked else p_down)
    q = throat.phase.vapour_fraction if throat_phase == "two-phase" else None
    if inlet_phase in ("gas", "supercritical"):
        k = g.ideal_gas_heat_capacity_ratio(gas, T)
        rho_ideal = p_up * gas.molar_mass / (g.R * T)
        ideal: float | None = cd * A * ideal_nozzle_mass_flux(rho_ideal, p_up, k, p_down / p_up)[0]
        liquid, k_out = None, k
    else:
        ideal, k_out = None, None
        liquid = cd * A * liquid_orifice_mass_flux(inlet.density, p_up, p_down)
    mdot = max(hem, liquid or 0.0)
    rho_std = g.density(gas, T0_K, ATM_PA)
    method = "real-fluid isentropic nozzle (CoolProp HEOS, homogeneous equilibrium) with discharge coefficient"
    if liquid is not None:
        method += "; liquid inlet: the larger of it and the incompressible-liquid orifice (Fauske 1985)"
    return OrificeFlow(mdot, mdot / rho_std * 60e3, choked, r_crit, k_out, ideal, method, inlet_phase, throat_phase,
                       q, hem, liquid)


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

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    kv : Valve flow coefficient Kv, [m³/h]
    p_up, p_down : Absolute pressures, [Pa]
    T : Upstream temperature, [K]
    xT : Pressure-differential ratio factor at choked flow, [-]

    Returns
    -------
    ValveFlow
        Mass flow [kg/s], standard flow [slpm] and whether the flow is choked.

    References
    ----------
    IEC 60534-2-1:2011 (gas sizing), as implemented in `fluids.control_valve` (C. Bell).

    Examples
    --------
    >>> v = valve_flow(g.parse_gas("nitrogen"), 0.01, 5e5, 1e5, 293.15)
    >>> v.choked, round(v.standard_flow_slpm, 1)
    (True, 12.7)
    """
    from fluids.control_valve import size_control_valve_g

    check_positive(kv, "valve Kv", "m³/h")
    _below_upstream(p_down, p_up)
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
    rho_std = g.density(gas, T0_K, ATM_PA)
    return ValveFlow(Q * rho_std, Q * 60e3, bool(kv_of(Q)["choked"]),
                     "IEC 60534-2-1 gas sizing (fluids), solved for flow")


def per_shot_mass_flow(gas: g.Gas, volume_m3: float, p_abs: float, T: float, rate_hz: float) -> float:
    """Mass flow [kg/s] of a draw that replaces ``volume_m3`` of gas at (T, p) on every shot:
    ṁ = ρ(T, p)·V_shot·f (real density, CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    volume_m3 : Volume replaced on each shot, [m³]
    p_abs : Absolute pressure, [Pa]
    T : Temperature, [K]
    rate_hz : Repetition rate, [Hz]

    Returns
    -------
    float
        Mass flow [kg/s].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    check_positive(volume_m3, "volume per shot", "m³")
    if not math.isfinite(rate_hz) or rate_hz < 0:
        raise RangeError(what="repetition rate", value=rate_hz, lo=0.0, unit="Hz")
    return g.density(gas, T, p_abs) * volume_m3 * rate_hz
