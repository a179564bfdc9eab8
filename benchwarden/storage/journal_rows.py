"""The journal's rows as the reading methods return them (frozen dataclasses, SI values, ISO
8601 times as stored)."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["SessionRow", "AcceptedStop", "ReadingRow", "ChangeRow", "HoldRow", "PurgeRow", "HoldStartRow", "AlarmRow"]


@dataclass(frozen=True)
class SessionRow:
    id: int
    bench: str
    profile_path: str | None
    started_at: str
    stopped_at: str | None
    readings: int
    alarms: int = 0
    operator: str | None = None
    shots: int | None = None


@dataclass(frozen=True)
class AcceptedStop:
    """A STOP finding that stood when a session was started, accepted by a person with a reason."""

    session_id: int
    at: str
    operator: str | None
    code: str
    subject: str
    text: str
    reason: str


@dataclass(frozen=True)
class ReadingRow:
    id: int
    session_id: int | None
    supply_id: str
    at: str
    pressure_abs_pa: float | None
    pressure_text: str
    temperature_k: float
    bench: str | None = None
    weight_kg: float | None = None
    ambient_pa: float | None = None
    struck_at: str | None = None
    struck_reason: str | None = None
    note: str | None = None

    @property
    def struck(self) -> bool:
        return self.struck_at is not None


@dataclass(frozen=True)
class ChangeRow:
    """A cylinder change: a new fill on a supply."""

    id: int
    bench: str
    supply_id: str
    at: str
    pressure_abs_pa: float | None
    pressure_text: str | None
    weight_kg: float | None
    temperature_k: float | None
    label: str | None
    retest_due: str | None


@dataclass(frozen=True)
class HoldRow:
    id: int
    at: str
    bench: str | None
    supply_id: str | None
    gas: str
    verdict: str
    leak_rate_sccm: float
    leak_rate_uncertainty_sccm: float
    kind: str | None = None
    details: str | None = None


@dataclass(frozen=True)
class PurgeRow:
    """A purge that was run on a supply's line: who, when, how, the gas it used."""

    id: int
    bench: str
    supply_id: str
    at: str
    operator: str | None
    method: str
    cycles: int | None
    gas_standard_litres: float
    details: str | None


@dataclass(frozen=True)
class HoldStartRow:
    """The first reading of a hold test started now and finished later."""

    id: int
    bench: str
    supply_id: str
    at: str
    pressure_abs_pa: float
    pressure_text: str
    temperature_k: float
    ambient_pa: float
    hold_s: float
    finished_by: int | None = None


@dataclass(frozen=True)
class AlarmRow:
    id: int
    bench: str
    supply_id: str | None
    code: str
    at: str
    text: str
    details: str | None
