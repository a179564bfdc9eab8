"""Spark-gap self-breakdown (firing) voltage and flashover margins.

Methods
-------
* Air and nitrogen, p·d ≥ 0.1 bar·cm (density-corrected to 20 °C): the empirical
  uniform-field formula for air, U_b = 6.72·√(p·d) + 24.36·(p·d) kV with p·d in bar·cm at
  20 °C (Kuffel, Zaengl & Kuffel, "High Voltage Engineering Fundamentals", 2nd ed., 2000,
  eq. 2.80 — equation number from memory).
* Below that: Paschen's law, V = B·p·d / (ln(A·p·d) − ln(ln(1 + 1/γ))), with A and B for
  each gas from Raizer, "Gas Discharge Physics", 1991, Table 4.1 (values from memory) and
  γ = 0.01.
* SF6, p·d ≥ 0.1 bar·cm: its own uniform-field relation from the streamer criterion with a
  linear effective ionisation coefficient, (α − η)/p = A·(E/p − (E/p)_crit), A = 27.7 kV⁻¹,
  (E/p)_crit ≈ 89 kV/(cm·bar) at 20 °C, ∫(α − η)dx = K = 10.5:
  U_b = (E/p)_crit·p·d + K/A = 89·(p·d) + 0.38 kV (Kuffel, Zaengl & Kuffel 2000, §2.10;
  Christophorou & Van Brunt, IEEE Trans. Dielectr. Electr. Insul. 2 (1995) 952; constants from
  memory). Rough above about 3 bar and with rough or large electrodes: SF6 then breaks down
  below it (its breakdown is very sensitive to surface roughness), so this figure is the upper
  estimate.
* Other gases at high p·d: the air formula times the gas's relative dielectric strength
  (noble gases far below air; for SF6 in a mixture ≈ 2.5, common practice), for mixtures the
  mole-fraction weighted strength, which is a rough estimate (mixtures are not linear): its
  upper estimate is 20 % higher (:data:`ROUGH_SPREAD`).

Real gaps differ: electrode shape (field utilisation factor), surface condition, ageing,
polarity, irradiation and the rise time of the pulse (overvolted, impulse breakdown) all move
the firing voltage, often by tens of percent. Treat the figure as the static, uniform-field
self-breakdown estimate.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from benchwarden.core import gas as g
from benchwarden.core.flashover import AIR_FLASHOVER_KV_PER_MM, Margin, flashover_margin  # noqa: F401 - re-exported
from benchwarden.errors import PA_ABS
from benchwarden.units import check_positive, check_range
from benchwarden.units.constants import BAR_PA, TORR_PA

T_REF = 293.15  # K, reference temperature of the empirical formula

#: Paschen constants (A [1/(cm·Torr)], B [V/(cm·Torr)]) from Raizer (1991) Table 4.1, from memory.
PASCHEN: dict[str, tuple[float, float]] = {
    "air": (15.0, 365.0),
    "nitrogen": (12.0, 342.0),
    "carbon dioxide": (20.0, 466.0),
    "hydrogen": (5.0, 130.0),
    "helium": (3.0, 34.0),
    "neon": (4.0, 100.0),
    "argon": (12.0, 180.0),
    "krypton": (17.0, 240.0),
    "xenon": (26.0, 350.0),
}
#: Secondary emission coefficient used with the Paschen constants (common practice).
GAMMA = 0.01

#: Dielectric strength relative to air at the same density in near-uniform fields at high p·d
#: (common practice; values from memory, ±20 %).
RELATIVE_STRENGTH: dict[str, float] = {
    "air": 1.0,
    "nitrogen": 1.0,
    "oxygen": 0.9,
    "carbon dioxide": 0.9,
    "sulfur hexafluoride": 2.5,
    "hydrogen": 0.55,
    "argon": 0.2,
    "helium": 0.15,
    "neon": 0.25,
    "krypton": 0.3,
    "xenon": 0.45,
}

#: SF6's critical reduced field [kV/(cm·bar)] at 20 °C, the slope A of its effective ionisation
#: coefficient [1/kV] and the streamer constant K (Kuffel, Zaengl & Kuffel 2000; from memory).
SF6_CRITICAL_FIELD_KV_CM_BAR = 89.0
SF6_IONISATION_SLOPE_PER_KV = 27.7
SF6_STREAMER_K = 10.5
#: Upper estimate of a rough method (relative strengths, Paschen constants of other gases, mixtures):
#: 20 % above the estimate (the spread of RELATIVE_STRENGTH, common practice).
ROUGH_SPREAD = 0.20
#: Gases whose method is a smooth-electrode, uniform-field value (the upper estimate itself:
#: real electrodes fire lower).
_UPPER_METHODS = ("air", "nitrogen", "sulfur hexafluoride")


def paschen_voltage(pd_torr_cm: float, A: float, B: float, gamma: float = GAMMA) -> float:
    """Paschen's law breakdown voltage [V] at p·d [Torr·cm] (Townsend criterion).

    Returns ``inf`` left of the Paschen minimum's asymptote, where no breakdown occurs.

    Parameters
    ----------
    pd_torr_cm : Pressure × spacing, [Torr·cm]
    A : [1/(cm·Torr)]
    B : [V/(cm·Torr)]
    gamma : Secondary emission coefficient, [-]

    Returns
    -------
    float
        Breakdown voltage [V] (``inf`` where none occurs).

    References
    ----------
    Raizer, "Gas Discharge Physics" (1991), Table 4.1 (from memory).

    Examples
    --------
    >>> round(paschen_voltage(1.0, 15.0, 365.0))
    310
    """
    denom = math.log(A * pd_torr_cm) - math.log(math.log(1.0 + 1.0 / gamma))
    if denom <= 0:
        return math.inf
    return B * pd_torr_cm / denom


def paschen_minimum(A: float, B: float, gamma: float = GAMMA) -> tuple[float, float]:
    """(p·d at the minimum [Torr·cm], minimum voltage [V]) of Paschen's law:
    (pd)_min = e·ln(1 + 1/γ)/A, V_min = B·(pd)_min.

    Parameters
    ----------
    A : [1/(cm·Torr)]
    B : [V/(cm·Torr)]
    gamma : Secondary emission coefficient, [-]

    Returns
    -------
    tuple of float
        ((p·d)_min [Torr·cm], V_min [V]).

    References
    ----------
    Raizer, "Gas Discharge Physics" (1991), Table 4.1 (from memory).
    """
    pd = math.e * math.log(1.0 + 1.0 / gamma) / A
    return pd, B * pd


def air_uniform_field_kv(pd_bar_cm_20c: float) -> float:
    """Empirical breakdown voltage [kV] of air in a uniform field, p·d in bar·cm at 20 °C:
    U = 6.72·√(pd) + 24.36·pd (Kuffel, Zaengl & Kuffel 2000).

    Parameters
    ----------
    pd_bar_cm_20c : Pressure × spacing at 20 °C, [bar·cm]

    Returns
    -------
    float
        Breakdown voltage [kV].

    References
    ----------
    Kuffel, Zaengl & Kuffel, "High Voltage Engineering Fundamentals", 2nd ed. (2000).

    Examples
    --------
    >>> round(air_uniform_field_kv(1.01325), 1)   # 1 cm at 1 atm, 20 °C: about 31 kV
    31.4
    """
    return 6.72 * math.sqrt(pd_bar_cm_20c) + 24.36 * pd_bar_cm_20c


def sf6_uniform_field_kv(pd_bar_cm_20c: float) -> float:
    """Uniform-field breakdown voltage [kV] of SF6, p·d in bar·cm at 20 °C, from the streamer
    criterion: U = (E/p)_crit·pd + K/A = 89·pd + 0.38 kV (see module docstring).

    Parameters
    ----------
    pd_bar_cm_20c : Pressure × spacing at 20 °C, [bar·cm]

    Returns
    -------
    float
        Breakdown voltage [kV].

    References
    ----------
    Kuffel, Zaengl & Kuffel, "High Voltage Engineering Fundamentals", 2nd ed. (2000).
    Christophorou & Van Brunt, IEEE Trans. Dielectr. Electr. Insul. 2 (1995) 952–1003.

    Examples
    --------
    >>> [round(sf6_uniform_field_kv(pd)) for pd in (1.0, 5.0, 20.0)]   # issue 24: about 89/445/1780 kV
    [89, 445, 1780]
    """
    return SF6_CRITICAL_FIELD_KV_CM_BAR * pd_bar_cm_20c + SF6_STREAMER_K / SF6_IONISATION_SLOPE_PER_KV


def upper_spread(gas: g.Gas) -> float:
    """How far above the estimate its upper estimate lies: 0 where the method is itself a
    smooth-electrode uniform-field value (air, nitrogen, SF6), :data:`ROUGH_SPREAD` otherwise.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    float
        Relative spread of the upper estimate above the estimate [-].

    References
    ----------
    benchwarden rule (common practice for the spread of relative strengths).
    """
    pure = None if gas.is_mixture else gas.components[0][0].key
    return 0.0 if pure in _UPPER_METHODS else ROUGH_SPREAD


def relative_strength(gas: g.Gas) -> float:
    """Mole-fraction-weighted dielectric strength relative to air (rough for mixtures).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    float
        Dielectric strength relative to air [-].

    References
    ----------
    Common practice (values from memory, ±20 %).
    """
    return sum(x * RELATIVE_STRENGTH.get(c.key, 1.0) for c, x in gas.components)


#: Where Paschen's law hands over to the high-p·d rule, [bar·cm at 20 °C] (0.1 bar·cm =
#: 75 Torr·cm, the lower end of the empirical air formula's range).
PD_JOIN = 0.1
#: Upper end of the uniform-field methods' stated validity, [bar·cm at 20 °C].
PD_MAX = 100.0
_LN_LN = math.log(math.log(1.0 + 1.0 / GAMMA))


def _high_pd_kv(gas: g.Gas, pd: Any) -> Any:
    import numpy as np

    pd = np.asarray(pd, dtype=float)
    if not gas.is_mixture and gas.components[0][0].key == "sulfur hexafluoride":
        return SF6_CRITICAL_FIELD_KV_CM_BAR * pd + SF6_STREAMER_K / SF6_IONISATION_SLOPE_PER_KV
    return (6.72 * np.sqrt(np.clip(pd, 0.0, None)) + 24.36 * pd) * relative_strength(gas)


def _paschen_kv(A: float, B: float, pd_bar_cm: Any) -> Any:
    import numpy as np

    pd_torr = np.asarray(pd_bar_cm, dtype=float) * BAR_PA / TORR_PA
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = np.log(A * pd_torr) - _LN_LN
        return np.where(denom > 0, B * pd_torr / denom / 1000.0, np.inf)


def join_parameters(gas: g.Gas) -> tuple[float, float] | None:
    """(c, n) of the join between Paschen's law and the high-p·d rule, or None where the gas
    has no Paschen constants (the high-p·d rule is then used throughout).

    Below p·d_j = 0.1 bar·cm the Paschen voltage is multiplied by 1 + c·(pd/pd_j)^n with
    c = V_high(pd_j)/V_Paschen(pd_j) − 1, so the two methods meet at pd_j and Paschen's law
    is recovered towards the minimum. The exponent n ≤ 1 is chosen so that the joined curve
    keeps rising at pd_j (where c < 0 it must not exceed the Paschen curve's logarithmic slope
    × (1 + c)/(−c)); the join is an interpolation of ours between two published methods.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)

    Returns
    -------
    tuple of float or None
        (c, n) of the join, or None.

    References
    ----------
    Kuffel, Zaengl & Kuffel, "High Voltage Engineering Fundamentals", 2nd ed. (2000).
    Raizer, "Gas Discharge Physics" (1991), Table 4.1 (from memory).
    """
    pure = None if gas.is_mixture else gas.components[0][0].key
    if pure not in PASCHEN:
        return None
    A, B = PASCHEN[pure]
    v_p = float(_paschen_kv(A, B, PD_JOIN))
    v_h = float(_high_pd_kv(gas, PD_JOIN))
    c = v_h / v_p - 1.0
    if c >= 0:
        return c, 1.0
    pd_torr = PD_JOIN * BAR_PA / TORR_PA
    log_slope = 1.0 - 1.0 / (math.log(A * pd_torr) - _LN_LN)
    return c, min(1.0, 0.8 * log_slope * (1.0 + c) / -c)


def breakdown_series(gas: g.Gas, spacing_m: float, p_abs: Any, T: float = T_REF) -> Any:
    """Self-breakdown voltages [kV] for an array of absolute pressures [Pa] (numpy): the one
    implementation of the methods in the module docstring, joined continuously at
    p·d = 0.1 bar·cm (:func:`join_parameters`). ``inf`` where Paschen's law predicts no
    breakdown (left of its asymptote).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    spacing_m : Gap spacing, [m]
    p_abs : Absolute pressures, [Pa]
    T : Temperature, [K]

    Returns
    -------
    numpy.ndarray
        Breakdown voltages [kV], one per pressure.

    References
    ----------
    Kuffel, Zaengl & Kuffel, "High Voltage Engineering Fundamentals", 2nd ed. (2000).
    Raizer, "Gas Discharge Physics" (1991), Table 4.1 (from memory).
    """
    import numpy as np

    check_positive(spacing_m, "gap spacing", "m")
    p = np.asarray(p_abs, dtype=float)
    pd = p / BAR_PA * spacing_m * 100.0 * T_REF / T
    high = _high_pd_kv(gas, pd)
    join = join_parameters(gas)
    if join is None:
        return high
    c, n = join
    A, B = PASCHEN[gas.components[0][0].key]
    with np.errstate(invalid="ignore"):
        low = _paschen_kv(A, B, pd) * (1.0 + c * np.clip(pd / PD_JOIN, 0.0, 1.0) ** n)
    return np.where(pd >= PD_JOIN, high, low)


@dataclass(frozen=True)
class Breakdown:
    gas_name: str
    spacing_m: float
    pressure_abs_pa: float
    temperature_k: float
    pd_bar_cm_20c: float
    breakdown_kv: float
    within_validity: bool
    method: str
    validity: str
    #: the upper estimate of the firing voltage [kV] (flashover margins use it)
    breakdown_high_kv: float = math.nan


def breakdown(gas: g.Gas, spacing_m: float, p_abs: float, T: float = T_REF) -> Breakdown:
    """Estimated self-breakdown voltage of a uniform-field gap (see module docstring).

    The gas density enters through p·d scaled to 20 °C: (p·d)·(293.15 K / T). Above
    p·d = 100 bar·cm the methods are outside their stated validity: ``within_validity`` is
    False and the figure must not be shown as a firing voltage.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    spacing_m : Gap spacing, [m]
    p_abs : Absolute pressure, [Pa]
    T : Temperature, [K]

    Returns
    -------
    Breakdown
        Estimated and upper breakdown voltages [kV], p·d at 20 °C [bar·cm], whether it is
        within the method's validity, and the method.

    References
    ----------
    Kuffel, Zaengl & Kuffel, "High Voltage Engineering Fundamentals", 2nd ed. (2000).
    Raizer, "Gas Discharge Physics" (1991), Table 4.1 (from memory).

    Examples
    --------
    >>> b = breakdown(g.parse_gas("nitrogen"), 3e-3, 4.0e5)
    >>> round(b.breakdown_kv, 1), b.method.split(",")[0]
    (36.6, 'empirical uniform-field formula for air (Kuffel')
    """
    check_range(spacing_m, "gap spacing", 0.0, 0.5, "m", "a spark gap")
    check_positive(p_abs, "gap pressure (absolute)", PA_ABS)
    g.check_state(gas, T, p_abs)
    pd_bar_cm = p_abs / BAR_PA * spacing_m * 100.0 * T_REF / T
    kv = float(breakdown_series(gas, spacing_m, p_abs, T))
    pure = None if gas.is_mixture else gas.components[0][0].key
    if pd_bar_cm >= PD_JOIN or pure not in PASCHEN:
        if pure in ("air", "nitrogen"):
            method = "empirical uniform-field formula for air (Kuffel, Zaengl & Kuffel 2000)"
        elif pure == "sulfur hexafluoride":
            method = ("SF6 streamer criterion, 89·(p·d) + 0.38 kV ((E/p)crit ≈ 89 kV/(cm·bar); Kuffel, Zaengl & "
                      "Kuffel 2000)")
        else:
            method = ("air formula × relative dielectric strength "
                      f"{relative_strength(gas):.2f} (common practice, rough)")
        validity = "uniform field, 0.1 to ~100 bar·cm; static breakdown"
        if pure == "sulfur hexafluoride":
            validity += ("; rough above about 3 bar or with rough electrodes (SF6 then fires lower: this is the "
                         "upper estimate)")
        if pd_bar_cm < PD_JOIN:
            validity = "below 0.1 bar·cm the air formula is extrapolated: rough"
    else:
        A, B = PASCHEN[pure]
        method = (f"Paschen's law, A = {A:g}, B = {B:g} (Raizer 1991), γ = {GAMMA:g}, joined "
                  "continuously to the high-p·d rule at 0.1 bar·cm")
        validity = "uniform field, p·d below 0.1 bar·cm (75 Torr·cm); no breakdown left of the asymptote"
    within = pd_bar_cm <= PD_MAX
    if not within:
        validity = (f"p·d = {pd_bar_cm:.0f} bar·cm is beyond the ~{PD_MAX:.0f} bar·cm the methods cover: "
                    "no estimate")
    return Breakdown(gas.name, spacing_m, p_abs, T, pd_bar_cm, kv, within, method, validity,
                     kv * (1.0 + upper_spread(gas)))
