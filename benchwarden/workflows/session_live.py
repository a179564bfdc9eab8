"""The app's live gauges, for :class:`benchwarden.workflows.session.SessionState`: polling the
sources, the live state and leak watch of each supply, the alarms now, and a supply's live trace.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

from benchwarden.core.uncertainty import U_T_DEFAULT
from benchwarden.storage.samples import Columns, SampleStore
from benchwarden.workflows.cylinder import LatestSample, latest_state
from benchwarden.workflows.findings import Finding, alarm_findings
from benchwarden.workflows.holds import profile_gauge_spec
from benchwarden.workflows.watch import LeakWatch, leak_watch_recorded, live_draw

if TYPE_CHECKING:
    from benchwarden.workflows.lab import LabLink
    from benchwarden.workflows.model import Observed
    from benchwarden.workflows.session import SessionState

__all__ = ["LiveSupply", "observed_draws", "poll_sources", "poll_lab", "refresh_live", "alarms_now", "live_trace", "COMPACT_EVERY_S",
           "LEAK_REFRESH_S"]

#: Samples older than the raw window are compressed this often while gauges are read [s].
COMPACT_EVERY_S = 3600.0
#: The leak watch's fit is redone this often (the latest sample follows every refresh) [s].
LEAK_REFRESH_S = 30.0


@dataclass(frozen=True)
class LiveSupply:
    """What a supply's live gauge says now: its latest sample, the leak watch, silence."""

    supply_id: str
    sample: LatestSample | None
    leak: LeakWatch | None
    silent: str | None
    last_bad: str | None = None
    """The reason of the latest sample this watch set aside (bad or implausible)."""



def poll_sources(st: SessionState) -> int:
    """Read the sources that are due and store their samples; once an hour, compress the
    samples older than the raw window (blocking: call from a worker)."""
    if st.watcher is None:
        return 0
    now = st.clock()
    n = st.watcher.poll(now)
    if st._compacted is None or (now - st._compacted).total_seconds() >= COMPACT_EVERY_S:
        st._compacted = now
        st.watcher.compact(now)
    return n


def poll_lab(st: SessionState, mono: float) -> LabLink | None:
    """Start a background push to the profile's ``[lab]`` when one is due (returns at once; the
    :class:`~benchwarden.workflows.lab.Shipper` backs off while the lab is away); how the link
    stands, or None without a lab."""
    if st.profile is None or st.profile.lab is None or st.journal is None:
        return None
    if st.shipper is None or st.shipper.prof is not st.profile:
        from benchwarden.workflows.lab import Shipper

        old = st.shipper
        st.shipper = Shipper(st.profile, st.journal, st.profile_path.read_text(encoding="utf-8"), st.clock)
        if old is not None:  # a reloaded profile: keep what the old one knew, and its push in flight
            for k in ("last_received", "events_sent", "last_ok", "last_error", "next_at", "wait_s", "_thread"):
                setattr(st.shipper, k, getattr(old, k))
    st.shipper.poll(mono)
    return st.shipper.link(mono)


def refresh_live(st: SessionState) -> None:
    """Recompute the plan from the latest samples, run the leak watch of each idle supply
    (storing a hold test once it resolves) and note silent gauges (blocking)."""
    if st.profile is None:
        return
    now = st.clock()
    st.recompute()
    silent = st.watcher.silent(now) if st.watcher is not None else {}
    reasons = st.watcher.last_reasons(now) if st.watcher is not None else {}
    live: dict[str, LiveSupply] = {}
    for s in st.profile.supplies:
        if s.source is None:
            continue
        before = st.live.get(s.id)
        if st.running:
            lw = None
        elif (before is not None and before.leak is not None and st._leak_at is not None
              and (now - st._leak_at).total_seconds() < LEAK_REFRESH_S):
            lw = before.leak  # the fit over a long idle stretch costs a few tenths of a second
        else:
            lw = leak_watch_recorded(st.journal, st.profile, s.id, now)
        live[s.id] = LiveSupply(s.id, latest_state(st.journal, st.profile, s.id, now.tzinfo), lw,
                                silent.get(s.id), reasons.get(s.id))
    if st._leak_at is None or (now - st._leak_at).total_seconds() >= LEAK_REFRESH_S:
        st._leak_at = now
    st.live = live


def alarms_now(st: SessionState, now: dt.datetime, finding_codes: set[str]) -> list[Finding]:
    """The alarms now (the rule is :func:`benchwarden.workflows.findings.alarm_findings`)."""
    assert st.plan is not None
    hours = {s.id: st.hours_left(s.id, now) for s in st.plan.supplies}
    drawing = {s.id: s.draw_kg_s > 0 for s in st.plan.supplies}
    for sid, lv in st.live.items():
        # an idle supply that leaks runs down too: the leak watch's time to the reserve
        lw = lv.leak
        if lw is not None and lw.verdict == "leak" and lw.result.hours_to_reserve is not None and not st.running:
            hours[sid] = min(hours.get(sid, math.inf),
                             lw.result.hours_to_reserve - (now - lw.until).total_seconds() / 3600.0)
            drawing[sid] = True
    ahead = st.profile.session.alert_before / 3600.0 if st.profile is not None else 0.5
    over = None
    if st.running and st.started_at is not None:
        over = (now - st.started_at).total_seconds() / 3600.0 - st.plan.session_hours
    leaks = {k: (v.leak.leak_rate_sccm, v.leak.leak_rate_uncertainty_sccm) for k, v in st.live.items()
             if v.leak is not None and v.leak.verdict == "leak"}
    silent = {k: v.silent for k, v in st.live.items() if v.silent}
    if st.watcher is not None:
        silent |= st.watcher.silent(now)
    return alarm_findings(hours, drawing, ahead, over, finding_codes, silent, leaks)


def live_trace(st: SessionState, supply_id: str, since: dt.datetime, until: dt.datetime, columns: int) -> Columns | None:
    """The supply's live pressure between two times as minimum and maximum per plot column
    (absolute Pa; None without samples)."""
    if st.journal is None or st.profile is None or until <= since:
        return None
    store = SampleStore(st.journal)
    sid = store.stream(st.profile.bench.name, supply_id, "pressure")
    if sid is None:
        return None
    cols = store.columns(sid, since.timestamp(), until.timestamp(), max(1, columns))
    return cols if bool((cols.vmin == cols.vmin).any()) else None


def observed_draws(st: SessionState) -> dict[str, Observed]:
    """Each supply's observed draw in the running session: from its live samples since the
    start, else from the readings typed (at least two)."""
    from benchwarden.workflows import build as pl
    assert st.profile is not None and st.plan is not None
    out: dict[str, Observed] = {}
    for s in st.profile.supplies:
        rs = sorted(st.readings.get(s.id, []), key=lambda r: r.at)
        sp = next(x for x in st.plan.supplies if x.id == s.id)
        if sp.liquefied:
            continue
        if st.running and st.started_at is not None and s.source is not None:
            # a live gauge: the samples since the session began give the observed draw
            live = live_draw(st.journal, st.profile, s.id, st.started_at, st.clock(), sp.draw_kg_s,
                             sp.reserve_abs_pa)
            if live is not None:
                out[s.id] = live
                continue
        if len(rs) < 2:
            continue
        gauge = profile_gauge_spec(s.gauge)
        u_p = gauge.u_difference_pa if gauge is not None else 0.0
        ob = pl.observed_draw(s.gas, s.water_volume, sp.reserve_abs_pa, sp.draw_kg_s,
                              [(r.at, r.pressure_abs_pa, r.temperature_k) for r in rs
                               if r.pressure_abs_pa is not None], u_p, s.id, U_T_DEFAULT)
        if ob is not None:
            out[s.id] = ob
    return out
