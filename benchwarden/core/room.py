"""Room oxygen: what a sudden release or a continuous leak does to the air.

Sudden release of a free-gas volume Vg (at room conditions) into a room of volume Vr:

* ``displacement`` (default, most conservative): the released gas pushes out an equal volume of
  room air before mixing, C = C0·(Vr − Vg)/Vr (BCGA Guidance Note GN11, "Reduced oxygen
  atmospheres"; appendix and formula from memory).
* ``mixed``: continuously well mixed while room air escapes, C = C0·exp(−Vg/Vr).
* ``sealed``: nothing escapes (room pressure rises), C = C0·Vr/(Vr + Vg).

Continuous leak R [m³/s at room conditions] with ventilation Q [m³/s], well mixed, O2 balance
V·dC/dt = inflow·C0 − outflow·C:

* exhaust-driven (fan extracts Q; make-up air Q − R): C(t) = Css + (C0 − Css)·e^(−Q·t/V),
  Css = C0·(1 − R/Q) (default, more conservative);
* supply-driven (fan supplies Q of fresh air; Q + R leaves): Css = C0·Q/(Q + R), rate (Q + R)/V;
* no ventilation (displaced air leaves, nothing enters): C(t) = C0·e^(−R·t/V).

These are the well-mixed models of laboratory oxygen-deficiency-hazard procedures (e.g. the
CERN and Fermilab ODH assessment notes, from memory; method as in BCGA GN11). The tests check
them against a direct numerical integration of the mixing equation. Gases heavier than air
(argon, CO2, SF6) collect near the floor and in pits, lighter ones (helium, hydrogen) under the
ceiling: there the well-mixed figure is optimistic.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

from benchwarden.core import gas as g
from benchwarden.errors import InputError, RangeError
from benchwarden.units import Flow, check_positive
from benchwarden.units.quantities import Amount

#: Oxygen in dry air, vol % (common value; 20.946 % in the US Standard Atmosphere 1976).
C0_AIR = 20.95
#: Oxygen-deficient atmosphere: below 19.5 % (OSHA 29 CFR 1910.134(b)).
OSHA_DEFICIENT = 19.5
#: Below 18 %: EIGA Doc 44 treats the atmosphere as hazardous; do not enter without measures
#: (from memory).
EIGA_HAZARD = 18.0

#: Effects of low oxygen on a person at rest (own summary of the table in EIGA Doc 44
#: "Hazards of inert gases and oxygen depletion", from memory). (upper bound %, text)
EFFECTS: tuple[tuple[float, str], ...] = (
    (19.5, "below the 19.5 % limit for an oxygen-deficient atmosphere (29 CFR 1910.134)"),
    (18.0, "hazardous (EIGA Doc 44): no entry without protection; monitor"),
    (15.0, "poorer coordination and judgement, faster breathing and pulse; not noticed by the person"),
    (12.0, "dizziness, headache, quickly tiring; judgement badly impaired; lips may turn blue"),
    (10.0, "nausea, vomiting, collapse and loss of consciousness possible"),
    (8.0, "loss of consciousness within minutes; death within minutes without rescue"),
    (6.0, "collapse within a breath or two; coma and death"),
)

ReleaseModel = Literal["displacement", "mixed", "sealed"]
VentKind = Literal["exhaust", "supply"]


def effect_of(c_percent: float) -> str:
    """Words for the effect of an oxygen level (see :data:`EFFECTS`); ``""`` if ≥ 19.5 %.

    Parameters
    ----------
    c_percent : Oxygen in the room, [vol %]

    Returns
    -------
    str
        Words for the effect, or ``""`` at 19.5 % and above.

    References
    ----------
    OSHA 29 CFR 1910.134 (19.5 %), EIGA Doc 44 and CGA SB-2 (effects of oxygen deficiency); from memory.
    """
    text = ""
    for bound, words in EFFECTS:
        if c_percent < bound:
            text = words
    return text


@dataclass(frozen=True)
class Release:
    model: ReleaseModel
    room_volume_m3: float
    release_volume_m3: float
    c0_percent: float
    o2_percent_after_release: float
    effect: str
    notes: tuple[str, ...]
    method: str
    #: the released gas's own concentration in the room, vol %
    gas_percent_after_release: float = 0.0
    #: oxygen in the released gas itself, vol % (0 for an inert gas, 100 for oxygen)
    gas_o2_percent: float = 0.0


_MODEL_TEXT = {
    "displacement": "displaced air leaves first, C = C0·(Vr − Vg)/Vr (BCGA GN11)",
    "mixed": "well mixed, room air escaping, C = C0·exp(−Vg/Vr)",
    "sealed": "sealed room, C = C0·Vr/(Vr + Vg)",
}


def release(room_volume_m3: float, release_volume_m3: float, model: str = "displacement",
            c0_percent: float = C0_AIR, gas_o2_percent: float = 0.0) -> Release:
    """Oxygen level after a sudden release (see module docstring for the three models).

    The released gas's own fraction in the room is y = Vg/Vr (displacement), 1 − exp(−Vg/Vr)
    (mixed) or Vg/(Vr + Vg) (sealed); the oxygen is C = C0·(1 − y) + Cg·y with Cg the oxygen in
    the released gas (0 for an inert gas, 100 for oxygen, which enriches the room).

    Parameters
    ----------
    room_volume_m3 : Room volume, [m³]
    release_volume_m3 : Released gas at room conditions, [m³]
    model : ``"displacement"``, ``"mixed"`` or ``"sealed"``
    c0_percent : Oxygen before the release, [vol %]
    gas_o2_percent : Oxygen in the released gas, [vol %]

    Returns
    -------
    Release
        Oxygen after the release [vol %], the gas's share of the room [vol %], the effect and notes.

    References
    ----------
    BCGA Guidance Note GN11 'Reduced oxygen atmospheres' (release models; from memory);
    well-mixed oxygen balance of laboratory ODH assessments (from memory).
    OSHA 29 CFR 1910.134 (19.5 %), EIGA Doc 44 and CGA SB-2 (effects of oxygen deficiency); from memory.

    Examples
    --------
    >>> round(release(50.0, 9.5).o2_percent_after_release, 2)   # 9.5 m³ into 50 m³
    16.97
    >>> round(release(50.0, 9.5, "mixed").o2_percent_after_release, 2)
    17.33
    >>> round(release(50.0, 9.5, "sealed").o2_percent_after_release, 2)
    17.6
    >>> round(release(30.0, 10.0, gas_o2_percent=100.0).o2_percent_after_release, 2)   # oxygen
    47.3
    """
    check_positive(room_volume_m3, "room volume", "m³")
    check_positive(release_volume_m3, "release volume", "m³")
    if model not in _MODEL_TEXT:
        raise InputError(f"unknown release model {model!r}; allowed: {', '.join(_MODEL_TEXT)}")
    if not 0 < c0_percent <= 100:
        raise InputError(f"initial oxygen {c0_percent:g} % must be between 0 and 100")
    notes: list[str] = []
    Vr, Vg = room_volume_m3, release_volume_m3
    if model == "displacement":
        y = Vg / Vr
        if y > 1:
            y = 1.0
            notes.append("the release is larger than the room: all room air is displaced")
    elif model == "mixed":
        y = 1.0 - math.exp(-Vg / Vr)
    else:
        y = Vg / (Vr + Vg)
    c = c0_percent * (1.0 - y) + gas_o2_percent * y
    return Release(model, Vr, Vg, c0_percent, c, effect_of(c), tuple(notes), _MODEL_TEXT[model],  # type: ignore[arg-type]
                   100.0 * y, gas_o2_percent)


@dataclass(frozen=True)
class Leak:
    room_volume_m3: float
    leak_m3_s: float
    ventilation_m3_s: float
    ventilation_kind: str
    c0_percent: float
    o2_percent_steady: float
    rate_per_s: float
    minutes_to_19_5: float
    minutes_to_18: float
    minutes_to_recover: float
    effect: str
    method: str


def leak_o2(room_volume_m3: float, leak_m3_s: float, ventilation_m3_s: float = 0.0,
            kind: str = "exhaust", c0_percent: float = C0_AIR) -> Leak:
    """Oxygen level in a room with a continuous leak R and ventilation Q (well mixed).

    ``minutes_to_recover`` is the time from the steady state back above 19.5 % once the leak
    stops, with the ventilation running (``inf`` without ventilation: open doors and windows;
    NaN when the level never falls below 19.5 %).

    Parameters
    ----------
    room_volume_m3 : Room volume, [m³]
    leak_m3_s : Leak at room conditions, [m³/s]
    ventilation_m3_s : Ventilation, [m³/s]
    kind : ``"exhaust"`` or ``"supply"`` ventilation
    c0_percent : Oxygen before the leak, [vol %]

    Returns
    -------
    Leak
        Steady oxygen [vol %], minutes to 19.5 % and 18 % and to recover [min], the effect.

    References
    ----------
    BCGA Guidance Note GN11 'Reduced oxygen atmospheres' (release models; from memory);
    well-mixed oxygen balance of laboratory ODH assessments (from memory).
    OSHA 29 CFR 1910.134 (19.5 %), EIGA Doc 44 and CGA SB-2 (effects of oxygen deficiency); from memory.

    Examples
    --------
    >>> lk = leak_o2(50.0, 10 / 60000, 100 / 3600)   # 10 L/min into 50 m³ with 2 air changes/h
    >>> round(lk.o2_percent_steady, 3), lk.minutes_to_19_5
    (20.824, inf)
    """
    check_positive(room_volume_m3, "room volume", "m³")
    if not math.isfinite(leak_m3_s) or leak_m3_s < 0:
        raise RangeError(what="leak", value=leak_m3_s, lo=0.0, unit="m³/s")
    if not math.isfinite(ventilation_m3_s) or ventilation_m3_s < 0:
        raise RangeError(what="ventilation", value=ventilation_m3_s, lo=0.0, unit="m³/s")
    if kind not in ("exhaust", "supply"):
        raise InputError(f"unknown ventilation kind {kind!r}; allowed: exhaust, supply")
    if not (math.isfinite(c0_percent) and 0 < c0_percent <= 100):
        raise InputError(f"initial oxygen {c0_percent!r} % must be above 0 and at most 100")
    V, R, Q, C0 = room_volume_m3, leak_m3_s, ventilation_m3_s, c0_percent
    if Q == 0 or (kind == "exhaust" and R >= Q):
        css, k = 0.0, R / V
        method = "no effective ventilation: C = C0·exp(−R·t/V)"
        if Q > 0:
            method = "leak exceeds the extract: room overflows, C = C0·exp(−R·t/V)"
    elif kind == "exhaust":
        css, k = C0 * (1.0 - R / Q), Q / V
        method = "exhaust-driven ventilation, well mixed: Css = C0·(1 − R/Q), rate Q/V"
    else:
        css, k = C0 * Q / (Q + R), (Q + R) / V
        method = "supply-driven ventilation, well mixed: Css = C0·Q/(Q + R), rate (Q + R)/V"

    def minutes_to(th: float) -> float:
        if th >= C0:
            return 0.0  # the room starts at or below this level
        if css >= th or k == 0:
            return math.inf
        return -math.log((th - css) / (C0 - css)) / k / 60.0

    if css >= OSHA_DEFICIENT:
        recover = math.nan  # never below 19.5 %: nothing to recover from
    elif Q == 0 or C0 <= OSHA_DEFICIENT:
        recover = math.inf  # no fresh air, or the fresh air itself is below 19.5 %
    else:
        recover = math.log((C0 - css) / (C0 - OSHA_DEFICIENT)) / (Q / V) / 60.0
    return Leak(V, R, Q, kind, C0, css, k, minutes_to(OSHA_DEFICIENT), minutes_to(EIGA_HAZARD), recover,
                effect_of(css), method)


#: A finite source sustains the steady state when its lowest oxygen comes within this fraction
#: of C0 of the steady value (0.5 % of 20.95 ≈ 0.1 % O2, below what a monitor resolves;
#: benchwarden rule).
STEADY_TOLERANCE = 0.005


@dataclass(frozen=True)
class FiniteLeak:
    """A leak that stops when its cylinder is empty: the oxygen falls until then, and recovers
    afterwards with the ventilation. The lowest oxygen and when it happens lead; the steady
    state counts only when the cylinder lasts long enough to reach it (``steady_sustained``)."""

    leak: Leak
    minutes_to_empty: float
    o2_percent_minimum: float
    minutes_below_19_5: float | None  # None: never below 19.5 %
    minutes_to_recover: float | None  # from the minimum back to 19.5 % (None: never below)
    steady_sustained: bool = True
    #: when the oxygen passes 19.5 % and 18 % before the cylinder is empty (None: it never does)
    minutes_to_19_5: float | None = None
    minutes_to_18: float | None = None
    #: effect of the lowest oxygen (``""`` if it stays at or above 19.5 %)
    effect: str = ""


def finite_leak(lk: Leak, gas_volume_m3: float) -> FiniteLeak:
    """A continuous leak of ``lk.leak_m3_s`` from a cylinder holding ``gas_volume_m3`` (free
    gas at room conditions): it lasts T = V_gas/R; the oxygen follows the leak's closed-form
    curve until T (its minimum), then recovers as C(t) = C0 − (C0 − C_T)·e^(−Q(t−T)/V).

    Parameters
    ----------
    lk : the continuous leak (:func:`leak_o2`)
    gas_volume_m3 : Free gas in the cylinder at room conditions, [m³]

    Returns
    -------
    FiniteLeak
        Minutes to empty [min], the lowest oxygen [vol %], minutes below 19.5 % and to recover [min].

    References
    ----------
    BCGA Guidance Note GN11 'Reduced oxygen atmospheres' (release models; from memory);
    well-mixed oxygen balance of laboratory ODH assessments (from memory).

    Examples
    --------
    >>> lk = leak_o2(30.0, 10 / 60000, 0.0)
    >>> f = finite_leak(lk, 1.0)      # 1 m³ of gas at 10 L/min: 100 min
    >>> round(f.minutes_to_empty), round(f.o2_percent_minimum, 2), f.steady_sustained
    (100, 20.26, False)
    """
    check_positive(gas_volume_m3, "gas in the leaking cylinder", "m³")
    if lk.leak_m3_s <= 0:
        return FiniteLeak(lk, math.inf, lk.c0_percent, None, None)
    T = gas_volume_m3 / lk.leak_m3_s
    c_min = o2_at(lk, T)
    below = None
    recover = None

    def before_empty(minutes: float) -> float | None:
        return minutes if math.isfinite(minutes) and minutes <= T / 60.0 else None

    t19 = before_empty(lk.minutes_to_19_5)
    if c_min < OSHA_DEFICIENT:
        Q, V, C0 = lk.ventilation_m3_s, lk.room_volume_m3, lk.c0_percent
        if Q > 0 and C0 > OSHA_DEFICIENT:
            recover = math.log((C0 - c_min) / (C0 - OSHA_DEFICIENT)) / (Q / V) / 60.0
        else:
            recover = math.inf
        below = (T / 60.0 - t19) + recover if t19 is not None else recover
    sustained = abs(c_min - lk.o2_percent_steady) <= STEADY_TOLERANCE * lk.c0_percent
    return FiniteLeak(lk, T / 60.0, c_min, below, recover, sustained, t19, before_empty(lk.minutes_to_18),
                      effect_of(c_min))


def o2_at(lk: Leak, t_s: float) -> float:
    """Oxygen % at time t after the leak starts (closed-form solution of the model in ``lk``).

    Parameters
    ----------
    lk : the continuous leak (:func:`leak_o2`)
    t_s : Time since the leak started, [s]

    Returns
    -------
    float
        Oxygen [vol %].

    References
    ----------
    BCGA Guidance Note GN11 'Reduced oxygen atmospheres' (release models; from memory);
    well-mixed oxygen balance of laboratory ODH assessments (from memory).
    """
    return lk.o2_percent_steady + (lk.c0_percent - lk.o2_percent_steady) * math.exp(-lk.rate_per_s * t_s)


def leak_volume_flow(gas: g.Gas, f: Flow, T_room: float, p_room: float) -> float:
    """A leak as actual volume flow at room conditions [m³/s]: a standard flow via the gas's real
    density at its reference and at the room (CoolProp HEOS), a mass flow via the density at the
    room, a plain volume flow as given (taken at room conditions).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    f : the leak as typed and parsed (standard, mass or volume flow)
    T_room : Room temperature, [K]
    p_room : Room pressure, absolute, [Pa]

    Returns
    -------
    float
        Actual volume flow at room conditions [m³/s].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    """
    if f.kind == "actual":
        return f.value
    from benchwarden.core.supply import mass_flow

    return mass_flow(gas, f) / g.density(gas, T_room, p_room)


def release_volume(gas: g.Gas, amount: Amount, T_room: float, p_room: float) -> float:
    """A release as a volume at room conditions [m³]: a mass through the gas's real density at
    the room (CoolProp HEOS), a volume as given.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    amount : the release as typed and parsed (a mass or a volume)
    T_room : Room temperature, [K]
    p_room : Room pressure, absolute, [Pa]

    Returns
    -------
    float
        Volume at room conditions [m³].

    References
    ----------
    CoolProp HEOS (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498–2508).
    """
    if amount.kind == "volume":
        return check_positive(amount.value, "release volume", "m³")
    return check_positive(amount.value, "release mass", "kg") / g.density(gas, T_room, p_room)


def stratification_note(gas: g.Gas) -> str:
    """Where the gas collects, from its density relative to air (ideal-gas ratio of molar masses).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    str
        Where the gas collects (near the floor, under the ceiling, mixed).

    References
    ----------
    Ideal-gas density ratio to air from the molar masses (air 28.96 g/mol, Lemmon et al. 2000).
    """
    rd = gas.relative_density_to_air
    if rd > 1.2:
        return (f"{gas.name} is {rd:.1f}× as dense as air: it collects at floor level, in pits and "
                "trenches, where the well-mixed figure is optimistic")
    if rd < 0.8:
        return (f"{gas.name} is {rd:.2f}× as dense as air: it rises and collects under the ceiling, "
                "where the well-mixed figure is optimistic")
    return f"{gas.name} has about the density of air and mixes readily"
