"""Samples out: every stored sample of a supply's streams in a span, for people writing their
own reports (``benchwarden samples``).

Raw samples come with their status (``good``, ``bad``, ``implausible``) and reason; hours
already compressed give their stored trace points (``trace``) and each hour's minimum and maximum
(``min``, ``max``, stamped with the hour's start). Values are SI: absolute pascal for a pressure
(``Pa(a)``), kelvin for a temperature (``K``).
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass
from pathlib import Path

from benchwarden.errors import InputError
from benchwarden.storage.journal import Journal, default_path
from benchwarden.storage.profile import load_profile
from benchwarden.storage.samples import SampleStore

__all__ = ["SampleRow", "parse_when", "supply_samples", "UNITS"]

#: The unit of each stream's values.
UNITS = {"pressure": "Pa(a)", "temperature": "K"}


@dataclass(frozen=True)
class SampleRow:
    """One exported row: unix time [s], the stream, the kind of row, the SI value (None where
    nothing was read), its unit, status and reason."""

    t: float
    stream: str
    kind: str
    value_si: float | None
    unit: str
    status: str
    reason: str


def parse_when(text: str | None, what: str) -> float | None:
    """A ``--from``/``--to`` time: an ISO 8601 date or date and time (a space or ``T`` between),
    with an offset or in the computer's zone; as a unix time [s].

    >>> parse_when("2026-12-02T09:00:00Z", "--from")
    1796202000.0
    """
    if text is None:
        return None
    s = text.strip()
    try:
        at = dt.datetime.fromisoformat(s.replace("Z", "+00:00"))
    except ValueError:
        raise InputError(f"{what} {text!r}: an ISO 8601 date or time such as 2026-12-02 or "
                         "2026-12-02T09:00 (an offset such as +01:00 or Z, else the computer's zone)") from None
    if at.tzinfo is None:
        at = at.astimezone()
    return at.timestamp()


def supply_samples(profile_path: str | Path, supply_id: str, journal_path: str | Path | None,
                   since: str | None = None, until: str | None = None) -> list[SampleRow]:
    """Every stored sample of ``supply_id``'s streams between ``since`` and ``until`` (ISO 8601
    text; None: from the first, to the last), in time order. A journal that does not exist yet
    has none."""
    t0 = parse_when(since, "--from")
    t1 = parse_when(until, "--to")
    if t0 is not None and t1 is not None and t1 < t0:
        raise InputError(f"--to {until!r} is before --from {since!r}")
    prof = load_profile(profile_path)
    known = [s.id for s in prof.supplies]
    if supply_id not in known:
        raise InputError(f"unknown supply {supply_id!r}; known: {', '.join(known)}")
    path = default_path(journal_path)
    if not path.exists():
        return []
    lo = -math.inf if t0 is None else t0
    hi = math.inf if t1 is None else t1
    out: list[SampleRow] = []
    with Journal(path, readonly=True) as j:
        store = SampleStore(j)
        for quantity, unit in UNITS.items():
            sid = store.stream(prof.bench.name, supply_id, quantity)
            if sid is None:
                continue
            out += [SampleRow(r.t, quantity, r.kind, r.value, unit, r.status, r.reason)
                    for r in store.rows(sid, max(lo, -1e18), min(hi, 1e18))]
    out.sort(key=lambda r: (r.t, r.stream))
    return out
