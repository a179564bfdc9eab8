"""The assumption behind a hold test's pressure budget, in words (the command line and the app
say it with the same sentence)."""

from __future__ import annotations

from typing import Any

__all__ = ["budget_assumption"]


def budget_assumption(r: Any) -> str | None:
    """How the two readings' gauge errors were combined (:attr:`HoldResult.pressure_budget`)."""
    if r.pressure_budget == "repeatability":
        return ("gauge budget: the maker's repeatability is used for the difference of the two readings (the "
                "gauge's systematic error is taken to cancel in it)")
    if r.pressure_budget == "uncorrelated":
        return ("gauge budget: the two readings are taken as uncorrelated, each with the full class error — "
                "conservative for one gauge (its zero error would cancel in the difference)")
    return None
