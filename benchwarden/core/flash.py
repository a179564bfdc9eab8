"""Flashes at a given pressure: the state with a given enthalpy (isenthalpic throttling) or
entropy (isentropic nozzles), for pure gases and mixtures.

Pure gases use CoolProp's own (h, p) and (p, s) flashes. Where CoolProp cannot solve one (with
CoolProp 8 and its superancillaries switched off, e.g. argon at 48.3 bar(a), just below its
critical pressure, on the isentrope from 102.3 bar(a), 322.7 K), the same state is found from
saturation and (T, p) flashes (:func:`_pure_fallback`), so the answer never depends on which
states happened to be computed before. Mixtures solve h(T, p) = h or s(T, p) = s on T, first on
the gas branch and, where that state is not stable, with full phase-equilibrium (T, p) flashes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from benchwarden.core import eos
from benchwarden.core.gas import (
    Gas,
    Phase,
    limits,
    phase_of,
    state,
    state_at,
    triple_point,
)
from benchwarden.errors import KELVIN, PA_ABS, PropertyError

__all__ = ["Flash", "FlashPH", "flash_ph", "isentrope", "isentrope_state", "solve_increasing"]


@dataclass(frozen=True)
class Flash:
    """One flashed state: temperature [K], phase, density [kg/m³], enthalpy [J/kg]."""

    T: float
    phase: Phase
    density: float
    h: float = math.nan


#: The isenthalpic flash's result (same record).
FlashPH = Flash


def solve_increasing(f: Any, lo: float, hi: float, tol: float = 1e-7) -> float:
    """Root of an increasing f(T) in [lo, hi] by bisection with secant steps (Illinois).

    Parameters
    ----------
    f : an increasing function of one variable
    lo, hi : Bracket, [same unit as the variable]
    tol : Relative tolerance on the bracket, [-]

    Returns
    -------
    float
        The root, in the unit of ``lo`` and ``hi``.

    Notes
    -----
    Regula falsi with the Illinois modification: each end that stays is halved in weight.

    References
    ----------
    Dowell, M. and Jarratt, P., "A modified regula falsi method for computing the root of an
    equation", BIT 11 (1971) 168–174.
    """
    flo, fhi = f(lo), f(hi)
    if flo > 0 or fhi < 0:
        raise PropertyError("no temperature in range matches")
    for _ in range(100):
        T = hi - fhi * (hi - lo) / (fhi - flo) if fhi != flo else 0.5 * (lo + hi)
        if not lo < T < hi:
            T = 0.5 * (lo + hi)
        fT = f(T)
        if abs(hi - lo) < tol * max(1.0, T):
            return T
        if fT > 0:
            hi, fhi = T, fT
            flo *= 0.5
        else:
            lo, flo = T, fT
            fhi *= 0.5
    return 0.5 * (lo + hi)



def _solve_mixture(gas: Gas, prop: str, target: float, p: float, T_guess: float, tol: float,
                   verify: bool = True) -> float:
    """T at which the mixture's ``prop`` (hmass or smass, increasing in T) equals ``target``
    at p.

    Solved first on the gas branch (fast, and the answer wherever the gas is stable). Where
    that state is not a stable single phase, the true state is two-phase and lies between
    the gas-branch temperature and the dew point (condensing lowers h and s at a given T):
    that bracket is searched with full phase-equilibrium (T, p) flashes. ``verify=False``
    skips the stability check (the caller checks the one state that matters)."""
    tmin, tmax, _ = limits(gas)

    def on_gas_branch(T: float) -> float:
        return float(getattr(state_at(gas, "PT_INPUTS", p, T, imposed="gas"), prop)())

    def f(T: float) -> float:
        return on_gas_branch(T) - target

    # bracket on the gas branch: up until above the target, down until below it or until the
    # gas branch stops existing (far inside the two-phase region)
    hi = min(tmax, T_guess)
    while f(hi) < 0:
        if hi >= tmax:
            raise PropertyError(f"no state of {gas.name} at {{0}} up to {{1}}", quantities=((p, PA_ABS), (tmax, KELVIN)))
        hi = min(tmax, hi + 20.0)
    lo: float | None = None
    T, last_ok = hi, hi
    while T > tmin:
        T = max(tmin, T - 10.0)
        try:
            if f(T) < 0:
                lo = T
                break
        except PropertyError:
            break
        last_ok = T
    T_gas = solve_increasing(f, lo, last_ok, tol) if lo is not None else math.nan
    if not verify:
        if lo is None:
            raise PropertyError(f"no gas state of {gas.name} at {{0}}", quantities=((p, PA_ABS),))
        return T_gas

    def equilibrium(T: float) -> tuple[bool, float]:
        """(single stable gas phase consistent with the gas branch, equilibrium value)."""
        AS = state_at(gas, "PT_INPUTS", p, T)
        value = float(getattr(AS, prop)())
        single = phase_of(gas, AS).kind in ("gas", "supercritical")
        return single and abs(value - on_gas_branch(T)) <= 1e-6 * max(1.0, abs(value)), value

    try:
        if lo is not None and equilibrium(T_gas)[0]:
            return T_gas
        # two-phase: between the gas-branch temperature (or the lowest point the gas branch
        # reaches) and the dew point
        T_low = T_gas if lo is not None else last_ok
        T_dew = T_low
        for _ in range(40):
            T_dew = min(tmax, T_dew + 2.0)
            if equilibrium(T_dew)[0]:
                break
        else:
            raise PropertyError("no dew point found")
        for _ in range(60):
            if equilibrium(T_low)[1] < target:
                break
            T_low = max(tmin, T_low - 5.0)
        else:
            raise PropertyError("no bracket")
        return solve_increasing(lambda T: equilibrium(T)[1] - target, T_low, T_dew, tol)
    except PropertyError:
        raise PropertyError(f"the phase equilibrium of {gas.name} cannot be solved at {{0}}",
                            quantities=((p, PA_ABS),)) from None


def _from_state(gas: Gas, AS: Any) -> Flash:
    return Flash(float(AS.T()), phase_of(gas, AS), float(AS.rhomass()), float(AS.hmass()))


def _saturation_ends(gas: Gas, prop: str, p: float) -> tuple[float, ...]:
    """(T_sat, x_L, ρ_L, h_L, x_V, ρ_V, h_V) at p, x being ``prop`` of each saturated phase."""
    L = state_at(gas, "PQ_INPUTS", p, 0.0)
    T_s, xL, rL, hL = float(L.T()), float(getattr(L, prop)()), float(L.rhomass()), float(L.hmass())
    V = state_at(gas, "PQ_INPUTS", p, 1.0)
    return T_s, xL, rL, hL, float(getattr(V, prop)()), float(V.rhomass()), float(V.hmass())


def _pure_fallback(gas: Gas, prop: str, target: float, p: float) -> Flash:
    """The state of a pure gas with ``prop`` (``hmass`` or ``smass``) equal to ``target`` at p,
    from saturation and (T, p) flashes: between the triple and critical pressures, inside the
    saturated liquid and vapour values the state is two-phase at the saturation temperature
    (lever rule, homogeneous equilibrium); otherwise T is solved on the liquid or vapour branch
    (h and s increase with T at constant p)."""
    tmin, tmax, _ = limits(gas)
    pc = float(state(gas).p_critical())
    _, pt = triple_point(gas)
    lo, hi, imposed = tmin, tmax, "gas" if p <= pt else None
    try:
        ends = _saturation_ends(gas, prop, p) if pt < p < pc else None
    except PropertyError:
        ends = None
    if ends is not None:
        T_s, xL, rL, hL, xV, rV, hV = ends
        if xL <= target <= xV:
            q = (target - xL) / (xV - xL)
            return Flash(T_s, Phase("two-phase", q), 1.0 / (q / rV + (1.0 - q) / rL), hL + q * (hV - hL))
        lo, hi, imposed = (T_s, tmax, "gas") if target > xV else (tmin, T_s, "liquid")

    def f(T: float) -> float:
        return float(getattr(state_at(gas, "PT_INPUTS", p, T, imposed), prop)()) - target

    T = solve_increasing(f, lo, hi, 1e-10)
    return _from_state(gas, state_at(gas, "PT_INPUTS", p, T, imposed))


def _pure(gas: Gas, pair: str, prop: str, target: float, p: float) -> Flash:
    AS = eos.update(gas, pair, *((target, p) if pair == "HmassP_INPUTS" else (p, target)))
    if AS is not None:
        return _from_state(gas, AS)
    try:
        return _pure_fallback(gas, prop, target, p)
    except PropertyError:
        what = "h" if prop == "hmass" else "s"
        raise PropertyError(f"the equation of state of {gas.name} has no state at {{0}} with {what} = {{1}}",
                            quantities=((p, PA_ABS), (target, "J/kg" if what == "h" else "J/(kg·K)"))) from None


def flash_ph(gas: Gas, h: float, p: float, T_guess: float) -> Flash:
    """Isenthalpic flash: the state with enthalpy h [J/kg] at absolute pressure p [Pa].

    Parameters
    ----------
    gas : the gas
    h : Specific enthalpy, [J/kg]
    p : Absolute pressure, [Pa]
    T_guess : Temperature to start a mixture's search from, [K]

    Returns
    -------
    Flash
        Temperature [K], phase (with its vapour fraction [-]), density [kg/m³] and enthalpy
        [J/kg] of the state.

    Notes
    -----
    Pure gases use CoolProp's (h, p) flash (with :func:`_pure_fallback` where it fails). Mixtures
    solve h(T, p) = h on T, first on the gas branch and, where that state is not stable, with
    full (T, p) phase-equilibrium flashes (CoolProp 8; h is continuous and increasing in T
    through the two-phase region), which is robust where CoolProp's own mixture (h, p) flash is
    not.

    References
    ----------
    Bell, Wronski, Quoilin & Lemort, "Pure and pseudo-pure fluid thermophysical property
    evaluation and the open-source thermophysical property library CoolProp", Ind. Eng. Chem.
    Res. 53 (2014) 2498–2508.
    """
    if not gas.is_mixture:
        return _pure(gas, "HmassP_INPUTS", "hmass", h, p)
    T = _solve_mixture(gas, "hmass", h, p, T_guess, 1e-7)
    AS = state_at(gas, "PT_INPUTS", p, T)
    return Flash(T, phase_of(gas, AS), float(AS.rhomass()), float(AS.hmass()))


def isentrope_state(gas: Gas, s: float, p: float, T_guess: float, verify: bool = True) -> Flash:
    """The state with entropy s [J/(kg·K)] at absolute pressure p [Pa] (temperature, phase,
    density, enthalpy): CoolProp's (p, s) flash for a pure gas (with :func:`_pure_fallback`
    where it fails; a two-phase state in homogeneous equilibrium), s(T, p) = s solved on T for a
    mixture as in :func:`flash_ph`; ``verify=False`` keeps a mixture on its gas branch without a
    stability check.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    s : Specific entropy, [J/(kg·K)]
    p : Absolute pressure, [Pa]
    T_guess : Start of a mixture's search, [K]
    verify : check a mixture's stability (False: stay on its gas branch)

    Returns
    -------
    Flash
        Temperature [K], phase, density [kg/m³], enthalpy [J/kg] of the state.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    if not gas.is_mixture:
        return _pure(gas, "PSmass_INPUTS", "smass", s, p)
    T = _solve_mixture(gas, "smass", s, p, T_guess, 1e-9, verify)
    AS = state_at(gas, "PT_INPUTS", p, T, imposed=None if verify else "gas")
    return Flash(T, phase_of(gas, AS), float(AS.rhomass()), float(AS.hmass()))


def isentrope(gas: Gas, s: float, p: float, T_guess: float, verify: bool = True) -> tuple[float, float, float]:
    """(h [J/kg], ρ [kg/m³], T [K]) at entropy s [J/(kg·K)] and pressure p [Pa]
    (:func:`isentrope_state`).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    s : Specific entropy, [J/(kg·K)]
    p : Absolute pressure, [Pa]
    T_guess : Start of a mixture's search, [K]
    verify : check a mixture's stability

    Returns
    -------
    tuple of float
        (h [J/kg], ρ [kg/m³], T [K]) on the isentrope.

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508) and the
    fluid's reference equation of state.
    """
    st = isentrope_state(gas, s, p, T_guess, verify)
    return st.h, st.density, st.T
