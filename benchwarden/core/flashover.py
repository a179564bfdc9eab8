"""Flashover margins: an exposed high-voltage part against the firing voltage of the gap it
sits beside (re-exported by :mod:`benchwarden.core.gap`)."""

from __future__ import annotations

import math
from dataclasses import dataclass

from benchwarden.units import check_positive

__all__ = ["AIR_FLASHOVER_KV_PER_MM", "Margin", "flashover_margin"]

#: Flashover strength of a short, non-uniform air clearance: about 1 kV per mm (common practice).
AIR_FLASHOVER_KV_PER_MM = 1.0


@dataclass(frozen=True)
class Margin:
    part: str
    clearance_m: float
    rating_kv: float | None
    withstand_kv: float
    margin_kv: float
    margin_percent: float
    status: str  # "ok" | "attention" | "stop"
    method: str
    #: the firing voltage the margin is taken against [kV]: the gap's upper estimate
    firing_kv: float = math.nan


def flashover_margin(part: str, breakdown_kv: float, clearance_m: float, rating_kv: float | None) -> Margin:
    """Margin of an exposed high-voltage part against the gap's firing voltage; pass the *upper*
    estimate (:attr:`Breakdown.breakdown_high_kv`): a gap that fires higher than planned leaves
    less margin.

    Withstand = min(clearance × 1 kV/mm (short non-uniform air gaps, common practice), rating).
    Status: ``stop`` when the firing voltage reaches the withstand, ``attention`` below 20 %
    margin, else ``ok``.

    Parameters
    ----------
    part : the exposed part's name
    breakdown_kv : Firing voltage (the upper estimate), [kV]
    clearance_m : Air clearance, [m]
    rating_kv : The part's voltage rating, [kV], or None

    Returns
    -------
    Margin
        Margin [kV] between the part's flashover and the gap's firing voltage, and its status.

    References
    ----------
    Common practice (about 1 kV/mm for a short, non-uniform air clearance).

    Examples
    --------
    >>> m = flashover_margin("feedthrough", 30.0, 25e-3, 40.0)
    >>> m.withstand_kv, m.margin_kv, m.status
    (25.0, -5.0, 'stop')
    """
    check_positive(clearance_m, f"air clearance of {part}", "m")
    flash = clearance_m * 1000.0 * AIR_FLASHOVER_KV_PER_MM
    withstand = min(flash, rating_kv) if rating_kv is not None else flash
    margin = withstand - breakdown_kv
    pct = 100.0 * margin / breakdown_kv if breakdown_kv > 0 else math.inf
    status = "stop" if margin <= 0 else ("attention" if pct < 20.0 else "ok")
    return Margin(part, clearance_m, rating_kv, withstand, margin, pct, status,
                  "clearance × 1 kV/mm (common practice) or rating, whichever is lower", breakdown_kv)


