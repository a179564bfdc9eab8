"""What a cylinder holds: contents by pressure (real gas, with the sensitivity to temperature)
and by weight (the state and pressure of the fill). Re-exported by :mod:`benchwarden.core.supply`.

All functions take SI floats (Pa absolute, K, m³, kg) and return small frozen records; notes are
codes (``Contents.flags``), worded in :mod:`benchwarden.render.supply`.
"""

from __future__ import annotations

from dataclasses import dataclass

from benchwarden.core import gas as g
from benchwarden.errors import InputError, RangeError
from benchwarden.units import REFERENCES, Reference, check_positive, check_range
from benchwarden.units.constants import T_FULL_K

__all__ = ["MAX_SUPPLY_M3", "Contents", "free_volume", "NEAR_VAPOUR_PRESSURE", "TEMPERATURE_UNCERTAINTY_K",
           "temperature_sensitivity", "contents", "WeightState", "state_by_weight", "contents_by_weight"]

#: Largest water volume taken as one supply: a cylinder bundle (5 m³).
MAX_SUPPLY_M3 = 5.0

@dataclass(frozen=True)
class Contents:
    """What a cylinder holds (SI). ``flags`` are codes the renderers word
    (:mod:`benchwarden.render.supply`); the core writes no sentences."""

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
    #: codes: ``liquid-full``, ``liquefied`` (refusals); ``two-phase``, ``liquid``, ``vapour-only``,
    #: ``near-vapour-pressure``, ``may-hold-liquid``, ``estimated-mixing``, ``overfilled``
    flags: tuple[str, ...] = ()
    #: ``gas``, ``supercritical``, ``liquid``, ``two-phase``, ``liquefied`` (vapour over liquid at
    #: a pressure reading: weigh it) or ``liquid-full`` (no vapour space: hydraulic-rupture hazard)
    phase: str = "gas"
    #: molar vapour fraction of a two-phase mixture
    vapour_fraction: float | None = None
    #: filling ratio [kg/L of water capacity] and whether it exceeds the gas's permitted one
    filling_ratio_kg_l: float | None = None
    overfilled: bool = False
    #: ∂m/∂T at the given pressure [kg/K] (contents by pressure)
    mass_sensitivity_kg_per_k: float | None = None
    #: the temperature's standard uncertainty [K] and the mass uncertainty it causes [kg]
    temperature_uncertainty_k: float | None = None
    mass_uncertainty_kg: float | None = None
    #: vapour pressure at the temperature [Pa abs] (gases sold liquefied, below critical)
    vapour_pressure_abs_pa: float | None = None
    #: by weight: the temperature [K] at which the fill becomes liquid-full (None: it never does)
    liquid_full_temperature_k: float | None = None
    #: estimated mixing pairs of a mixture ("a–b")
    estimated_pairs: tuple[str, ...] = ()
    #: the permitted filling ratio [kg/L] of the gas, where one is known
    max_filling_ratio_kg_l: float | None = None
    #: the critical temperature [K] of a gas sold liquefied
    critical_temperature_k: float | None = None

def free_volume(gas: g.Gas, mass_kg: float, reference: Reference) -> float:
    """Free-gas volume [m³] of ``mass_kg`` at a reference condition, using the gas's real
    density there (CoolProp HEOS).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    mass_kg : Mass, [kg]
    reference : the reference condition (temperature [K], pressure [Pa])

    Returns
    -------
    float
        Free-gas volume [m³] at the reference condition.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    DIN 1343 / ISO 13443 (reference conditions).
    """
    return mass_kg / g.density(gas, reference.temperature_k, reference.pressure_pa)

NEAR_VAPOUR_PRESSURE = g.NEAR_VAPOUR_PRESSURE

#: Default standard uncertainty of a cylinder's temperature [K] (a thermometer on the shell).
TEMPERATURE_UNCERTAINTY_K = 1.0

def _liquefied_below_critical(gas: g.Gas, T: float) -> bool:
    return gas.sold_liquefied and T < g.critical_temperature(gas)

def _vapour_mass(gas: g.Gas, V: float, p: float, T: float) -> tuple[float, bool]:
    """(mass [kg] of gas or vapour at (T, p) in V, whether liquid may be present): where p is at
    or above the vapour pressure at T, the cylinder holds at least the saturated vapour at p."""
    if _liquefied_below_critical(gas, T) and p >= g.saturation_pressure(gas, T):
        return g.saturated_vapour_density_at_p(gas, p) * V, True
    return g.density(gas, T, p) * V, False

def _density_slope(gas: g.Gas, p: float, T: float) -> float | None:
    """(∂ρ/∂T) at constant p [kg/(m³·K)] of a single-phase state, CoolProp's analytic derivative
    of the equation of state (the same flash as :func:`benchwarden.core.gas.density`); None for a
    two-phase state."""
    g.check_state(gas, T, p)
    AS = g.state_at(gas, "PT_INPUTS", p, T)
    if g.phase_of(gas, AS).kind == "two-phase":
        return None
    CP = g.coolprop()
    return float(AS.first_partial_deriv(CP.iDmass, CP.iT, CP.iP))

def temperature_sensitivity(gas: g.Gas, V: float, p: float, T: float, u_T: float) -> tuple[float, float, bool]:
    """How much the contents by pressure depend on the temperature.

    Parameters
    ----------
    gas : the gas
    V : Water volume, [m³]
    p : Absolute pressure, [Pa]
    T : Temperature, [K]
    u_T : Standard uncertainty of the temperature, [K]

    Returns
    -------
    (∂m/∂T at constant p [kg/K], mass uncertainty [kg], whether liquid may be present within T − u_T)

    Notes
    -----
    ∂m/∂T is CoolProp's analytic (∂ρ/∂T)_p × V of a single-phase state (a two-phase mixture or
    a saturated vapour: a central difference, ±0.05 K, of m = ρ(T, p)·V); the mass uncertainty is the larger
    change of m over T ± u_T (the model evaluated at the ends of the interval, as GUM JCGM
    100:2008 §5.1.2 allows for a non-linear model). Where T − u_T lies at or below the saturation
    temperature at p (a gas sold liquefied), the mass there is the saturated vapour's at p: a
    lower bound, since liquid may then be present.

    References
    ----------
    JCGM 100:2008 (GUM); the reference equations of state in CoolProp HEOS.
    """
    m, saturated = _vapour_mass(gas, V, p, T)
    tmin, tmax, _ = g.limits(gas)
    drho_dT = None if saturated else _density_slope(gas, p, T)
    if drho_dT is not None:
        slope = drho_dT * V
    else:
        dT = 0.05
        lo, hi = max(tmin, T - dT), min(tmax, T + dT)
        slope = (_vapour_mass(gas, V, p, hi)[0] - _vapour_mass(gas, V, p, lo)[0]) / (hi - lo)
    m_lo, liquid = _vapour_mass(gas, V, p, max(tmin, T - u_T))
    m_hi, _ = _vapour_mass(gas, V, p, min(tmax, T + u_T))
    return slope, max(abs(m_lo - m), abs(m_hi - m)), liquid

def contents(
    gas: g.Gas,
    volume_m3: float,
    p_abs: float,
    T: float,
    reference: Reference = REFERENCES["15C"],
    u_T: float = TEMPERATURE_UNCERTAINTY_K,
) -> Contents:
    """Contents of a cylinder of water volume V at absolute pressure p and temperature T.

    Real gas: m = ρ(T, p)·V with ρ from the reference equation of state (CoolProp HEOS).
    The ideal-gas comparison is the "P·V/T" figure, V_free = V·(p/p_ref)·(T_ref/T).

    Parameters
    ----------
    gas : the gas
    volume_m3 : Water (internal) volume of the cylinder, [m³]
    p_abs : Absolute pressure, [Pa]
    T : Gas temperature, [K]
    reference : Free-gas reference condition
    u_T : Standard uncertainty of the temperature, [K]

    Returns
    -------
    Contents
        Mass [kg] with its uncertainty, free-gas volume [m³] at the reference, density [kg/m³], Z
        [-], phase and codes (``flags``).

    Notes
    -----
    A gas sold liquefied (CO2, SF6) below its critical temperature at or above its vapour
    pressure has no pressure-based contents (``phase`` ``liquefied`` or ``liquid-full``; mass
    None; weigh it, :func:`contents_by_weight`); just below it, the vapour's mass, flagged
    ``near-vapour-pressure``. ∂m/∂T is a central difference (±0.05 K); the mass uncertainty the
    larger change of the mass over T ± u_T (GUM §5.1.2, the model evaluated at its ends); where
    T − u_T is below the saturation temperature at p, the saturated vapour's mass (a lower bound,
    ``may-hold-liquid``). Near the critical point: kilograms per kelvin (CO2, 72 bar(g), 31 °C).

    References
    ----------
    Span, R. and Wagner, W., "A new equation of state for carbon dioxide...", J. Phys. Chem.
    Ref. Data 25 (1996) 1509–1596 (and the other reference equations in CoolProp HEOS).
    JCGM 100:2008, Evaluation of measurement data — Guide to the expression of uncertainty in
    measurement (GUM).

    Examples
    --------
    A 50 L nitrogen cylinder at 200 bar(g) and 15 °C (CoolProp HEOS):

    >>> c = contents(g.parse_gas("nitrogen"), 0.050, 201.01325e5, 288.15)
    >>> round(c.mass_kg, 2), round(c.free_volume_m3, 2), round(c.z, 4)
    (11.21, 9.46, 1.0485)
    """
    check_range(volume_m3, "cylinder volume", 0.0, MAX_SUPPLY_M3, "m³", "a cylinder bundle at most")
    check_range(u_T, "temperature uncertainty", 0.0, 50.0, "K", "a thermometer's standard uncertainty")
    g.check_state(gas, T, p_abs)
    ideal_free = volume_m3 * (p_abs / reference.pressure_pa) * (reference.temperature_k / T)
    ideal_mass = p_abs * volume_m3 * gas.molar_mass / (g.R * T)
    p_sat = g.saturation_pressure(gas, T) if _liquefied_below_critical(gas, T) else None
    Tc = g.critical_temperature(gas) if gas.sold_liquefied else None
    if p_sat is not None and p_abs >= p_sat:
        return _liquid_in_cylinder(gas, volume_m3, T, p_abs, p_sat, reference, Tc)
    st = g.pt_state(gas, T, p_abs)
    ph, rho, z = st.phase, st.density, st.z
    if ph.kind == "supercritical" and p_abs < g.critical_pressure(gas):
        ph = g.Phase("gas", None)  # above the critical temperature but below its pressure: a gas
    mass = rho * volume_m3
    fv = free_volume(gas, mass, reference)
    slope, u_m, liquid = temperature_sensitivity(gas, volume_m3, p_abs, T, u_T)
    pairs = tuple(f"{a}–{b}" for a, b in g.estimated_pairs(gas))
    flags = _flags(ph.kind, p_abs, p_sat, liquid, bool(pairs))
    return Contents(
        gas.name, volume_m3, T, p_abs, False, rho, z, mass, mass / gas.molar_mass, reference, fv,
        ideal_mass, ideal_free, 100.0 * (fv - ideal_free) / ideal_free,
        "real gas, CoolProp HEOS reference equation of state" + (
            " (phase-equilibrium flash)" if gas.is_mixture else ""), tuple(flags),
        phase=ph.kind, vapour_fraction=ph.vapour_fraction, mass_sensitivity_kg_per_k=slope,
        temperature_uncertainty_k=u_T, mass_uncertainty_kg=u_m, vapour_pressure_abs_pa=p_sat,
        estimated_pairs=pairs, critical_temperature_k=Tc,
    )

def _liquid_in_cylinder(gas: g.Gas, V: float, T: float, p_abs: float, p_sat: float, reference: Reference,
                        Tc: float | None) -> Contents:
    """A pressure at or above the vapour pressure: liquid in the cylinder (or liquid-full, well
    above it); the pressure says nothing about the contents."""
    full = p_abs > g.LIQUID_FULL_FACTOR * p_sat
    kind = "liquid-full" if full else "liquefied"
    return Contents(
        gas.name, V, T, p_abs, True, None, None, None, None, reference, None,
        None, None, None, "liquid-full: no vapour space" if full else "liquefied: weigh the cylinder",
        (kind,), phase=kind, vapour_pressure_abs_pa=p_sat, critical_temperature_k=Tc,
    )


def _flags(kind: str, p_abs: float, p_sat: float | None, may_hold_liquid: bool, estimated: bool) -> list[str]:
    """The informational codes of a contents result (the interfaces word them)."""
    flags: list[str] = [kind] if kind in ("two-phase", "liquid") else []
    if p_sat is not None:
        flags.append("near-vapour-pressure" if p_abs >= NEAR_VAPOUR_PRESSURE * p_sat else "vapour-only")
    if may_hold_liquid:
        flags.append("may-hold-liquid")
    if estimated:
        flags.append("estimated-mixing")
    return flags


@dataclass(frozen=True)
class WeightState:
    """The state of a known mass in a known volume at T: phase (``gas``, ``two-phase``,
    ``liquid-full``, ``supercritical``), pressure [Pa abs], mean density [kg/m³], and the
    temperature [K] at which the fill becomes liquid-full (None where it never does)."""

    phase: str
    pressure_abs_pa: float
    density_kg_m3: float
    liquid_full_temperature_k: float | None
    vapour_pressure_abs_pa: float | None

def state_by_weight(gas: g.Gas, mass_kg: float, volume_m3: float, T: float) -> WeightState:
    """Phase and pressure of ``mass_kg`` in a closed cylinder of water volume ``volume_m3`` at T.

    Parameters
    ----------
    gas : the gas
    mass_kg : Contents, [kg]
    volume_m3 : Water (internal) volume, [m³]
    T : Temperature, [K]

    Returns
    -------
    WeightState
        Phase, pressure [Pa], density [kg/m³], liquid-full temperature [K] and vapour
        pressure [Pa] of the fill.

    Notes
    -----
    The mean density ρ = m/V and T fix the state (a (ρ, T) flash of the reference equation of
    state, CoolProp HEOS). Below the critical temperature: ``gas`` below the saturated vapour
    density, ``two-phase`` (at the vapour pressure) up to the saturated liquid density, beyond
    it ``liquid-full``: no vapour space, the pressure is the liquid's (hydraulic) pressure and
    rises steeply with temperature. At or above the critical temperature ``supercritical`` at or
    above the critical pressure, else ``gas``. A fill denser than the critical density becomes
    liquid-full where the saturated liquid density falls to ρ (solved on the saturation curve);
    a lighter fill never does (it ends as vapour).

    References
    ----------
    Span & Wagner (1996) for CO2; Guder & Wagner, J. Phys. Chem. Ref. Data 38 (2009) 33–94 for
    SF6 (both in CoolProp HEOS). Filling ratios: ADR packing instruction P200 (from memory).

    Examples
    --------
    CO2 at 0.75 kg/L (the usual filling ratio) is two-phase at 20 °C, liquid-full above about
    22 °C and supercritical at 35 °C:

    >>> co2 = g.parse_gas("co2")
    >>> [state_by_weight(co2, 37.5, 0.05, T + 273.15).phase for T in (20.0, 30.0, 35.0)]
    ['two-phase', 'liquid-full', 'supercritical']
    >>> round(state_by_weight(co2, 37.5, 0.05, 293.15).liquid_full_temperature_k - 273.15, 1)
    22.1
    """
    check_positive(mass_kg, "contents", "kg")
    check_positive(volume_m3, "cylinder volume", "m³")
    rho = mass_kg / volume_m3
    g.check_state(gas, T)
    p = g.pressure_from_density(gas, rho, T)
    if gas.is_mixture:
        kind = g.pt_state(gas, T, p).phase.kind
        return WeightState("two-phase" if kind == "two-phase" else "gas", p, rho, None, None)
    Tc, pc = g.critical_temperature(gas), g.critical_pressure(gas)
    T_lf = g.liquid_full_temperature(gas, rho)
    if T >= Tc:
        return WeightState("supercritical" if p >= pc else "gas", p, rho, T_lf, None)
    p_sat = g.saturation_pressure(gas, T)
    rho_l, rho_v = g.saturation_densities(gas, T)
    kind = "gas" if rho < rho_v else "two-phase" if rho <= rho_l else "liquid-full"
    return WeightState(kind, p_sat if kind == "two-phase" else p, rho, T_lf, p_sat)

def contents_by_weight(
    gas: g.Gas, gross_kg: float, tare_kg: float, reference: Reference = REFERENCES["15C"],
    T: float = T_FULL_K, volume_m3: float | None = None,
) -> Contents:
    """Contents of a cylinder from its weights: m = gross − tare (the method for liquefied
    gases), with the state and pressure of that mass in the cylinder at T
    (:func:`state_by_weight`).

    Parameters
    ----------
    gross_kg, tare_kg : Gross and tare weights, [kg]
    reference : Free-gas reference condition
    T : Temperature, [K]
    volume_m3 : Water volume, [m³]; required: without it the state and the pressure are unknown

    Returns
    -------
    Contents
        Mass [kg], the fill's phase and pressure [Pa], free-gas volume [m³], filling ratio [kg/L] and codes.

    References
    ----------
    ADR packing instruction P200 filling ratios (from memory);
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.

    Examples
    --------
    >>> c = contents_by_weight(g.parse_gas("co2"), 75.0, 68.5, volume_m3=0.0134)
    >>> round(c.mass_kg, 1), round(c.free_volume_m3, 3), c.phase
    (6.5, 3.473, 'two-phase')
    """
    for v, what in ((gross_kg, "gross weight"), (tare_kg, "tare weight")):
        check_positive(v, what, "kg")
    if gross_kg < tare_kg:
        raise RangeError(what="gross weight", value=gross_kg, lo=tare_kg, unit="kg", lo_name="the tare weight")
    mass = gross_kg - tare_kg
    if mass <= 0:
        raise RangeError(what="gross weight", value=gross_kg, lo=tare_kg, lo_open=True, unit="kg",
                         lo_name="the tare weight", why="at the tare weight the cylinder is empty")
    if volume_m3 is None:
        raise InputError("contents by weight need the cylinder's water volume: without it the state "
                         "(two-phase, liquid-full, supercritical) and the pressure are unknown")
    check_range(volume_m3, "cylinder volume", 0.0, MAX_SUPPLY_M3, "m³", "a cylinder bundle at most")
    ws = state_by_weight(gas, mass, volume_m3, T)
    fv = free_volume(gas, mass, reference)
    ideal_fv = mass / gas.molar_mass * g.R * reference.temperature_k / reference.pressure_pa
    limit = None if gas.is_mixture else gas.components[0][0].handling.max_filling_ratio_kg_l
    ratio = mass / (volume_m3 * 1000.0)
    over = limit is not None and ratio > limit
    flags = [f for f, on in (("liquid-full", ws.phase == "liquid-full"), ("overfilled", over)) if on]
    return Contents(
        gas.name, volume_m3, T, ws.pressure_abs_pa, gas.sold_liquefied, ws.density_kg_m3, None, mass,
        mass / gas.molar_mass, reference, fv, mass, ideal_fv, 100.0 * (fv - ideal_fv) / ideal_fv,
        "by weight (gross − tare); state and pressure from the mean density (CoolProp HEOS)", tuple(flags),
        phase=ws.phase, filling_ratio_kg_l=ratio, overfilled=over, vapour_pressure_abs_pa=ws.vapour_pressure_abs_pa,
        liquid_full_temperature_k=ws.liquid_full_temperature_k, max_filling_ratio_kg_l=limit,
        critical_temperature_k=g.critical_temperature(gas) if gas.sold_liquefied else None,
    )
