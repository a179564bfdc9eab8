"""Quantities as text for people: pressures with (g)/(a) in the display unit, temperatures, hours.

One home with :mod:`benchwarden.render.numbers`; these three stay in the units layer because the
core's refusals quote the value the person typed in its own unit.
"""

from __future__ import annotations

import math

from benchwarden.errors import InputError
from benchwarden.units.constants import ATM_PA, T0_K
from benchwarden.units.parse import _PRESSURE_UNITS, PressureKind

__all__ = ["pressure_factor", "fmt_pressure", "fmt_temperature", "fmt_hours"]


def pressure_factor(unit: str) -> float:
    """Pascals per one ``unit`` (bar, psi, kPa, MPa, mbar, ...).

    >>> from benchwarden.units.constants import PSI_PA
    >>> pressure_factor("psi") == PSI_PA
    True
    """
    try:
        return _PRESSURE_UNITS[unit.lower()]
    except KeyError:
        raise InputError(f"unknown pressure unit {unit!r}") from None


def fmt_pressure(abs_pa: float, ambient_pa: float = ATM_PA, unit: str = "bar", kind: PressureKind = "gauge") -> str:
    """Format a pressure with its gauge/absolute mark: ``bar(g)``/``bar(a)``, ``psig``/``psia``,
    ``kPa(g)``/``kPa(a)``.

    >>> fmt_pressure(20101325.0)
    '200.0 bar(g)'
    >>> fmt_pressure(15e6, kind="absolute")
    '150.0 bar(a)'
    >>> from benchwarden.units.constants import PSI_PA
    >>> fmt_pressure(ATM_PA + 100 * PSI_PA, unit="psi")
    '100.0 psig'
    """
    factor = pressure_factor(unit)
    v = (abs_pa - ambient_pa if kind == "gauge" else abs_pa) / factor
    if unit.lower() == "psi":
        label = "psig" if kind == "gauge" else "psia"
    else:
        label = unit + ("(g)" if kind == "gauge" else "(a)")
    digits = 1 if abs(v) >= 10 else (2 if abs(v) >= 1 else 3)
    return f"{v:.{digits}f} {label}"


def fmt_temperature(kelvin: float) -> str:
    """Format a temperature in °C, e.g. ``"20.0 °C"``."""
    return f"{kelvin - T0_K:.1f} °C"


def fmt_hours(hours: float) -> str:
    """Format hours as ``"3 h 12 min"`` (or ``"never"`` for infinity)."""
    if not math.isfinite(hours):
        return "never"
    if hours < 0:
        return "passed"
    if hours > 10 * 366 * 24:  # beyond what any bench plans for: no 300-digit day counts
        return "more than ten years"
    total_min = int(round(hours * 60))
    d, rem = divmod(total_min, 24 * 60)
    h, m = divmod(rem, 60)
    if d:
        return f"{d} d {h} h"
    return f"{h} h {m:02d} min"
