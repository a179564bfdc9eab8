"""A bench with the journal's state: its plan, its last hold test and every finding.

The command line (``plan``, ``checklist``), the app's overview and the checklist all ask
:func:`assess` for the same :class:`Assessment`, so they show the same findings.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from collections.abc import Mapping
from dataclasses import dataclass, field

from benchwarden.core import gas as g
from benchwarden.core import room as rm
from benchwarden.core.hold import kg_s_from_sccm
from benchwarden.errors import BenchwardenError, JournalError
from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import Profile
from benchwarden.units import Flow
from benchwarden.units.constants import SECONDS_PER_DAY
from benchwarden.workflows.build import build_plan, full_mass, largest_supply
from benchwarden.workflows.cylinder import journal_profile
from benchwarden.workflows.findings import Finding, life_findings, live_findings, ranked
from benchwarden.workflows.holds import (
    LastHold,
    hold_finding,
    last_hold_test,
    reading_step_pa,
    standing_leaks,
)
from benchwarden.workflows.idledrops import record_idle_drops
from benchwarden.workflows.model import Memo, Observed, Plan, memo_get
from benchwarden.workflows.orders import Consumption, OrderBy, consumption, order_by
from benchwarden.workflows.purges import PurgeState, purge_states

__all__ = ["Assessment", "assess", "findings_of", "journal_state", "largest_supply", "leak_volume_flow"]


def leak_volume_flow(prof: Profile, flow: Flow) -> float:
    """An extra leak [m³/s at room conditions] of the largest supply's gas into the room."""
    return rm.leak_volume_flow(largest_supply(prof).gas, flow, prof.ambient.temperature, prof.ambient_pa)


@dataclass(frozen=True)
class Assessment:
    """A bench at one moment: its plan, its latest hold test, and all findings ranked."""

    plan: Plan
    last_hold: LastHold | None
    findings: tuple[Finding, ...]
    orders: Mapping[str, OrderBy] = field(default_factory=dict)
    #: supplies whose cylinder was changed, with the purge recorded since (checklist item)
    purges: Mapping[str, PurgeState] = field(default_factory=dict)
    #: per supply, the pressure step its reading means [Pa] (displays round to it)
    steps: Mapping[str, float | None] = field(default_factory=dict)


def findings_of(plan: Plan, last_hold: LastHold | None, observed: Mapping[str, Observed] | None = None,
                session_end: dt.datetime | None = None, running: bool = False) -> tuple[Finding, ...]:
    """Every finding of a bench: the plan's, the hold test's and, in a running session, the live ones."""
    out = list(plan.findings) + hold_finding(last_hold)
    if running:
        out += live_findings(plan, observed or {}, session_end)
    return tuple(ranked(out))


def assess(prof: Profile, journal: Journal | None = None, now: dt.datetime | None = None,
           extra_leak_m3_s: float = 0.0, start_at: dt.datetime | None = None,
           observed: Mapping[str, Observed] | None = None, session_end: dt.datetime | None = None,
           running: bool = False) -> Assessment:
    """Plan the bench as the journal records it (each supply's latest reading or fill, see
    `benchwarden.workflows.cylinder.journal_profile`), turn new idle drops into hold tests,
    and judge it with the latest hold test."""
    now = now or dt.datetime.now().astimezone().replace(second=0, microsecond=0)
    prof = journal_state(prof, journal, now)
    plan = build_plan(prof, now=now, extra_leak_m3_s=extra_leak_m3_s, start_at=start_at,
                      leaks_sccm=standing_leaks(journal, prof.bench.name))
    last = last_hold_test(journal, prof.bench.name, now)
    orders = orders_of(prof, plan, journal, now)
    extra = life_findings(prof, now.date(), {k: (o.order_by, o.days_of_gas) for k, o in orders.items()})
    return Assessment(plan, last, tuple(ranked(list(findings_of(plan, last, observed, session_end, running))
                                               + extra)), orders, purge_states(journal, prof),
                      reading_steps(prof))


def reading_steps(prof: Profile, live: Mapping[str, bool] | None = None) -> dict[str, float | None]:
    """Per supply, the pressure step its reading means (its transducer's where ``live`` says the
    live sample is the state, else its gauge's; see :func:`holds.reading_step_pa`)."""
    return {s.id: reading_step_pa(s, live=bool((live or {}).get(s.id))) for s in prof.supplies}


def orders_of(prof: Profile, plan: Plan, journal: Journal | None, now: dt.datetime,
              memo: Memo | None = None) -> dict[str, OrderBy]:
    """For every supply: the journal's consumption and the date to order the next cylinder."""
    out: dict[str, OrderBy] = {}
    for sp in plan.supplies:
        s = prof.supply(sp.id)
        try:
            reserve_kg = memo_get(memo, ("rho", s.gas.key, sp.temperature_k, sp.reserve_abs_pa), g.density, s.gas,
                                  sp.temperature_k, sp.reserve_abs_pa) * s.water_volume
        except BenchwardenError:
            reserve_kg = 0.0
        full_usable = max(0.0, full_mass(prof, s, memo) - reserve_kg)
        cons = consumption(journal, prof, sp.id, memo)
        if sp.leak_sccm > 0:  # a found leak is consumption too (the readings may predate it)
            leak_week = kg_s_from_sccm(s.gas, sp.leak_sccm) * 7 * SECONDS_PER_DAY
            cons = (Consumption(sp.id, leak_week, 0.0, 0, 0.0) if cons is None
                    else dataclasses.replace(cons, kg_per_week=max(cons.kg_per_week, leak_week)))
        out[sp.id] = order_by(prof, sp.usable_mass_kg, cons, sp.id, now, full_usable)
    return out


def journal_state(prof: Profile, journal: Journal | None, now: dt.datetime, memo: Memo | None = None) -> Profile:
    """The profile as the journal records it, after storing any new idle-drop hold tests (a
    journal that cannot be written still gives its state); ``memo``: the app's, which keeps
    what each supply's record gives until it changes."""
    jprof = journal_profile(prof, journal, memo)
    if journal is not None:
        try:
            record_idle_drops(journal, jprof, now, memo)
        except JournalError:
            pass
    return jprof
