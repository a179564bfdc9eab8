"""Hold tests: a leak rate from an idle pressure drop, temperature-compensated, with its
uncertainty, or the honest answer that the gauge cannot tell.

Method
------
Pressure-change (pressure-decay) method as in EN 13184 and ASTM E2930: the gas mass held in a
known volume is computed at the start and the end of the hold from pressure and temperature,
here with the real-gas density (CoolProp HEOS) instead of the ideal gas law, so a temperature
change is compensated: m = ρ(T, p)·V, leak = (m1 − m2)/Δt.

Uncertainty (GUM, JCGM 100:2008): the gauge's maximum permitted error from its accuracy class
(EN 837-1: class = maximum error in % of the span) is taken as a rectangular distribution,
u = MPE/√3; reading resolution as u = r/(2√3); temperature readings u_T each. The two readings
are taken as uncorrelated, which is conservative for one gauge (its zero error cancels in a
difference, its hysteresis and non-linearity do not). Sensitivities ∂m/∂p, ∂m/∂T come from the
equation of state. The verdict uses an expanded uncertainty U = 2u (about 95 %).

Verdict (:func:`verdict_of`, one set everywhere): ``pressure-rose`` when the held mass *rose* by
more than U (a sealed volume cannot gain gas: a cylinder change not recorded, warming not
captured, or a wrong reading); ``leak`` when the rate exceeds U; ``likely-leak`` when the rate is
above the target and above its standard uncertainty u but not above U; ``no-leak-resolved`` when
even rate + U is below the target leak rate (so a leak of that size would have shown);
otherwise ``inconclusive``.
The ASTM E2930 rules of thumb are reported: the pressure resolution should be ten times and the
accuracy four times finer than the pressure change the target leak causes over the hold.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from benchwarden.core import gas as g
from benchwarden.core.leakrate import (  # noqa: F401 - re-exported: leak rates in their units
    P_STD,
    T_STD,
    kg_s_from_sccm,
    line_volume,
    pa_m3_s_from_sccm,
    sccm_from_kg_s,
    standard_density,
)
from benchwarden.core.leakrate import target_sccm as _target_sccm
from benchwarden.core.tables import DensityTable
from benchwarden.core.uncertainty import (  # noqa: F401 - re-exported: hold tests' measurement model
    K_EXPANDED,
    SQRT3,
    U_T_DEFAULT,
    U_T_UNMEASURED,
    VERDICTS,
    GaugeSpec,
    MassFit,
    fit_mass_loss,
    mass_change_uncertainty,
    mass_sensitivities,
    poly_lsq,
    verdict_of,
)
from benchwarden.errors import PA_GAUGE, InputError, RangeError
from benchwarden.units import (
    check_range,
)
from benchwarden.units.constants import ATM_PA, SCCM_PER_M3_S, SECONDS_PER_DAY, T0_K

#: A target leak rate as sccm (re-exported from :mod:`benchwarden.core.leakrate`).
target_sccm = _target_sccm

#: Largest held volume of a hold test [m³].
MAX_HELD_M3 = 100.0

@dataclass(frozen=True)
class HoldResult:
    gas_name: str
    volume_m3: float
    duration_s: float
    start_abs_pa: float
    end_abs_pa: float
    start_temperature_k: float
    end_temperature_k: float
    temperatures_given: bool
    mass_start_kg: float
    mass_end_kg: float
    mass_loss_kg: float
    mass_loss_uncertainty_kg: float
    leak_rate_kg_s: float
    leak_rate_uncertainty_kg_s: float
    leak_rate_sccm: float
    leak_rate_uncertainty_sccm: float
    leak_rate_pa_m3_s: float
    leak_rate_mbar_l_s: float
    kg_per_day: float
    percent_per_day: float
    pressure_fall_per_day_pa: float
    smallest_resolvable_sccm: float
    target_sccm: float
    verdict: str
    hours_to_reserve: float | None
    hours_to_empty: float
    hold_needed_h: float
    astm_resolution_ok: bool | None
    astm_accuracy_ok: bool | None
    notes: tuple[str, ...]
    method: str
    #: pressure change the target leak causes over this hold [Pa] (ASTM E2930 rules compare the
    #: gauge's resolution and accuracy with it)
    target_pressure_change_pa: float = math.nan
    #: how the two readings' gauge errors were budgeted: ``uncorrelated`` (no repeatability
    #: declared: each reading carries the full class error), ``repeatability`` (the maker's
    #: figure, used for the difference), or ``none`` (no gauge given)
    pressure_budget: str = "uncorrelated"


def _common(gas: g.Gas, V: float, duration: float, p1: float, p2: float, T1: float, T2: float,
            mdot: float, u_mdot: float, u_dm: float, m1: float, m2: float, dmdp_end: float,
            gauge: GaugeSpec | None, target_sccm: float | None, reserve_abs: float | None,
            ambient: float, temps_given: bool, notes: list[str], method: str) -> HoldResult:
    rho_std = standard_density(gas)
    sccm = mdot / rho_std * SCCM_PER_M3_S
    u_sccm = u_mdot / rho_std * SCCM_PER_M3_S
    if target_sccm is None:
        # default target: a leak losing 1 % of the contents per day, but not below 1 sccm
        # (benchwarden defaults; give --target for your own criterion)
        target_sccm = max(0.01 * m1 / SECONDS_PER_DAY / rho_std * SCCM_PER_M3_S, 1.0)
        notes.append(f"target leak rate not given: using 1 % of the contents per day, at least 1 sccm "
                     f"= {target_sccm:.3g} sccm")
    U = K_EXPANDED * u_sccm
    verdict = verdict_of(sccm, u_sccm, target_sccm)
    # ASTM E2930 rules of thumb against the pressure change of the target leak over the hold
    res_ok = acc_ok = None
    target_kg_s = target_sccm / SCCM_PER_M3_S * rho_std
    dp_target = target_kg_s * duration / dmdp_end if dmdp_end > 0 else math.inf
    if gauge is not None:
        res = gauge.resolution_pa if gauge.resolution_pa is not None else gauge.mpe_pa
        res_ok = res * 10.0 <= dp_target
        acc_ok = gauge.mpe_pa * 4.0 <= dp_target
    if p1 > 0 and (p1 - p2) / (p1 - ambient if p1 > ambient else p1) > 0.1:
        notes.append("the drop is more than 10 % of the start pressure: the decay is not linear; "
                     "the rate is an average over the hold")
    # hold time needed for U to fall to half the target (t scales as 1/t for a fixed u(Δm))
    hold_needed = 2.0 * K_EXPANDED * u_dm / target_kg_s / 3600.0 if target_kg_s > 0 else math.inf
    if gauge is not None:
        res = gauge.resolution_pa if gauge.resolution_pa is not None else gauge.mpe_pa
        dpdt_target = target_kg_s / dmdp_end
        hold_needed = max(hold_needed, 10.0 * res / dpdt_target / 3600.0)
    h_res = None
    if reserve_abs is not None and mdot > 0:
        h_res = max(0.0, (m2 - g.density(gas, T2, reserve_abs) * V) / mdot / 3600.0)
    h_empty = (m2 - g.density(gas, T2, ambient) * V) / mdot / 3600.0 if mdot > 0 else math.inf
    return HoldResult(
        gas.name, V, duration, p1, p2, T1, T2, temps_given, m1, m2, m1 - m2, u_dm, mdot, u_mdot, sccm, u_sccm,
        pa_m3_s_from_sccm(sccm), pa_m3_s_from_sccm(sccm) * 10.0, mdot * SECONDS_PER_DAY,
        100.0 * mdot * SECONDS_PER_DAY / m1 if m1 > 0 else math.nan, mdot / dmdp_end * SECONDS_PER_DAY if dmdp_end > 0 else math.nan,
        U, target_sccm, verdict, h_res, max(0.0, h_empty), hold_needed, res_ok, acc_ok, tuple(notes), method,
        dp_target, gauge.budget if gauge is not None else "none")


def hold_two_readings(
    gas: g.Gas, volume_m3: float, p_start: float, p_end: float, duration_s: float,
    T_start: float | None = None, T_end: float | None = None, gauge: GaugeSpec | None = None,
    u_T: float = U_T_DEFAULT, target_sccm: float | None = None, reserve_abs: float | None = None,
    ambient_pa: float = ATM_PA,
) -> HoldResult:
    """Leak rate from two readings (see module docstring for method and uncertainty).

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    volume_m3 : Held volume, [m³]
    p_start : Start pressure, absolute, [Pa]
    p_end : End pressure, absolute, [Pa]
    duration_s : Hold duration, [s]
    T_start : Start temperature, [K], or None (unchanged, assumed)
    T_end : End temperature, [K], or None
    gauge : the gauge the readings were taken with (range, class, resolution), or None
    u_T : Standard uncertainty of a temperature reading, [K]
    target_sccm : Target leak rate the test must resolve, [sccm], or None (1 % of the contents per day)
    reserve_abs : The supply's reserve, absolute, [Pa], or None
    ambient_pa : Ambient pressure the gauge reads against, [Pa]

    Returns
    -------
    HoldResult
        Mass loss [kg] and leak rate [kg/s, sccm, Pa·m³/s] with their standard uncertainties, the
        verdict, the smallest resolvable leak [sccm], times to empty and to the reserve [h] and notes.

    References
    ----------
    EN 13184 (pressure-change method) and ASTM E2930 (pressure decay); JCGM 100:2008 (GUM)
    for the uncertainty, EN 837-1 gauge accuracy classes; CoolProp HEOS (Bell et al., Ind. Eng.
    Chem. Res. 53 (2014) 2498–2508).

    Examples
    --------
    A 10 L volume at 5 bar(a) losing 0.05 bar over 24 h at constant 20 °C; ideal-gas hand
    calculation (EN 13184 pressure-change method): Δm = Δp·V·M/(R·T) = 0.57 g.

    >>> r = hold_two_readings(g.parse_gas("nitrogen"), 0.010, 5.0e5, 4.95e5, 86400, 293.15, 293.15)
    >>> round(r.mass_loss_kg * 1000, 3), round(r.leak_rate_sccm, 3)
    (0.576, 0.32)
    """
    check_range(volume_m3, "held volume", 0.0, MAX_HELD_M3, "m³", "cylinders, lines and a vessel or two")
    if target_sccm is not None:
        check_range(target_sccm, "target leak rate", 0.0, 1e9, "sccm")
    if not math.isfinite(duration_s) or duration_s <= 0:
        raise RangeError(what="hold duration", value=duration_s, lo=0.0, lo_open=True, unit="s")
    for p, what in ((p_start, "start pressure"), (p_end, "end pressure")):
        if gauge is not None and p - ambient_pa > gauge.span_pa * 1.0001:
            raise RangeError(what=what, value=p - ambient_pa, hi=gauge.span_pa, unit=PA_GAUGE,
                             hi_name="the gauge range")
    notes: list[str] = []
    temps_given = T_start is not None and T_end is not None
    if not temps_given:
        T = T_start or T_end or 293.15
        T_start = T_end = T
        notes.append(f"no temperatures given: assumed unchanged at {T - T0_K:.1f} °C; a 1 K change at "
                     "high pressure moves the gauge as much as a real leak — give --t-start and --t-end")
    assert T_start is not None and T_end is not None
    m1, dm1p, dm1T = mass_sensitivities(gas, volume_m3, T_start, p_start)
    m2, dm2p, dm2T = mass_sensitivities(gas, volume_m3, T_end, p_end)
    u_p = gauge.u_difference_pa if gauge is not None else 0.0
    if gauge is None:
        notes.append("no gauge range and class given: pressure uncertainty not included")
    u_T_eff = u_T if temps_given else max(u_T, U_T_UNMEASURED)
    u_dm = mass_change_uncertainty(dm1p, dm2p, dm1T, dm2T, u_p, u_T_eff)
    mdot = (m1 - m2) / duration_s
    return _common(gas, volume_m3, duration_s, p_start, p_end, T_start, T_end, mdot, u_dm / duration_s, u_dm,
                   m1, m2, dm2p, gauge, target_sccm, reserve_abs, ambient_pa, temps_given, notes,
                   "pressure-change method (EN 13184 / ASTM E2930), real gas (CoolProp HEOS), GUM uncertainty")


# ----------------------------------------------------------------------------- logged series


@dataclass(frozen=True, eq=False)
class HoldLog:
    """A logged series: times [s], absolute pressures [Pa] and temperatures [K] (or None), each
    held as a read-only float array (a sequence given is converted once)."""

    t_s: Any
    p_abs_pa: Any
    T_k: Any | None

    def __post_init__(self) -> None:
        for name in ("t_s", "p_abs_pa", "T_k"):
            v = getattr(self, name)
            if v is not None:
                object.__setattr__(self, name, _frozen_array(v))

    def __eq__(self, other: object) -> bool:
        import numpy as np

        if not isinstance(other, HoldLog):
            return NotImplemented
        return all((a is None and b is None) or (a is not None and b is not None and np.array_equal(a, b))
                   for a, b in ((self.t_s, other.t_s), (self.p_abs_pa, other.p_abs_pa), (self.T_k, other.T_k)))

    __hash__ = None  # type: ignore[assignment]  # arrays: equal by value, not hashable


def _frozen_array(values: Any) -> Any:
    import numpy as np

    a = np.array(values, dtype=float)  # a copy: the caller's array stays the caller's
    a.flags.writeable = False
    return a


@dataclass(frozen=True, eq=False)
class LogFit:
    result: HoldResult
    n: int
    slope_kg_s: float
    slope_se_kg_s: float
    residual_rms_kg: float
    residual_max_kg: float
    residual_rms_pa: float
    curvature_significant: bool
    #: times [s], held masses [kg] and the fitted line [kg] at each reading (float arrays)
    t_s: Any
    mass_kg: Any
    fit_kg: Any


def _curved(tc: Any, m: Any, fit: Any, p: Any, u_p: float | None, dm2p: float, slope: float, u_rate: float) -> bool:
    """Whether a quadratic term is significant (3 standard errors) and matters: its departure
    from the line exceeds what the gauge resolves (``u_p`` [Pa]; None: the log's smallest
    pressure step), or the curve's end slopes would give another verdict."""
    import numpy as np

    c2, inv, rss = poly_lsq(tc, m, 2)
    var2 = float(inv[0, 0]) * rss / (len(tc) - 3)  # numpy.polyfit(cov=True)'s scaling
    significant = var2 > 0 and abs(c2[0]) > 3.0 * math.sqrt(var2)
    # how far the curve departs from the line over the log, as mass [kg]
    departure = float(np.max(np.abs(np.polyval(c2, tc) - fit)))
    # what the gauge can resolve, as mass: one reading's uncertainty, or without a gauge
    # the smallest step between the log's own distinct pressures
    if u_p is not None:
        resolvable_pa = u_p
    else:  # the log's distinct pressures only without a gauge (a sort of the whole log)
        steps = np.diff(np.unique(p))
        resolvable_pa = float(steps.min()) if steps.size else 0.0
    resolvable = dm2p * resolvable_pa
    # the end slopes of the curve against the fitted rate: does it change the verdict?
    slope_ends = [-(2.0 * c2[0] * x + c2[1]) for x in (tc[0], tc[-1])]
    U = K_EXPANDED * u_rate
    verdict_changes = any((s > U) != (slope > U) for s in slope_ends)
    return bool(significant and (departure > resolvable or verdict_changes))


def hold_from_log(gas: g.Gas, volume_m3: float, log: HoldLog, gauge: GaugeSpec | None = None,
                  T_default: float = 293.15, u_T: float = U_T_DEFAULT, target_sccm: float | None = None,
                  reserve_abs: float | None = None, ambient_pa: float = ATM_PA) -> LogFit:
    """Fit the held mass against time by least squares: the slope is the leak rate, its standard
    error the scatter part of the uncertainty, the budget of :func:`hold_two_readings` (first and
    last reading) over the span added in quadrature. Masses come from a Z(p, T) table
    (:class:`~benchwarden.core.tables.DensityTable`, error < 1e-4). A quadratic term significant
    at 3 standard errors flags a curved decay (a temperature swing, a step, a changing leak) only
    where its departure from the line exceeds what the gauge resolves, or the curve's end slopes
    would give another verdict.

    Parameters
    ----------
    gas : the gas (pure or a mixture by mole fraction)
    volume_m3 : Held volume, [m³]
    log : the logged readings (times [s], absolute pressures [Pa], temperatures [K])
    T_default : Temperature taken where the log has none, [K]
    gauge, u_T, target_sccm, reserve_abs, ambient_pa : as in :func:`hold_two_readings` ([K], [sccm], [Pa])

    Returns
    -------
    LogFit
        The hold test (as :func:`hold_two_readings`), the fit's slope and standard error [kg/s],
        its residuals [kg, Pa] and whether a curvature is significant.

    References
    ----------
    EN 13184 (pressure-change method) and ASTM E2930 (pressure decay); JCGM 100:2008 (GUM)
    for the uncertainty, EN 837-1 gauge accuracy classes; CoolProp HEOS (Bell et al., Ind. Eng.
    Chem. Res. 53 (2014) 2498–2508); least squares with its covariance (:func:`~benchwarden.core.uncertainty.poly_lsq`).
    """
    import numpy as np

    check_range(volume_m3, "held volume", 0.0, MAX_HELD_M3, "m³", "cylinders, lines and a vessel or two")
    if target_sccm is not None:
        check_range(target_sccm, "target leak rate", 0.0, 1e9, "sccm")
    t = np.asarray(log.t_s)
    p = np.asarray(log.p_abs_pa)
    n = len(t)
    if n < 3:
        raise InputError("a log fit needs at least three readings")
    if gauge is not None and float(np.max(p)) - ambient_pa > gauge.span_pa * 1.0001:
        i = int(np.argmax(p))
        raise RangeError(what="pressure", value=float(p[i]) - ambient_pa, hi=gauge.span_pa, unit=PA_GAUGE,
                         hi_name="the gauge range", where=f"log row {i + 2}")
    T = np.asarray(log.T_k) if log.T_k is not None else np.full(n, T_default)
    table = DensityTable(gas, float(p.min()) * 0.999, float(p.max()) * 1.001, float(T.min()), float(T.max()) + 1e-6)
    m = table.density(p, T) * volume_m3
    notes: list[str] = []
    # the one fit and budget (first and last reading, spread over the span, ⊕ the fit's scatter)
    u_p = gauge.u_difference_pa if gauge is not None else 0.0
    if gauge is None:
        notes.append("no gauge range and class given: pressure uncertainty not included")
    if log.T_k is None:
        notes.append(f"no temperature column: assumed constant {T_default - T0_K:.1f} °C")
    u_T_eff = u_T if log.T_k is not None else max(u_T, U_T_UNMEASURED)
    mf = fit_mass_loss(gas, volume_m3, t, p, T, m, u_p, u_T_eff)
    tc = t - mf.t_mean_s
    coef = np.array(mf.coef)
    fit = np.polyval(coef, tc)
    resid = m - fit
    slope, se, u_rate, dm2p, span = mf.rate_kg_s, mf.se_kg_s, mf.u_kg_s, mf.dmdp_last, mf.span_s
    curved = n >= 5 and _curved(tc, m, fit, p, u_p if gauge is not None else None, dm2p, slope, u_rate)
    rms = float(np.sqrt(np.mean(resid**2)))
    res = _common(gas, volume_m3, span, float(p[0]), float(p[-1]), float(T[0]), float(T[-1]), slope, u_rate,
                  u_rate * span, float(m[0]), float(m[-1]), dm2p, gauge, target_sccm, reserve_abs, ambient_pa,
                  log.T_k is not None, notes,
                  "least-squares fit of real-gas mass vs time (EN 13184 / ASTM E2930 pressure decay), GUM uncertainty")
    return LogFit(res, n, slope, se, rms, float(np.max(np.abs(resid))), rms / dm2p if dm2p > 0 else math.nan, curved,
                  t, m, fit)


GUIDANCE: tuple[str, ...] = (
    "High-pressure side: close the cylinder valve with the regulator pressurised and its outlet closed; "
    "a falling inlet gauge means the valve spindle, the regulator inlet connection or the regulator seat.",
    "Regulator seat: cylinder valve open, outlet valve closed; a rising outlet gauge (creep) means the seat leaks.",
    "Low-pressure side: pressurise the line, close the regulator and the outlet valve; a falling line gauge "
    "means fittings, hoses or the consumer.",
    "Find the leak with leak-detection solution on every fitting (common practice); bubbles show where.",
    "Never tighten a fitting under pressure: close the cylinder, vent the line, then work on it.",
    "A leaking cylinder valve is the supplier's to fix: close it, label the cylinder and move it outdoors.",
)
