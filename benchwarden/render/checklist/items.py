"""A checklist item (shared by the checklist's builders and renderers)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = ["Item", "Status"]

#: ``ok`` where no finding applies, else the worst finding's severity.
Status = Literal["ok", "stop", "warning", "attention", "info"]


@dataclass(frozen=True)
class Item:
    id: str
    text: str
    status: Status | None = None  # None: a box to tick
    figure: str | None = None
    reason: str | None = None
    value: float | None = None
    source: str | None = None
    code: str | None = None
    #: where the practice comes from: a named source, or "common practice"
    basis: str | None = None
