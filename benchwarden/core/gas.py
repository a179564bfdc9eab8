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
import os
import re
import sys
import threading
from dataclasses import dataclass
from typing import Any

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


# --------------------------------------------------------------------------------------
# CoolProp: a quiet lazy import and one AbstractState per gas and per thread

#: Set before CoolProp 8 is imported: it then skips building superancillary curves for every
#: fluid (2–4 s here) and takes about 0.3 s; saturation states agree to 1e-11 (DEVELOPERS.md).
SUPERANCILLARY_SWITCH = "COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY"

_IMPORT_LOCK = threading.Lock()
_BUILD_LOCK = threading.Lock()  # CoolProp's mixing-rule table is process-wide
_local = threading.local()
#: Pairs whose parameters were estimated: mirrors CoolProp's own process-wide pair table.
_ESTIMATED: set[frozenset[str]] = set()


def _import_quietly() -> Any:
    """Import CoolProp with the superancillary switch set and standard output (file
    descriptor 1) sent to /dev/null meanwhile: the C++ library announces the switch with a
    line on standard output, which must never reach command output such as ``--json``."""
    os.environ.setdefault(SUPERANCILLARY_SWITCH, "1")
    try:
        sys.stdout.flush()
    except (OSError, ValueError):  # pragma: no cover - closed stdout
        pass
    try:
        saved = os.dup(1)
    except OSError:  # pragma: no cover - no fd 1 at all
        saved = -1
    devnull = os.open(os.devnull, os.O_WRONLY)
    try:
        if saved >= 0:
            os.dup2(devnull, 1)
        import CoolProp
    finally:
        if saved >= 0:
            os.dup2(saved, 1)
            os.close(saved)
        os.close(devnull)
    return CoolProp


def coolprop() -> Any:
    """The ``CoolProp`` module, imported quietly on first use (thread-safe)."""
    module = sys.modules.get("CoolProp")
    if module is not None and hasattr(module, "AbstractState"):
        return module
    with _IMPORT_LOCK:
        module = sys.modules.get("CoolProp")
        if module is not None and hasattr(module, "AbstractState"):
            return module
        return _import_quietly()


@dataclass
class _State:
    AS: Any
    estimated_pairs: tuple[tuple[str, str], ...]


def _build(key: str) -> _State:
    gas = parse_gas(key)
    CP = coolprop()
    names = "&".join(g.coolprop for g, _ in gas.components)
    estimated: list[tuple[str, str]] = []
    with _BUILD_LOCK:
        for _ in range(len(gas.components) ** 2 + 1):
            try:
                AS = CP.AbstractState("HEOS", names)
                break
            except ValueError as exc:
                m = re.search(r"binary pair \[([\d-]+),([\d-]+)\]", str(exc))
                if not m:
                    raise PropertyError(f"CoolProp cannot build {gas.name}") from None
                cas1, cas2 = m.group(1), m.group(2)
                # CoolProp ships no interaction parameters for this pair: estimate them.
                CP.CoolProp.apply_simple_mixing_rule(cas1, cas2, "Lorentz-Berthelot")
                by_cas = {g.cas: g.name for g in PURE_GASES.values()}
                estimated.append((by_cas.get(cas1, cas1), by_cas.get(cas2, cas2)))
        else:  # pragma: no cover - defensive
            raise PropertyError(f"CoolProp cannot build {gas.name}")
        _ESTIMATED.update(frozenset(p) for p in estimated)
        comps = [c.name for c, _ in gas.components]
        estimated = [(a, b) for i, a in enumerate(comps) for b in comps[i + 1:] if frozenset((a, b)) in _ESTIMATED]
    if gas.is_mixture:
        AS.set_mole_fractions([x for _, x in gas.components])
    return _State(AS, tuple(estimated))


def _state(key: str) -> _State:
    states: dict[str, _State] | None = getattr(_local, "states", None)
    if states is None:
        states = _local.states = {}
    st = states.get(key)
    if st is None:
        st = states[key] = _build(key)
    return st


def state(gas: Gas) -> Any:
    """This thread's CoolProp ``AbstractState`` of ``gas`` (HEOS backend).

    Each thread has its own states: an ``AbstractState`` is updated in place by every call,
    so sharing one between threads returns another thread's numbers."""
    return _state(gas.key).AS


def estimated_pairs(gas: Gas) -> tuple[tuple[str, str], ...]:
    """Binary pairs of a mixture whose interaction parameters were estimated (Lorentz-Berthelot)."""
    return _state(gas.key).estimated_pairs


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


def _update(gas: Gas, pair: str, a: float, b: float) -> Any:
    CP = coolprop()
    AS = state(gas)
    try:
        AS.update(getattr(CP, pair), a, b)
    except ValueError:
        what = {"PT_INPUTS": f"{fmt_pressure(a, kind='absolute')}, {fmt_temperature(b)}",
                "DmassT_INPUTS": f"{a:.6g} kg/m³, {fmt_temperature(b)}",
                "HmassP_INPUTS": f"h = {a / 1e3:.6g} kJ/kg, {fmt_pressure(b, kind='absolute')}",
                "PSmass_INPUTS": f"{fmt_pressure(a, kind='absolute')}, s = {b / 1e3:.6g} kJ/(kg·K)",
                "QT_INPUTS": f"saturation at {fmt_temperature(b)}"}.get(pair, "")
        raise PropertyError(f"the equation of state of {gas.name} has no solution at {what}") from None
    return AS


@dataclass(frozen=True)
class Phase:
    """The phase of a state: ``gas``, ``supercritical``, ``liquid`` or ``two-phase`` (with the
    molar vapour fraction, 0 to 1)."""

    kind: str
    vapour_fraction: float | None


def _phase_of(gas: Gas, AS: Any) -> Phase:
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
    return _phase_of(gas, _update(gas, "PT_INPUTS", p, T))


@dataclass(frozen=True)
class PTState:
    """Density [kg/m³], compressibility factor and phase of one (T, p) flash."""

    density: float
    z: float
    phase: Phase


def pt_state(gas: Gas, T: float, p: float) -> PTState:
    """Density, Z and phase at T [K], p [Pa] from one (T, p) flash (CoolProp HEOS)."""
    check_state(gas, T, p)
    AS = _update(gas, "PT_INPUTS", p, T)
    return PTState(float(AS.rhomass()), float(AS.compressibility_factor()), _phase_of(gas, AS))


def density(gas: Gas, T: float, p: float) -> float:
    """Mass density [kg/m³] at temperature T [K] and absolute pressure p [Pa] (CoolProp HEOS,
    full (T, p) flash: a mixture inside its two-phase region gives the overall density of
    liquid and vapour together).

    >>> round(density(parse_gas("nitrogen"), 350.0, 20e6) / 0.0280134 / 1000, 4)  # Span et al. 2000
    6.3552
    """
    check_state(gas, T, p)
    return float(_update(gas, "PT_INPUTS", p, T).rhomass())


def z_factor(gas: Gas, T: float, p: float) -> float:
    """Compressibility factor Z = p/(ρ_molar·R·T) (CoolProp HEOS)."""
    check_state(gas, T, p)
    return float(_update(gas, "PT_INPUTS", p, T).compressibility_factor())


def pressure_from_density(gas: Gas, rho: float, T: float) -> float:
    """Absolute pressure [Pa] of the gas at mass density ρ [kg/m³] and temperature T [K]."""
    check_state(gas, T)
    if not math.isfinite(rho) or rho <= 0:
        raise InputError(f"density {rho!r} kg/m³ must be greater than zero")
    return float(_update(gas, "DmassT_INPUTS", rho, T).p())


def enthalpy(gas: Gas, T: float, p: float) -> float:
    """Specific enthalpy [J/kg] at T [K], p [Pa] (CoolProp HEOS)."""
    check_state(gas, T, p)
    return float(_update(gas, "PT_INPUTS", p, T).hmass())


def entropy(gas: Gas, T: float, p: float) -> float:
    """Specific entropy [J/(kg·K)] at T [K], p [Pa] (CoolProp HEOS)."""
    check_state(gas, T, p)
    return float(_update(gas, "PT_INPUTS", p, T).smass())


def heat_capacity_ratio(gas: Gas, T: float, p: float) -> float:
    """Ratio of specific heats cp/cv at (T, p) from CoolProp HEOS."""
    check_state(gas, T, p)
    AS = _update(gas, "PT_INPUTS", p, T)
    return float(AS.cpmass() / AS.cvmass())


def vapour_enthalpy(gas: Gas, T: float, p: float) -> float:
    """Specific enthalpy [J/kg] of the *vapour* at (T, p), also below the triple-point
    temperature where CoolProp's range check stops (the vapour branch of the same Helmholtz
    equation, evaluated with the gas phase imposed; used for CO2 vapour above its
    sublimation line). Pure gases only.

    >>> round(vapour_enthalpy(parse_gas("co2"), 204.15, 101325.0) / 1e3, 1)
    429.9
    """
    if gas.is_mixture:
        raise InputError("vapour_enthalpy is for pure gases")
    CP = coolprop()
    AS = state(gas)
    AS.specify_phase(CP.iphase_gas)
    try:
        AS.update(CP.PT_INPUTS, p, T)
        return float(AS.hmass())
    except ValueError:
        raise PropertyError(f"no vapour state of {gas.name} at {fmt_temperature(T)}, {fmt_pressure(p, kind='absolute')}") from None
    finally:
        AS.unspecify_phase()


def saturated_vapour_enthalpy(gas: Gas, T: float) -> float:
    """Enthalpy [J/kg] of the saturated vapour of a pure gas at T [K]."""
    if gas.is_mixture:
        raise InputError("saturation is defined here only for pure gases")
    return float(_update(gas, "QT_INPUTS", 1.0, T).hmass())


@dataclass(frozen=True)
class FlashPH:
    """Result of an isenthalpic (h, p) flash: temperature [K], phase, density [kg/m³]."""

    T: float
    phase: Phase
    density: float


def solve_increasing(f: Any, lo: float, hi: float, tol: float = 1e-7) -> float:
    """Root of an increasing f(T) in [lo, hi] by bisection with secant steps (Illinois)."""
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
    CP = coolprop()
    AS = state(gas)
    tmin, tmax, _ = limits(gas)

    def on_gas_branch(T: float) -> float:
        AS.specify_phase(CP.iphase_gas)
        try:
            return float(getattr(_update(gas, "PT_INPUTS", p, T), prop)())
        finally:
            AS.unspecify_phase()

    def f(T: float) -> float:
        return on_gas_branch(T) - target

    # bracket on the gas branch: up until above the target, down until below it or until the
    # gas branch stops existing (far inside the two-phase region)
    hi = min(tmax, T_guess)
    while f(hi) < 0:
        if hi >= tmax:
            raise PropertyError(f"no state of {gas.name} at {fmt_pressure(p, kind='absolute')} up to {fmt_temperature(tmax)}")
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
            raise PropertyError(f"no gas state of {gas.name} at {fmt_pressure(p, kind='absolute')}")
        return T_gas

    def equilibrium(T: float) -> tuple[bool, float]:
        """(single stable gas phase consistent with the gas branch, equilibrium value)."""
        value = float(getattr(_update(gas, "PT_INPUTS", p, T), prop)())
        single = _phase_of(gas, AS).kind in ("gas", "supercritical")
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
        raise PropertyError(f"the phase equilibrium of {gas.name} cannot be solved at {fmt_pressure(p, kind='absolute')}") from None


def flash_ph(gas: Gas, h: float, p: float, T_guess: float) -> FlashPH:
    """Isenthalpic flash: the state with enthalpy h [J/kg] at absolute pressure p [Pa].

    Pure gases use CoolProp's (h, p) flash. Mixtures solve h(T, p) = h on T, first on the gas
    branch and, where that state is not stable, with full (T, p) phase-equilibrium flashes
    (CoolProp 8; h is continuous and increasing in T through the two-phase region), which is
    robust where CoolProp's own mixture (h, p) flash is not.
    """
    if not gas.is_mixture:
        AS = _update(gas, "HmassP_INPUTS", h, p)
        return FlashPH(float(AS.T()), _phase_of(gas, AS), float(AS.rhomass()))
    T = _solve_mixture(gas, "hmass", h, p, T_guess, 1e-7)
    AS = _update(gas, "PT_INPUTS", p, T)
    return FlashPH(T, _phase_of(gas, AS), float(AS.rhomass()))


def isentrope(gas: Gas, s: float, p: float, T_guess: float, verify: bool = True) -> tuple[float, float, float]:
    """(h [J/kg], ρ [kg/m³], T [K]) at entropy s [J/(kg·K)] and pressure p [Pa] (CoolProp
    HEOS; mixtures by solving s(T, p) = s on T as in :func:`flash_ph`; ``verify=False`` stays
    on the gas branch without a stability check)."""
    if not gas.is_mixture:
        AS = _update(gas, "PSmass_INPUTS", p, s)
        return float(AS.hmass()), float(AS.rhomass()), float(AS.T())
    T = _solve_mixture(gas, "smass", s, p, T_guess, 1e-9, verify)
    CP = coolprop()
    AS = state(gas)
    if not verify:
        AS.specify_phase(CP.iphase_gas)
    try:
        _update(gas, "PT_INPUTS", p, T)
        return float(AS.hmass()), float(AS.rhomass()), T
    finally:
        AS.unspecify_phase()


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
    AS = _update(gas, "QT_INPUTS", 0.0, T)
    return float(AS.p())


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
    return p >= 0.95 * saturation_pressure(gas, T)


def gas_branch_densities(gas: Gas, T: float, ps: Any) -> list[float] | None:
    """Densities of a mixture at T over the pressures ``ps`` on the gas branch, or None when a
    stability check (both ends and every 8th pressure) finds a state that is not a single
    stable phase (the caller then uses full flashes)."""
    n = len(ps)
    for j in sorted(set(range(0, n, 8)) | {n - 1}):
        if phase(gas, T, float(ps[j])).kind not in ("gas", "supercritical"):
            return None
    CP = coolprop()
    AS = state(gas)
    out: list[float] = []
    AS.specify_phase(CP.iphase_gas)
    try:
        for p in ps:
            check_state(gas, T, float(p))
            out.append(float(_update(gas, "PT_INPUTS", float(p), T).rhomass()))
    except PropertyError:
        return None
    finally:
        AS.unspecify_phase()
    return out
