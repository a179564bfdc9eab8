"""Starting and stopping a session as one record, for the command line and the app alike.

A session may start while a STOP finding stands only when a person accepts each STOP by name
with a reason; the journal keeps who accepted which, when and why (``accepted_stops``), in the
same transaction that starts the session. Stopping records the shots fired and a note.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from benchwarden.errors import InputError
from benchwarden.storage.journal import AcceptedStop, Journal, SessionRow
from benchwarden.storage.profile import Profile
from benchwarden.units.quantities import check_text
from benchwarden.workflows.findings import Finding, at_or_above

__all__ = ["StopsStand", "standing_stops", "start_session", "stop_session", "SessionRecord", "session_records",
           "MAX_SHOTS"]

#: More shots than this in one session is a typing error (10 kHz for a whole day).
MAX_SHOTS = 10**9


class StopsStand(InputError):
    """A session cannot start: STOP findings stand and nobody accepted them."""

    def __init__(self, stops: Sequence[Finding], words: Sequence[str]) -> None:
        self.stops = tuple(stops)
        self.words = tuple(words)
        super().__init__(f"{len(stops)} STOP finding(s) stand; start only after fixing them, or accept each "
                         "with a reason (--accept-stop REASON)")


def standing_stops(findings: Sequence[Finding]) -> list[Finding]:
    """The STOP findings among a bench's findings."""
    return at_or_above(findings, "stop")


def start_session(journal: Journal, prof: Profile, findings: Sequence[Finding], at: dt.datetime,
                  describe: Callable[[Finding], str], operator: str | None = None,
                  accept_reason: str | None = None, profile_path: str | None = None) -> int:
    """Start a session on the bench at ``at``. While a STOP finding stands, refuse
    (:class:`StopsStand`) unless ``accept_reason`` is given; then record the acceptance of each
    STOP (its code, subject and words) with the operator and the reason."""
    operator = check_text(operator or "", "operator", 100) or None
    reason = check_text(accept_reason or "", "reason for accepting the STOP findings", 500) or None
    running = journal.unfinished_session(prof.bench.name)
    if running is not None:
        raise InputError(f"session #{running.id} of this bench is still running (since {running.started_at}); "
                         "stop it first")
    stops = standing_stops(findings)
    if stops and reason is None:
        raise StopsStand(stops, [describe(f) for f in stops])
    accepted = [(f.code, f.subject, describe(f)) for f in stops]
    return journal.start_session(prof.bench.name, profile_path, at.isoformat(timespec="seconds"), operator,
                                 accepted, reason)


def stop_session(journal: Journal, prof: Profile, at: dt.datetime, shots: int | None = None,
                 note: str | None = None, operator: str | None = None) -> SessionRow:
    """Stop the bench's running session at ``at`` with its shot count and a note."""
    row = journal.unfinished_session(prof.bench.name)
    if row is None:
        raise InputError(f"no session of bench {prof.bench.name!r} is running")
    if at < dt.datetime.fromisoformat(row.started_at):
        raise InputError(f"stop time {at.isoformat(timespec='minutes')} is before the session started "
                         f"({row.started_at[:16]})")
    if shots is not None and not 0 <= shots <= MAX_SHOTS:
        raise InputError(f"shots {shots} must be between 0 and {MAX_SHOTS:,}".replace(",", " "))
    note = check_text(note or "", "note", 1000) or None
    operator = check_text(operator or "", "operator", 100) or None
    stamp = at.isoformat(timespec="seconds")
    journal.set_session_record(row.id, operator, shots)
    if note:
        journal.add_note(row.id, stamp, note)
    journal.stop_session(row.id, stamp)
    return row


@dataclass(frozen=True)
class SessionRecord:
    """A session as the record shows it: times, operator, shots, notes and accepted STOPs."""

    session: SessionRow
    notes: tuple[tuple[str, str], ...]
    accepted_stops: tuple[AcceptedStop, ...]


def session_records(journal: Journal) -> list[SessionRecord]:
    """Every session of the journal with its notes and accepted STOPs (oldest first)."""
    accepted: dict[int, list[AcceptedStop]] = {}
    for a in journal.accepted_stops():
        accepted.setdefault(a.session_id, []).append(a)
    return [SessionRecord(s, tuple(journal.notes(s.id)), tuple(accepted.get(s.id, ())))
            for s in journal.sessions()]
