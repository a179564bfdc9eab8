"""Purging a supply's line after a cylinder change, as a workflow: plan it from the profile,
record the purge that was run (who, when, cycles or a flush, the gas it used) and say, per
supply, whether its current cylinder's line has a purge on record.

The method is :mod:`benchwarden.core.purge` (the same as ``benchwarden purge``); the
interfaces parse what a person typed and pass SI numbers here.
"""

from __future__ import annotations

import datetime as dt
import json
from dataclasses import dataclass
from typing import Literal

from benchwarden.core import purge as pg
from benchwarden.core import supply as sp
from benchwarden.errors import InputError, JournalError
from benchwarden.storage.journal import ChangeRow, Journal, PurgeRow
from benchwarden.storage.profile import Profile
from benchwarden.units import Flow
from benchwarden.units.quantities import check_text

__all__ = ["PurgePlan", "plan_purge", "record_purge", "PurgeState", "purge_states", "O2_IN_AIR"]

O2_IN_AIR = pg.O2_IN_AIR
Method = Literal["cycles", "flush"]


@dataclass(frozen=True)
class PurgePlan:
    """A purge of one supply's line: the pressure cycles, and the flush when a flow was given."""

    supply_id: str
    volume_m3: float
    high_abs_pa: float
    low_abs_pa: float
    target_fraction: float
    cycles: pg.CyclePurge
    flush: pg.Flush | None = None


def plan_purge(prof: Profile, supply_id: str, volume_m3: float, high_abs_pa: float, low_abs_pa: float,
               target_fraction: float, flush_flow: Flow | None = None) -> PurgePlan:
    """Cycles (and a flush at ``flush_flow``) that bring the line's oxygen from air to the
    target with the supply's own gas, at the profile's ambient."""
    s = prof.supply(supply_id)
    amb, T = prof.ambient_pa, prof.ambient.temperature
    if low_abs_pa >= high_abs_pa:
        raise InputError("the vent pressure must be below the fill pressure")
    c = pg.cycle_purge(s.gas, volume_m3, high_abs_pa, low_abs_pa, T, pg.O2_IN_AIR, target_fraction)
    f = None
    if flush_flow is not None:
        f = pg.flush(s.gas, volume_m3, sp.mass_flow(s.gas, flush_flow, T, amb), amb, T, pg.O2_IN_AIR,
                     target_fraction)
    return PurgePlan(supply_id, volume_m3, high_abs_pa, low_abs_pa, target_fraction, c, f)


def record_purge(journal: Journal, prof: Profile, plan: PurgePlan, method: Method, at: dt.datetime,
                 now: dt.datetime, operator: str | None = None) -> int:
    """Record that the planned purge was run (cycles or the flush) by ``operator`` at ``at``."""
    operator = check_text(operator or "", "operator", 100) or None
    if method == "flush":
        if plan.flush is None:
            raise InputError("give a flush flow to record a flush")
        cycles, litres = None, plan.flush.gas_standard_litres
    else:
        cycles, litres = plan.cycles.cycles, plan.cycles.gas_standard_litres
    details = json.dumps({"volume_m3": plan.volume_m3, "high_abs_pa": plan.high_abs_pa,
                          "low_abs_pa": plan.low_abs_pa, "target_fraction": plan.target_fraction}, sort_keys=True)
    return journal.add_purge(prof.bench.name, plan.supply_id, at.isoformat(timespec="seconds"),
                             now.isoformat(timespec="seconds"), method, cycles, litres, operator, details)


@dataclass(frozen=True)
class PurgeState:
    """A supply whose cylinder was changed, and the purge recorded since (None: none yet)."""

    supply_id: str
    change: ChangeRow
    purge: PurgeRow | None


def purge_states(journal: Journal | None, prof: Profile) -> dict[str, PurgeState]:
    """For each supply with a cylinder change in the journal: its latest change and the latest
    purge recorded after it (a journal that cannot be read gives nothing)."""
    if journal is None:
        return {}
    out: dict[str, PurgeState] = {}
    try:
        for s in prof.supplies:
            changes = journal.changes(prof.bench.name, s.id)
            if not changes:
                continue
            change = changes[-1]
            after = [p for p in journal.purges(prof.bench.name, s.id)
                     if dt.datetime.fromisoformat(p.at) >= dt.datetime.fromisoformat(change.at)]
            out[s.id] = PurgeState(s.id, change, after[-1] if after else None)
    except JournalError:
        return {}
    return out
