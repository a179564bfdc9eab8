"""How numbers are shown: the display unit of pressure and the shared formatters.

Every renderer (text, app, Markdown, HTML, PDF) formats pressures, temperatures and times
through a :class:`Display`, so a psi display is a setting, not a rewrite. ``--json`` stays SI
and never passes through here.
"""

from __future__ import annotations

import datetime as dt
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from benchwarden.errors import InputError
from benchwarden.units import ATM_PA, T0_K, fmt_hours, fmt_pressure

if TYPE_CHECKING:  # pragma: no cover
    from benchwarden.storage.profile import Profile

__all__ = ["PRESSURE_UNITS", "Display", "display_for", "profile_display"]

#: Pressure units a person can choose for display (gauge marked (g)/psig, absolute (a)/psia).
PRESSURE_UNITS: tuple[str, ...] = ("bar", "psi", "kPa", "MPa")


@dataclass(frozen=True)
class Display:
    """Display settings: the pressure unit and the ambient pressure gauge readings refer to."""

    pressure_unit: str = "bar"
    ambient_pa: float = ATM_PA

    def gauge(self, abs_pa: float) -> str:
        """A pressure as gauge, e.g. ``"64.0 bar(g)"`` or ``"928 psig"``."""
        return fmt_pressure(abs_pa, self.ambient_pa, self.pressure_unit, "gauge")

    def absolute(self, abs_pa: float) -> str:
        """A pressure as absolute, e.g. ``"1.013 bar(a)"`` or ``"14.70 psia"``."""
        return fmt_pressure(abs_pa, self.ambient_pa, self.pressure_unit, "absolute")

    def both(self, abs_pa: float) -> str:
        """Gauge and absolute: ``"64.0 bar(g) = 65.0 bar(a)"``; low pressures absolute in mbar."""
        if abs_pa < 1e4 and self.pressure_unit == "bar":
            return f"{self.gauge(abs_pa)} = {fmt_pressure(abs_pa, self.ambient_pa, 'mbar', 'absolute')}"
        return f"{self.gauge(abs_pa)} = {self.absolute(abs_pa)}"

    @property
    def gauge_label(self) -> str:
        """The gauge unit label alone: ``bar(g)``, ``psig``, ``kPa(g)``."""
        return "psig" if self.pressure_unit == "psi" else f"{self.pressure_unit}(g)"

    def gauge_number(self, abs_pa: float) -> str:
        """A gauge pressure's number alone, in the display unit (for compact tables)."""
        return self.gauge(abs_pa).rsplit(" ", 1)[0]

    def next_unit(self) -> Display:
        """The same display in the next pressure unit of :data:`PRESSURE_UNITS` (a key cycles them)."""
        i = PRESSURE_UNITS.index(self.pressure_unit) if self.pressure_unit in PRESSURE_UNITS else -1
        return Display(PRESSURE_UNITS[(i + 1) % len(PRESSURE_UNITS)], self.ambient_pa)

    def difference(self, dp_pa: float) -> str:
        """A pressure difference (a drop, a band): no (g)/(a) mark."""
        from benchwarden.units import pressure_factor

        v = dp_pa / pressure_factor(self.pressure_unit)
        digits = 1 if abs(v) >= 10 else (2 if abs(v) >= 1 else 3)
        return f"{v:.{digits}f} {self.pressure_unit}"

    @staticmethod
    def temperature(kelvin: float) -> str:
        return f"{kelvin - T0_K:.1f} °C"

    @staticmethod
    def temperature_change(dk: float) -> str:
        """A temperature difference, in kelvin: ``"−31.5 K"``."""
        return f"{dk:+.1f} K"

    @staticmethod
    def hours(h: float) -> str:
        return fmt_hours(h)

    @staticmethod
    def clock(when: str | dt.datetime | None, now: dt.datetime | None = None) -> str:
        """A time for people: ``15:29`` today, ``Wed 15:29`` within a week, ``Wed 9 Dec 15:29``
        beyond (local time; ISO 8601 stays in machine formats).

        >>> n = dt.datetime(2026, 12, 1, 9, 0)
        >>> Display.clock("2026-12-01T15:29", n), Display.clock("2026-12-02T15:29", n)
        ('15:29', 'Wed 15:29')
        >>> Display.clock("2026-12-09T15:29", n)
        'Wed 9 Dec 15:29'
        """
        if when is None:
            return "—"
        t = dt.datetime.fromisoformat(when) if isinstance(when, str) else when
        now = now or dt.datetime.now(t.tzinfo)
        if t.tzinfo is not None and now.tzinfo is None:
            now = now.replace(tzinfo=t.tzinfo)
        elif t.tzinfo is None and now.tzinfo is not None:
            t = t.replace(tzinfo=now.tzinfo)
        days = (t.date() - now.date()).days
        if days == 0:
            return t.strftime("%H:%M")
        if 0 < days < 7:
            return t.strftime("%a %H:%M")
        return f"{t:%a} {t.day} {t:%b %H:%M}"

    @staticmethod
    def ago(days: float) -> str:
        """How long ago, in the largest sensible unit: ``25 min ago``, ``5 h ago``, ``3 days ago``.

        >>> Display.ago(0.0), Display.ago(0.2), Display.ago(3.4)
        ('0 min ago', '5 h ago', '3 days ago')
        """
        if not isinstance(days, (int, float)) or not math.isfinite(days):
            return "—"
        hours = days * 24
        if hours < 1:
            return f"{max(0, round(hours * 60))} min ago"
        if hours < 48:
            return f"{round(hours)} h ago"
        return f"{round(days)} days ago"

    @staticmethod
    def percent(x: float, digits: int = 1) -> str:
        return "—" if not math.isfinite(x) else f"{x:.{digits}f} %"


def display_for(pressure_unit: str | None, ambient_pa: float = ATM_PA) -> Display:
    """A :class:`Display`, checking the pressure unit against :data:`PRESSURE_UNITS`."""
    unit = (pressure_unit or "bar").strip()
    match = {u.lower(): u for u in PRESSURE_UNITS}.get(unit.lower())
    if match is None:
        raise InputError(f"display pressure unit {unit!r} is not one of {', '.join(PRESSURE_UNITS)}")
    return Display(match, ambient_pa)


def profile_display(prof: Profile | None, pressure_unit: str | None = None) -> Display:
    """The display of a bench: the unit given (e.g. ``--pressure-unit``), else the profile's
    ``[display] pressure_unit``, with the profile's ambient pressure."""
    if prof is None:
        return display_for(pressure_unit)
    return display_for(pressure_unit or prof.display.pressure_unit, prof.ambient_pa)


def live_text(lv: Any, d: Display, today: dt.date | None = None) -> str:
    """One line for a supply's live gauge (a :class:`benchwarden.workflows.session.LiveSupply`):
    its latest sample (with its date when it is not from ``today``, by default the computer's),
    the latest sample set aside, the leak watch, or that it fell silent."""
    from benchwarden.render.numbers import fmt_uncertain

    parts = []
    if lv.silent:
        parts.append(f"gauge SILENT ({lv.silent})")
    if lv.sample is not None:
        at = lv.sample.at
        day = today or dt.datetime.now(at.tzinfo).date()
        parts.append(f"live {d.gauge(lv.sample.pressure_abs_pa)} at "
                     f"{at.strftime('%H:%M:%S' if at.date() == day else '%Y-%m-%d %H:%M:%S')}"
                     + (f", {d.temperature(lv.sample.temperature_k)}" if lv.sample.temperature_k else ""))
    elif not lv.silent:
        parts.append("live: waiting for the first sample")
    bad = getattr(lv, "last_bad", None)
    if bad:
        parts.append(f"last sample set aside: {bad}")
    if lv.leak is not None:
        parts.append(f"leak watch {lv.leak.verdict} "
                     f"{fmt_uncertain(lv.leak.leak_rate_sccm, lv.leak.leak_rate_uncertainty_sccm, 'sccm')} "
                     f"over {d.hours((lv.leak.until - lv.leak.since).total_seconds() / 3600)}")
    return "; ".join(parts)
