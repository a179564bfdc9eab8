"""Each supply's cylinders as the record shows them, one after another, with what each one gave:
label, fill, from–to, the readings on it, the gas it gave (real gas), its hold tests and its
retest date; and a reading struck out of that record (:func:`strike`, for the command line and
the app alike).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from benchwarden.core import gas as g
from benchwarden.errors import BenchwardenError, InputError, JournalError
from benchwarden.storage.journal import Journal, ReadingRow
from benchwarden.storage.profile import Profile, Supply
from benchwarden.units.quantities import check_text

__all__ = ["CylinderLife", "cylinder_lives", "strike"]


@dataclass(frozen=True)
class CylinderLife:
    """One cylinder on a supply: from its fill (or the first record) to the next change."""

    supply_id: str
    label: str | None
    fill_text: str | None
    since: str | None
    until: str | None  # None: still in use
    readings: int
    gas_used_kg: float | None
    hold_tests: int
    retest_due: str | None


def _mass(s: Supply, r: ReadingRow) -> float | None:
    """The real-gas mass of a reading (by weight for a weighed supply) [kg]; None outside the
    equation of state."""
    if r.weight_kg is not None and s.tare is not None:
        return r.weight_kg - s.tare
    if r.pressure_abs_pa is None:
        return None
    try:
        return g.density(s.gas, r.temperature_k, r.pressure_abs_pa) * s.water_volume
    except BenchwardenError:
        return None


def _used(s: Supply, rows: list[ReadingRow]) -> float | None:
    masses = [m for m in (_mass(s, r) for r in rows) if m is not None]
    return masses[0] - masses[-1] if len(masses) >= 2 else None


def cylinder_lives(journal: Journal | None, prof: Profile, supply_id: str) -> list[CylinderLife]:
    """Every cylinder of a supply the journal knows, oldest first: label, fill, from–to, the
    readings on it (none struck), the gas it gave between its first and last reading (real
    gas), the hold tests run on it and its retest date. The first one is the profile's cylinder."""
    s = prof.supply(supply_id)
    if journal is None:
        return [CylinderLife(s.id, None, s.reading.text if s.reading else None, None, None, 0, None, 0,
                             s.retest_due.isoformat() if s.retest_due else None)]
    try:
        changes = journal.changes(prof.bench.name, s.id)
        readings = [r for r in journal.supply_readings(prof.bench.name, s.id) if not r.struck]
        holds = [h for h in journal.hold_tests(prof.bench.name) if h.supply_id == s.id]
    except JournalError:
        return []
    bounds: list[str | None] = [None] + [c.at for c in changes] + [None]
    out = []
    for i in range(len(changes) + 1):
        lo, hi = bounds[i], bounds[i + 1]

        def inside(at: str, lo: str | None = lo, hi: str | None = hi) -> bool:
            t = dt.datetime.fromisoformat(at)
            return ((lo is None or t >= dt.datetime.fromisoformat(lo))
                    and (hi is None or t < dt.datetime.fromisoformat(hi)))

        rows = [r for r in readings if inside(r.at)]
        if i == 0 and not rows and changes:
            continue  # the profile's cylinder left no record in the journal
        c = changes[i - 1] if i else None
        fill = (c.pressure_text or (f"{c.weight_kg:g} kg" if c.weight_kg is not None else None)) if c else (
            s.reading.text if s.reading else None)
        retest = (c.retest_due if c else (s.retest_due.isoformat() if s.retest_due else None))
        out.append(CylinderLife(s.id, c.label if c else None, fill, lo if c else (rows[0].at if rows else None), hi,
                                len(rows), _used(s, rows), sum(1 for h in holds if inside(h.at)), retest))
    return out


def strike(journal: Journal, prof: Profile, reading_id: int, reason: str, now: dt.datetime) -> ReadingRow:
    """Strike a reading of the bench out (kept, marked, with the reason); it then takes part in
    no figure. A cylinder change's fill is refused: the change keeps its own copy of the fill, so
    the reading struck alone would leave the fill counting (record the change again instead)."""
    reason = check_text(reason, "reason", 200)
    if not reason:
        raise InputError("say why the reading is struck out")
    row = next((r for s in prof.supplies for r in journal.supply_readings(prof.bench.name, s.id) if r.id == reading_id),
               None)
    if row is None:
        raise InputError(f"no reading {reading_id} of bench {prof.bench.name!r} in the journal")
    if any(c.at == row.at and c.pressure_abs_pa == row.pressure_abs_pa and c.weight_kg == row.weight_kg
           for c in journal.changes(prof.bench.name, row.supply_id)):
        raise InputError(f"reading {reading_id} is the fill of the cylinder change of {row.supply_id} at "
                         f"{row.at[:16].replace('T', ' ')}: the change keeps its fill, so it is not struck out "
                         "alone; record the change again with the right fill (swap), which takes its place")
    journal.strike_reading(reading_id, now.isoformat(timespec="seconds"), reason)
    return row
