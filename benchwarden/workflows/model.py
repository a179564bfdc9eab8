"""The session plan's records: every supply, regulator, draw and gap of a bench, projected over
the planned session (built by :mod:`benchwarden.workflows.build`).

Method summary
--------------
* Contents and usable mass: real gas (CoolProp HEOS) at the reading and at the reserve,
  constant temperature (the reading's); liquefied gases by weight, where the pressure stays at
  the vapour pressure until the liquid is gone.
* Draws are evaluated at the regulator set point (orifice and valve flows, per-shot refresh) and
  held constant over the session, so the mass balance is exact: mass at start − draw × time =
  mass at the reserve at the time to reserve.
* Projection: supply mass falls linearly; pressure from a Z(ρ) table (see
  :class:`benchwarden.core.tables.DensityTable`); regulator outlet by the supply-pressure effect; gap
  firing voltage at that outlet (:mod:`benchwarden.core.gap`).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from benchwarden.core import gap as gp
from benchwarden.core import hazards as hz
from benchwarden.core import room as rm

if TYPE_CHECKING:  # pragma: no cover
    from benchwarden.workflows.findings import Finding

PROJECTION_POINTS = 200


@dataclass(frozen=True)
class GapPlan:
    spacing_m: float
    breakdown_start_kv: float
    breakdown_reserve_kv: float
    method: str
    validity: str
    margins_start: tuple[gp.Margin, ...]
    margins_reserve: tuple[gp.Margin, ...]
    within_validity: bool = True
    pd_bar_cm_max: float = 0.0


@dataclass(frozen=True)
class DrawPlan:
    id: str
    kind: str
    regulator_id: str
    supply_id: str
    how: str
    mass_flow_kg_s: float
    standard_flow_slpm: float
    vents_to_room: bool
    choked: bool | None
    rate_hz: float | None
    gap: GapPlan | None


@dataclass(frozen=True)
class RegulatorPlan:
    id: str
    supply_id: str
    stages: int
    inlet_abs_pa: float
    set_point_abs_pa: float
    outlet_at_reserve_abs_pa: float
    outlet_temperature_k: float
    solid_forms: bool
    liquid_forms: bool
    #: the throttle's codes (:attr:`benchwarden.core.regulator.Throttle.flags`)
    throttle_notes: tuple[str, ...]
    inlet_rating_abs_pa: float
    supply_hot_day_abs_pa: float
    effect_total: float
    #: False when the supply is at or below the set point: the regulator stands open
    regulating: bool = True
    #: the outlet pressure now: the set point, or the supply pressure when not regulating
    outlet_abs_pa: float = 0.0
    #: kelvin above the line where solid (dry ice) forms at the outlet; None for a gas without one
    dry_ice_margin_k: float | None = None


@dataclass(frozen=True)
class SupplyPlan:
    id: str
    gas_name: str
    gas_short: str
    liquefied: bool
    pressure_abs_pa: float
    temperature_k: float
    reserve_abs_pa: float
    mass_kg: float
    free_volume_m3: float
    reference_label: str
    usable_mass_kg: float
    draw_kg_s: float
    hours_to_reserve: float
    hours_band: tuple[float, float]
    reserve_at: str | None
    shots_to_reserve: float | None
    cost_per_hour: float | None
    currency: str
    fits_session: bool
    projection_hours: tuple[float, ...]
    projection_pressure_abs_pa: tuple[float, ...]
    projection_outlets_abs_pa: dict[str, tuple[float, ...]] = field(default_factory=dict)
    projection_gap_kv: dict[str, tuple[float, ...]] = field(default_factory=dict)
    #: a leak found on the current cylinder (latest hold test ``leak`` or ``likely-leak``),
    #: counted as a draw in ``draw_kg_s`` and everything projected from it [sccm, 0 °C, 101.325 kPa]
    leak_sccm: float = 0.0
    #: the state in the cylinder now: ``gas``, ``two-phase``, ``liquid-full``, ``supercritical``
    phase: str = "gas"
    #: by weight: the temperature [K] at which the fill becomes liquid-full (None: never)
    liquid_full_temperature_k: float | None = None
    #: by pressure: ∂m/∂T [kg/K] and the mass uncertainty [kg] from the temperature's
    #: standard uncertainty ``temperature_uncertainty_k`` [K]
    mass_sensitivity_kg_per_k: float | None = None
    mass_uncertainty_kg: float | None = None
    temperature_uncertainty_k: float | None = None


@dataclass(frozen=True)
class RoomCase:
    """One cylinder kept in the room, released at once: every hazard it carries."""

    supply: str
    gas_name: str
    #: the safety case: full (its fill weight if weighed, else service pressure at 15 °C)
    full_mass_kg: float
    release: rm.Release
    o2_percent_today: float
    gas_percent_today: float
    relative_density: float
    oxidiser: bool
    #: the gas's own toxicity (worst component) and flammability, full release
    toxic: hz.Toxic | None
    flammable: hz.Flammable | None


@dataclass(frozen=True)
class VentedGas:
    """One supply's gas vented into the room by its draws, by the end of the planned session (or
    at its steady state, if reached sooner)."""

    supply: str
    m3_s: float
    gas_percent: float
    toxic: hz.Toxic | None
    flammable: hz.Flammable | None


@dataclass(frozen=True)
class RoomPlan:
    volume_m3: float
    ventilation_m3_s: float
    ventilation_kind: str
    vented_m3_s: float
    leak: rm.Leak | None
    release_supply_id: str
    #: today's contents of the supply whose full release is the worst for oxygen (None: no
    #: cylinder kept in the room)
    release: rm.Release | None
    release_mixed: rm.Release | None
    notes: tuple[str, ...]
    #: the safety case for oxygen: the cylinder whose full release lowers it most
    worst_case: rm.Release | None = None
    worst_case_supply_id: str = ""
    #: every supply kept in the room, full, released together
    all_supplies: rm.Release | None = None
    #: every cylinder kept in the room, full, released at once, judged for every hazard
    cases: tuple[RoomCase, ...] = ()
    #: gas vented into the room by each supply's draws [m³/s at room conditions]
    vented_by_supply: dict[str, float] = field(default_factory=dict)
    #: each supply's vented gas judged for toxicity and flammability (in the order of the supplies)
    vented: tuple[VentedGas, ...] = ()
    #: the room's oxygen before anything escapes, vol %
    c0_percent: float = 20.95
    #: supplies whose cylinder stands outside the room (no part in a release)
    outside: tuple[str, ...] = ()

    @property
    def o2_percent_worst_case(self) -> float:
        rel = self.worst_case or self.release
        return rel.o2_percent_after_release if rel is not None else self.c0_percent


@dataclass(frozen=True)
class Plan:
    bench_name: str
    ambient_pa: float
    temperature_k: float
    session_hours: float
    start: str
    supplies: tuple[SupplyPlan, ...]
    regulators: tuple[RegulatorPlan, ...]
    draws: tuple[DrawPlan, ...]
    room: RoomPlan | None
    findings: tuple[Finding, ...]
    fits: bool
    method: str = __doc__.split("Method summary")[1].strip() if __doc__ else ""


@dataclass(frozen=True)
class Observed:
    """Actual draw of a supply fitted from readings during a session."""

    supply_id: str
    n: int
    draw_kg_s: float
    draw_uncertainty_kg_s: float
    planned_kg_s: float
    faster_than_planned: bool
    mass_now_kg: float
    hours_to_reserve: float
    reserve_at: str | None
    method: str
    fit_at: tuple[str, ...] = ()
    fit_pressure_abs_pa: tuple[float, ...] = ()
    #: the draw is resolved beyond its expanded uncertainty (only then does it project a reserve)
    resolved: bool = True


class Memo:
    """Results of pure property computations kept by one caller between plans (the app keeps one
    per bench): the same inputs give the same result, so a refresh with nothing changed repeats
    no mixture flash. Bounded: cleared when it grows past ``limit`` entries."""

    def __init__(self, limit: int = 2000) -> None:
        self.limit = limit
        self.values: dict[tuple[Any, ...], Any] = {}
        #: figures derived from a bench's record, per (journal, bench, supply, what): (inputs,
        #: value), and per (journal, bench) the newest event they account for (see
        #: :func:`benchwarden.workflows.kept.kept_figure`); one entry per supply and figure
        self.kept: dict[tuple[str, str, str, str], tuple[Any, Any]] = {}
        self.seen: dict[tuple[str, str], int] = {}
        #: what a figure was last computed from, per (journal, bench, supply, what), for a figure
        #: that itself reads what changed since (the consumption's window of readings)
        self.windows: dict[tuple[str, str, str, str], tuple[Any, Any]] = {}

    def get(self, key: tuple[Any, ...], fn: Callable[..., Any], *args: Any, **kw: Any) -> Any:
        if key not in self.values:
            if len(self.values) >= self.limit:
                self.values.clear()
            self.values[key] = fn(*args, **kw)
        return self.values[key]


def memo_get(memo: Memo | None, key: tuple[Any, ...], fn: Callable[..., Any], *args: Any, **kw: Any) -> Any:
    """``fn(*args, **kw)``, kept in ``memo`` under ``key`` when there is one."""
    return memo.get(key, fn, *args, **kw) if memo is not None else fn(*args, **kw)
