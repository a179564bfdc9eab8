"""The ``room`` tool's cases: a sudden release or a continuous leak of one gas into one room,
judged for each hazard the gas carries (oxygen, its own toxicity, flammability).

A release is judged against short-term criteria (a peak, not a shift average); a continuous
leak against the 8-hour limit as well (see :mod:`benchwarden.core.hazards`). With a finite
source (a cylinder that empties) the lowest oxygen and when it happens lead, and every hazard is
judged at that lowest point.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from benchwarden.core import gas as g
from benchwarden.core import hazards as hz
from benchwarden.core import room as rm
from benchwarden.core import supply
from benchwarden.errors import InputError
from benchwarden.units import Flow
from benchwarden.units.quantities import Amount
from benchwarden.workflows.findings_room import (
    ASSUMED_HEIGHT_M,
    FLOOR_LAYER_M,
    POOLING_RELATIVE_DENSITY,
)

__all__ = ["ReleaseCheck", "LeakCheck", "release_check", "leak_check"]


@dataclass(frozen=True)
class ReleaseCheck:
    gas: g.Gas
    release: rm.Release
    toxic: hz.Toxic | None
    flammable: hz.Flammable | None
    lead: Literal["toxic", "oxygen"]
    stratification: str
    #: a dense gas held in the floor layer (see :mod:`benchwarden.workflows.findings_room`)
    floor: rm.Release | None = None


@dataclass(frozen=True)
class LeakCheck:
    gas: g.Gas
    leak: rm.Leak
    finite: rm.FiniteLeak | None
    #: lowest oxygen: the minimum with a finite source, else the steady state
    o2_percent_lowest: float
    gas_percent_highest: float
    toxic: hz.Toxic | None
    flammable: hz.Flammable | None
    lead: Literal["toxic", "oxygen"]
    stratification: str



class ContentsUnknown(InputError):
    """A supply's pressure gives no contents (liquid in the cylinder, or liquid-full); the
    interface words it from :attr:`contents` (:func:`benchwarden.render.supply.contents_refusal`)."""

    def __init__(self, contents: supply.Contents) -> None:
        self.contents = contents
        super().__init__(f"the pressure of {contents.gas_name} gives no contents here ({contents.phase}): "
                         "weigh the cylinder")


def release_check(gas: g.Gas, room_volume_m3: float, amount: Amount, model: str, c0_percent: float,
                  T: float, p_room: float) -> ReleaseCheck:
    """A sudden release of ``amount`` (a mass or a volume at room conditions) judged for oxygen
    (enrichment for an oxidiser), toxicity and flammability."""
    vg = rm.release_volume(gas, amount, T, p_room)
    r = rm.release(room_volume_m3, vg, model, c0_percent, hz.gas_o2_percent(gas))
    tox = hz.toxic(gas, r.gas_percent_after_release)
    floor = None
    if gas.relative_density_to_air >= POOLING_RELATIVE_DENSITY:
        layer = room_volume_m3 * FLOOR_LAYER_M / ASSUMED_HEIGHT_M
        floor = rm.release(layer, vg, "displacement", c0_percent, hz.gas_o2_percent(gas))
    # a release is judged on short-term limits: below the STEL its toxicity does not lead
    short = tox if tox is not None and tox.rank >= 2 else None
    return ReleaseCheck(gas, r, tox, hz.flammable(gas, r.gas_percent_after_release),
                        hz.lead_hazard(r.o2_percent_after_release, short), rm.stratification_note(gas), floor)


def leak_check(gas: g.Gas, room_volume_m3: float, flow: Flow, ventilation_m3_s: float, kind: str,
               c0_percent: float, T: float, p_room: float, supply_volume_m3: float | None = None,
               supply_pressure_abs_pa: float | None = None) -> LeakCheck:
    """A continuous leak, optionally from a cylinder of ``supply_volume_m3`` at
    ``supply_pressure_abs_pa`` that stops when it is empty (real-gas contents, CoolProp HEOS)."""
    R = rm.leak_volume_flow(gas, flow, T, p_room)
    lk = rm.leak_o2(room_volume_m3, R, ventilation_m3_s, kind, c0_percent)
    fin = None
    if supply_volume_m3 is not None and supply_pressure_abs_pa is not None:
        c = supply.contents(gas, supply_volume_m3, supply_pressure_abs_pa, T)
        if c.mass_kg is None:
            raise ContentsUnknown(c)
        fin = rm.finite_leak(lk, c.mass_kg / g.density(gas, T, p_room))
    lowest = fin.o2_percent_minimum if fin is not None else lk.o2_percent_steady
    gas_pct = max(0.0, 100.0 * (1.0 - lowest / c0_percent))
    tox = hz.toxic(gas, gas_pct)
    return LeakCheck(gas, lk, fin, lowest, gas_pct, tox, hz.flammable(gas, gas_pct), hz.lead_hazard(lowest, tox),
                     rm.stratification_note(gas))
