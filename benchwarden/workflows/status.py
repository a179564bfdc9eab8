"""Where each supply of a bench stands, as one document: what ``status --json`` prints, what the
app's record shows and what a bench ships to the lab as its snapshot.

SI numbers and codes only (findings as codes, severities and values): the interfaces word them.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import asdict, dataclass
from typing import Any, cast

from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import Profile
from benchwarden.workflows import cylinder as cy
from benchwarden.workflows import idledrops, orders
from benchwarden.workflows.bench import Assessment, assess
from benchwarden.workflows.holds import judged_hold_tests
from benchwarden.workflows.watch import last_bad_sample, leak_watch_recorded

__all__ = ["StatusDocument", "status_document", "RECENT_ALARMS_S", "seconds"]

#: The status lists the alarms the journal recorded this far back [s].
RECENT_ALARMS_S = 86400.0


@dataclass(frozen=True)
class StatusDocument:
    """A bench now: its assessment, each supply's state (a JSON-ready dict, SI), the recent
    alarms, and the latest hold test that counts."""

    assessment: Assessment
    supplies: list[dict[str, Any]]
    alarms: list[dict[str, str]]
    last_hold_test: dict[str, Any] | None


def _order_date(o: orders.OrderBy | None) -> str | None:
    return o.order_by.date().isoformat() if o is not None and o.order_by is not None else None


def _cons(o: orders.OrderBy | None) -> float | None:
    return o.consumption.kg_per_week if o is not None and o.consumption is not None else None


def _needed(j: Journal | None, prof: Profile, sid: str, now: dt.datetime) -> float | None:
    """How long a hold would need, when the latest idle drop was too short to tell [s]."""
    r = idledrops.unresolved_idle_drop(j, prof, sid, now)
    return seconds(r.hold_needed_h) if r is not None else None


def seconds(hours: float) -> float | None:
    return hours * 3600.0 if math.isfinite(hours) else None


def _live(j: Journal | None, prof: Profile, sid: str, now: dt.datetime, amb: float) -> dict[str, Any] | None:
    """The supply's latest live sample and leak watch (None without samples); a resolved leak
    watch is stored as a hold test, as the app and ``watch`` do."""
    sample = cy.latest_state(j, prof, sid, now.tzinfo)
    if sample is None:
        return None
    lw = leak_watch_recorded(j, prof, sid, now)
    return {"at": sample.at.isoformat(), "pressure_abs_pa": sample.pressure_abs_pa,
            "pressure_gauge_pa": sample.pressure_abs_pa - amb, "temperature_k": sample.temperature_k,
            "current": cy.live_is_state(j, prof, sid, sample),
            "leak_verdict": lw.verdict if lw else None, "leak_rate_sccm": lw.leak_rate_sccm if lw else None,
            "leak_rate_uncertainty_sccm": lw.leak_rate_uncertainty_sccm if lw else None,
            "leak_target_sccm": lw.target_sccm if lw else None, "leak_since": lw.since.isoformat() if lw else None,
            "leak_samples": lw.n if lw else None}


def status_document(prof: Profile, j: Journal | None, now: dt.datetime) -> StatusDocument:
    """The status of a bench from its journal (None: the profile alone) at ``now``."""
    a = assess(prof, j, now)
    supplies: list[dict[str, Any]] = []
    all_judged = judged_hold_tests(j, prof.bench.name) if j is not None else []
    for sp in a.plan.supplies:
        judged = all_judged
        change = cy.current_change(j, prof.bench.name, sp.id)
        last = cy.last_reading(j, prof.bench.name, sp.id)
        live = _live(j, prof, sp.id, now, a.plan.ambient_pa)
        judged = [h for h in judged if h.row.supply_id == sp.id and not h.earlier_cylinder]
        counting = [h.row for h in judged if h.counts]
        ht = counting[-1] if counting else None
        lv = live or {}
        from_live = lv.get("leak_verdict") is not None
        supplies.append(cast(dict[str, Any], {
            "id": sp.id, "gas": sp.gas_name,
            "pressure_abs_pa": sp.pressure_abs_pa, "pressure_gauge_pa": sp.pressure_abs_pa - a.plan.ambient_pa,
            "temperature_k": sp.temperature_k, "liquefied": sp.liquefied,
            "last_reading_at": last.at if last else None, "last_reading_id": last.id if last else None,
            "reading_source": ("live gauge" if live is not None and live["current"]
                               else "cylinder change" if change and last and last.at == change.at
                               else "journal" if last else "profile"),
            "mass_kg": sp.mass_kg, "usable_mass_kg": sp.usable_mass_kg,
            "time_to_reserve_s": seconds(sp.hours_to_reserve), "reserve_at": sp.reserve_at,
            "leak_included_sccm": sp.leak_sccm,
            "idle_drop_hold_needed_s": _needed(j, prof, sp.id, now),
            "cylinder_label": change.label if change else None,
            "retest_due": change.retest_due if change else None,
            "leak_verdict": lv["leak_verdict"] if from_live else ht.verdict if ht else None,
            "leak_rate_sccm": lv["leak_rate_sccm"] if from_live else ht.leak_rate_sccm if ht else None,
            "leak_rate_uncertainty_sccm": (lv["leak_rate_uncertainty_sccm"] if from_live
                                           else ht.leak_rate_uncertainty_sccm if ht else None),
            "leak_source": "leak watch" if from_live else "hold test" if ht else None,
            "live": live,
            "last_bad_sample": last_bad_sample(j, prof, sp.id, now.tzinfo),
            "hold_test_at": ht.at if ht else None, "hold_test_kind": ht.kind if ht else None,
            "hold_tests": [{"id": h.row.id, "at": h.row.at, "kind": h.row.kind, "verdict": h.row.verdict,
                            "leak_rate_sccm": h.row.leak_rate_sccm,
                            "leak_rate_uncertainty_sccm": h.row.leak_rate_uncertainty_sccm,
                            "withdrawn": h.withdrawn, "withdrawn_reason": h.withdrawn_reason}
                           for h in judged],
            "order_by": _order_date(a.orders.get(sp.id)),
            "days_of_gas": a.orders[sp.id].days_of_gas if sp.id in a.orders else None,
            "consumption_kg_per_week": _cons(a.orders.get(sp.id)),
        }))
    since = (now - dt.timedelta(seconds=RECENT_ALARMS_S)).isoformat(timespec="seconds")
    alarms: list[dict[str, str]] = [{"at": r.at, "supply_id": r.supply_id or "", "code": r.code, "text": r.text}
              for r in (j.alarms(prof.bench.name, since) if j is not None else [])]
    held = a.last_hold
    return StatusDocument(a, supplies, alarms, None if held is None else asdict(held) | {
        "at": held.at.isoformat(), "withdrawn": False})
