"""The lab: ship a bench's record to the lab database, and read the whole lab back.

``push`` sends the events the lab has not acknowledged yet (in batches, one transaction each;
the local mark moves only after a batch is committed, and the server ignores an event it already
has, so a push cut off anywhere loses and duplicates nothing) and a snapshot of the bench's status
(with the profile's text when it changed). ``lab_view`` reads every bench's latest snapshot and
recent alarms, judges them (:func:`benchwarden.workflows.findings.lab_findings`) and lists what
to order.
"""

from __future__ import annotations

import datetime as dt
import hashlib
from dataclasses import dataclass, field
from typing import Any

from benchwarden.errors import InputError
from benchwarden.lab import client
from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import Profile
from benchwarden.workflows.findings import Finding, lab_findings, ranked
from benchwarden.workflows.status import status_document

__all__ = ["init_lab", "safe_url", "Shipper", "LabLink", "PushResult", "push", "LabView", "lab_view", "BATCH", "ORDER_HORIZON_DAYS", "ALARM_WINDOW_S"]

#: Events per transaction in a push.
BATCH = 500
#: The lab's order list: cylinders whose order-by date falls within this many days.
ORDER_HORIZON_DAYS = 14
#: Alarms shown for a bench: those the lab received in the last day [s].
ALARM_WINDOW_S = 86400.0
_SENT, _PROFILE = "lab-sent", "lab-profile"


def init_lab(url: str, benches: list[str]) -> list[str]:
    """Create or migrate the lab schema and its roles, and add the benches (idempotent); returns
    what was done."""
    from benchwarden.lab import schema

    done: list[str] = []
    for b in benches:
        schema.bench_role(b)  # a bad id is refused before anything is written
    with client.connect(url) as conn:
        done += schema.migrate(conn)
        for b in benches:
            done += schema.add_bench(conn, b)
    return done


def safe_url(url: str) -> str:
    """The URL without a password, for messages."""
    return client.safe_url(url)


@dataclass(frozen=True)
class PushResult:
    events_sent: int
    events_already_there: int
    snapshot_sent: bool
    profile_sent: bool
    last_seq: int
    bench_id: str
    received_at: str = ""
    """When the lab received the snapshot, by the server's clock (ISO 8601)."""


def _finding_json(f: Finding) -> dict[str, Any]:
    return {"code": f.code, "severity": f.severity, "subject": f.subject, "values": dict(f.values)}


def push(prof: Profile, journal: Journal, profile_text: str, now: dt.datetime) -> PushResult:
    """Ship the bench's unsent events and a status snapshot to its ``[lab]`` database."""
    if prof.lab is None:
        raise InputError("the profile has no [lab] section (url and bench_id): nothing to push to")
    bench, lab = prof.bench.name, prof.lab
    stamp = now.isoformat(timespec="seconds")
    sent = already = 0
    mark = journal.mark(bench, "", _SENT)
    last = mark[0] if mark else 0
    sha = hashlib.sha256(profile_text.encode()).hexdigest()
    prev_sha = journal.mark(bench, "", _PROFILE)
    doc = status_document(prof, journal, now)
    status = {"bench": bench, "taken_at": stamp, "ambient_pressure_pa": doc.assessment.plan.ambient_pa,
              "supplies": doc.supplies, "alarms": doc.alarms, "last_hold_test": doc.last_hold_test,
              "findings": [_finding_json(f) for f in doc.assessment.findings]}
    with client.connect(lab.url) as conn:
        while True:
            events = journal.events(bench, last, BATCH)
            if not events:
                break
            new = client.insert_events(conn, lab.bench_id, events)
            sent += new
            already += len(events) - new
            last = events[-1].seq
            journal.set_mark(bench, "", _SENT, last, stamp)  # after the batch is committed on the server
        changed = prev_sha is None or prev_sha[1] != sha
        received = client.insert_snapshot(conn, lab.bench_id, stamp, status, profile_text if changed else None, sha)
    if changed:
        journal.set_mark(bench, "", _PROFILE, 0, sha)
    return PushResult(sent, already, True, changed, last, lab.bench_id, received)


@dataclass(frozen=True)
class LabView:
    """The whole lab: each bench's latest snapshot (as JSON), the order list and the findings."""

    benches: list[dict[str, Any]]
    orders: list[dict[str, Any]]
    findings: list[Finding] = field(default_factory=list)


def _supply_row(s: dict[str, Any]) -> dict[str, Any]:
    return {"id": s.get("id"), "gas": s.get("gas"), "pressure_gauge_pa": s.get("pressure_gauge_pa"),
            "time_to_reserve_s": s.get("time_to_reserve_s"), "order_by": s.get("order_by"),
            "leak_verdict": s.get("leak_verdict"), "retest_due": s.get("retest_due"),
            "cylinder_label": s.get("cylinder_label")}


def lab_view(url: str, today: dt.date) -> LabView:
    """Read every bench's latest snapshot and the alarms of the last day, judge them, and list
    what to order (by gas: how many cylinders, by when)."""
    with client.connect(url) as conn:
        snaps = client.latest_snapshots(conn)
        alarms = client.recent_alarms(conn, ALARM_WINDOW_S)
        registered = client.registered_benches(conn)
    benches: list[dict[str, Any]] = []
    for bench_id, taken_at, age, st in snaps:
        benches.append({"bench_id": bench_id, "bench": st.get("bench"), "snapshot_at": taken_at,
                        "snapshot_age_s": age, "supplies": [_supply_row(s) for s in st.get("supplies", [])],
                        "alarms": [{"at": at, **p} for b, at, p in alarms if b == bench_id],
                        "findings": st.get("findings", [])})
    seen = {b["bench_id"] for b in benches}
    for bench_id in registered:  # a registered bench that never pushed is a finding too
        if bench_id not in seen:
            benches.append({"bench_id": bench_id, "bench": None, "snapshot_at": None, "snapshot_age_s": None,
                            "supplies": [], "alarms": [], "findings": []})
    benches.sort(key=lambda b: b["bench_id"])
    horizon = today + dt.timedelta(days=ORDER_HORIZON_DAYS)
    orders: dict[str, dict[str, Any]] = {}
    for b in benches:
        for s in b["supplies"]:
            if s["order_by"] and dt.date.fromisoformat(s["order_by"]) <= horizon:
                o = orders.setdefault(str(s["gas"]), {"gas": s["gas"], "cylinders": 0, "by": s["order_by"],
                                                      "supplies": []})
                o["cylinders"] += 1
                o["by"] = min(o["by"], s["order_by"])
                o["supplies"].append(f"{b['bench_id']}/{s['id']}")
    return LabView(benches, sorted(orders.values(), key=lambda o: o["by"]), ranked(lab_findings(benches, today)))


@dataclass(frozen=True)
class LabLink:
    """How a bench's background push stands, for the app and ``watch`` to show."""

    received_at: dt.datetime | None
    """When the lab last received this bench's record (the server's clock); None: not yet."""
    error: str | None
    """Why the last push failed (None: it went through)."""
    retry_in_s: float
    """Seconds until the next push."""
    events_sent: int
    """Events the lab received from this bench since the app or ``watch`` started."""


class Shipper:
    """Pushes a bench's record to its lab in the background while ``watch`` or the app runs: every
    ``interval_s`` when the lab answers, backing off (doubling, up to an hour) when it does not.
    One push at a time, in its own thread; the journal's lock keeps its writes whole."""

    MAX_BACKOFF_S = 3600.0

    def __init__(self, prof: Profile, journal: Journal, profile_text: str, clock: Any,
                 interval_s: float = 300.0) -> None:
        self.prof, self.journal, self.text, self.clock = prof, journal, profile_text, clock
        self.interval_s = interval_s
        self.wait_s = interval_s
        self.next_at = 0.0
        self.last_ok: dt.datetime | None = None
        self.last_error: str | None = None
        self.last_result: PushResult | None = None
        self.last_received: dt.datetime | None = None
        self.events_sent = 0
        self._thread: Any = None

    def due(self, mono: float) -> bool:
        return mono >= self.next_at and (self._thread is None or not self._thread.is_alive())

    def poll(self, mono: float) -> None:
        """Start a push if one is due (returns at once)."""
        import threading

        if self.prof.lab is None or not self.due(mono):
            return
        self._thread = threading.Thread(target=self._push, args=(mono,), daemon=True, name="lab-push")
        self._thread.start()

    def _push(self, mono: float) -> None:
        from benchwarden.errors import BenchwardenError

        try:
            self.last_result = push(self.prof, self.journal, self.text, self.clock())
        except BenchwardenError as exc:
            self.last_error = str(exc)
            self.wait_s = min(self.wait_s * 2.0, self.MAX_BACKOFF_S)
        else:
            self.last_ok, self.last_error, self.wait_s = self.clock(), None, self.interval_s
            self.events_sent += self.last_result.events_sent
            if self.last_result.received_at:
                self.last_received = dt.datetime.fromisoformat(self.last_result.received_at)
        self.next_at = mono + self.wait_s

    def link(self, mono: float) -> LabLink:
        """How the link stands at monotonic time ``mono``."""
        return LabLink(self.last_received, self.last_error, max(0.0, self.next_at - mono), self.events_sent)

    def join(self, timeout: float = 10.0) -> None:
        if self._thread is not None:
            self._thread.join(timeout)
