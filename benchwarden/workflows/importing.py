"""Bulk import of readings from a CSV file (a paper logbook typed up, another tool's export).

The file names its columns in a header row: ``time`` (ISO 8601, required), ``pressure`` (a
quantity with its unit, ``62 bar``) or ``weight`` (``74.1 kg``), optional ``temperature``
(``19 degC``) and ``note``. Every row is read exactly as declared and checked like a typed
reading (the same parsers and limits); rows that look implausible against the reading before
them on the same cylinder (a rise, a swapped unit, a drop far faster than planned) are listed
and recorded only when confirmed. A row identical to a reading already in the journal (time,
value) is skipped, so importing a file twice adds nothing. All or nothing: one transaction,
and a file with a refused row records nothing.
"""

from __future__ import annotations

import bisect
import csv
import datetime as dt
import io
from dataclasses import dataclass, field

from benchwarden.errors import InputError
from benchwarden.storage.journal import Journal
from benchwarden.storage.profile import Profile
from benchwarden.units import parse_mass, parse_pressure, parse_temperature
from benchwarden.units.quantities import check_text
from benchwarden.workflows.cylinder import Entry, Question, check_limits, parse_at, questions_after

__all__ = ["COLUMNS", "ImportResult", "import_readings", "MAX_IMPORT_BYTES"]

#: The columns a reading file may have (``time`` and one of ``pressure``/``weight`` required).
COLUMNS = ("time", "pressure", "weight", "temperature", "note")
#: A reading file larger than this is refused before it is read (about two million rows).
MAX_IMPORT_BYTES = 64 * 1024 * 1024


@dataclass
class ImportResult:
    """What an import did: rows recorded, skipped as already there, refused (line, reason: words,
    or the row's error with its data for a renderer), and implausible (line, question) —
    recorded only when confirmed."""

    recorded: int = 0
    skipped: int = 0
    refused: list[tuple[int, str | InputError]] = field(default_factory=list)
    questions: list[tuple[int, Question]] = field(default_factory=list)


def _header(row: list[str]) -> list[str]:
    names = [c.strip().lower() for c in row]
    unknown = [n for n in names if n not in COLUMNS]
    if unknown:
        raise InputError(f"column {unknown[0]!r} in the header is not one of {', '.join(COLUMNS)}")
    if len(set(names)) != len(names):
        raise InputError("a column is named twice in the header")
    if "time" not in names or ("pressure" in names) == ("weight" in names):
        raise InputError("the header needs 'time' and one of 'pressure' or 'weight' (e.g. time,pressure,temperature)")
    return names


def _entry(prof: Profile, supply_id: str, cells: dict[str, str], now: dt.datetime) -> tuple[Entry, str | None]:
    t = cells["time"].strip()
    if len(t) < 10 or "-" not in t[:10]:
        raise InputError(f"time {t!r} needs a date: ISO 8601 such as 2026-11-27T18:00 or 2026-11-27 18:00")
    at = parse_at(t, now)
    T = (parse_temperature(cells["temperature"], "cylinder temperature") if cells.get("temperature", "").strip()
         else prof.ambient.temperature)
    note = check_text(cells.get("note", ""), "note", 200) or None
    if "pressure" in cells:
        p = parse_pressure(cells["pressure"], prof.ambient_pa)
        return Entry(supply_id, at, T, pressure_abs_pa=p.abs_at(prof.ambient_pa), pressure_text=p.text), note
    return Entry(supply_id, at, T, weight_kg=parse_mass(cells["weight"], "weight")), note


def _read(prof: Profile, supply_id: str, text: str, now: dt.datetime,
          result: ImportResult) -> list[tuple[int, Entry, str | None]]:
    rows = csv.reader(io.StringIO(text, newline=""), strict=True)
    try:
        header = next(rows)
    except StopIteration:
        raise InputError("the file is empty: it needs a header row (time,pressure,...)") from None
    names = _header(header)
    out: list[tuple[int, Entry, str | None]] = []
    try:
        for row in rows:
            line = rows.line_num
            if not row or not any(c.strip() for c in row):
                continue
            if len(row) != len(names):
                result.refused.append((line, f"{len(row)} cells where the header names {len(names)}"))
                continue
            try:
                entry, note = _entry(prof, supply_id, dict(zip(names, row, strict=True)), now)
                check_limits(prof, entry)
            except InputError as exc:
                result.refused.append((line, exc))
                continue
            out.append((line, entry, note))
    except csv.Error as exc:
        raise InputError(f"line {rows.line_num}: not a CSV row ({exc})") from None
    return out


def import_readings(journal: Journal, prof: Profile, supply_id: str, text: str, now: dt.datetime,
                    confirm: bool = False, planned_kg_s: float | None = None) -> ImportResult:
    """Import a CSV file of readings of one supply (see the module docstring); records nothing
    when a row is refused, or when a row is implausible and ``confirm`` is not given."""
    if supply_id not in {s.id for s in prof.supplies}:
        raise InputError(f"unknown supply {supply_id!r}; known: {', '.join(s.id for s in prof.supplies)}")
    result = ImportResult()
    rows = _read(prof, supply_id, text, now, result)
    bench = prof.bench.name
    have = {(a, None if p is None else round(p, 3), w) for a, p, w in journal.reading_keys(bench, supply_id)}
    new: list[tuple[int, Entry, str | None]] = []
    for line, e, note in rows:
        key = (e.at.isoformat(timespec="seconds"), None if e.pressure_abs_pa is None else round(e.pressure_abs_pa, 3),
               e.weight_kg)
        if key in have:
            result.skipped += 1
            continue
        have.add(key)
        new.append((line, e, note))
    _question(journal, prof, supply_id, new, planned_kg_s, result)
    if result.refused or (result.questions and not confirm):
        return result
    stamp = now.isoformat(timespec="seconds")
    result.recorded = journal.add_readings([
        (bench, supply_id, e.at.isoformat(timespec="seconds"), e.pressure_abs_pa,
         e.pressure_text or (f"{e.weight_kg:g} kg" if e.weight_kg is not None else ""), e.temperature_k, stamp,
         e.weight_kg, prof.ambient_pa, note) for _, e, note in new])
    return result


def _question(journal: Journal, prof: Profile, supply_id: str, new: list[tuple[int, Entry, str | None]],
              planned_kg_s: float | None, result: ImportResult) -> None:
    """Each new pressure row against the pressure before it on the same cylinder (a reading in
    the journal or an earlier row of the file; never across a cylinder change)."""
    changes = sorted(dt.datetime.fromisoformat(c.at) for c in journal.changes(prof.bench.name, supply_id))
    known = [(dt.datetime.fromisoformat(r.at), 0, Entry(supply_id, dt.datetime.fromisoformat(r.at), r.temperature_k,
                                                         r.pressure_abs_pa))
             for r in journal.supply_readings(prof.bench.name, supply_id)
             if not r.struck and r.pressure_abs_pa is not None]
    merged = sorted(known + [(e.at, line, e) for line, e, _ in new if e.pressure_abs_pa is not None],
                    key=lambda x: (x[0], x[1]))
    prev: Entry | None = None
    for at, line, e in merged:
        if prev is not None and line:
            # a change between the two readings: the new cylinder starts afresh
            i = bisect.bisect_right(changes, prev.at)
            if i >= len(changes) or changes[i] > at:
                for q in questions_after(prof, prev, e, planned_kg_s):
                    result.questions.append((line, q))
        prev = e
