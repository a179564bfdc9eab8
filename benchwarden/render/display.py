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
from benchwarden.units import ATM_PA, T0_K, pressure_factor

if TYPE_CHECKING:  # pragma: no cover
    from benchwarden.storage.profile import Profile

__all__ = ["PRESSURE_UNITS", "Display", "display_for", "profile_display", "fmt_hours", "live_text", "open_hold_text",
           "cylinder_text", "lab_link_text"]

#: Pressure units a person can choose for display (gauge marked (g)/psig, absolute (a)/psia).
PRESSURE_UNITS: tuple[str, ...] = ("bar", "psi", "kPa", "MPa")


def fmt_hours(hours: float) -> str:
    """Hours for people: ``"3 h 12 min"``, ``"2 d 0 h"`` (``"never"`` for infinity).

    >>> fmt_hours(3.2), fmt_hours(48.5), fmt_hours(float("inf")), fmt_hours(1e300)
    ('3 h 12 min', '2 d 0 h', 'never', 'more than ten years')
    """
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


@dataclass(frozen=True)
class Display:
    """Display settings: the pressure unit and the ambient pressure gauge readings refer to."""

    pressure_unit: str = "bar"
    ambient_pa: float = ATM_PA

    def gauge(self, abs_pa: float, step_pa: float | None = None) -> str:
        """A pressure as gauge, e.g. ``"64.0 bar(g)"`` or ``"928 psig"``; with the gauge's
        ``step_pa`` (what its reading means: see ``workflows.holds.reading_step_pa``), no more
        decimals than the gauge resolves, in every unit.

        >>> d = Display("psi")
        >>> d.gauge(198e5 + ATM_PA), d.gauge(198e5 + ATM_PA, 5e5)
        ('2872 psig', '2872 psig')
        >>> Display("kPa").gauge(198e5 + ATM_PA, 5e4), Display("MPa").gauge(198e5 + ATM_PA, 5e4)
        ('19800 kPa(g)', '19.80 MPa(g)')
        >>> Display().gauge(64e5 + ATM_PA, 5e5), Display().gauge(64e5 + ATM_PA, 1e3)
        ('64 bar(g)', '64.00 bar(g)')
        """
        return self._fixed(abs_pa - self.ambient_pa, step_pa, self.gauge_label)

    def absolute(self, abs_pa: float) -> str:
        """A pressure as absolute, e.g. ``"1.013 bar(a)"`` or ``"14.70 psia"``."""
        return self._fixed(abs_pa, None, "psia" if self.pressure_unit == "psi" else f"{self.pressure_unit}(a)")

    def _fixed(self, pa: float, step_pa: float | None, label: str) -> str:
        """A pressure in the display unit: decimals from the step when given, else by size (one
        decimal from 10, none from 1000), never a thousands separator."""
        f = pressure_factor(self.pressure_unit)
        v = pa / f
        if step_pa is not None and math.isfinite(step_pa) and step_pa > 0:
            digits = max(0, -math.floor(math.log10(step_pa / f) + 1e-9))
        elif not math.isfinite(v):
            return f"— {label}"
        else:
            digits = 0 if abs(v) >= 1000 else 1 if abs(v) >= 10 else (2 if abs(v) >= 1 else 3)
        text = f"{v:.{digits}f}"
        if text.lstrip("-").strip("0.") == "":
            text = text.lstrip("-")  # no "-0.0"
        return f"{text} {label}"

    def both(self, abs_pa: float) -> str:
        """Gauge and absolute: ``"64.0 bar(g) = 65.0 bar(a)"``; low pressures absolute in mbar."""
        if abs_pa < 1e4 and self.pressure_unit == "bar":
            return f"{self.gauge(abs_pa)} = {Display('mbar', self.ambient_pa).absolute(abs_pa)}"
        return f"{self.gauge(abs_pa)} = {self.absolute(abs_pa)}"

    def gauge_value(self, abs_pa: float) -> float:
        """A pressure as a gauge number in the display unit, for a plot's axis.

        >>> Display("psi").gauge_value(198e5 + ATM_PA), Display().gauge_value(ATM_PA + 5e5)
        (2871.7..., 5.0)
        """
        return (abs_pa - self.ambient_pa) / pressure_factor(self.pressure_unit)

    @property
    def gauge_label(self) -> str:
        """The gauge unit label alone: ``bar(g)``, ``psig``, ``kPa(g)``."""
        return "psig" if self.pressure_unit == "psi" else f"{self.pressure_unit}(g)"

    def gauge_number(self, abs_pa: float, step_pa: float | None = None) -> str:
        """A gauge pressure's number alone, in the display unit (for compact tables)."""
        return self.gauge(abs_pa, step_pa).rsplit(" ", 1)[0]

    def next_unit(self) -> Display:
        """The same display in the next pressure unit of :data:`PRESSURE_UNITS` (a key cycles them)."""
        i = PRESSURE_UNITS.index(self.pressure_unit) if self.pressure_unit in PRESSURE_UNITS else -1
        return Display(PRESSURE_UNITS[(i + 1) % len(PRESSURE_UNITS)], self.ambient_pa)

    def difference(self, dp_pa: float) -> str:
        """A pressure difference (a drop, a band): no (g)/(a) mark."""
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
    def elapsed(seconds: float) -> str:
        """Time elapsed as a running clock, ``h:mm:ss``.

        >>> Display.elapsed(3905.7)
        '1:05:05'
        """
        s = max(0, int(seconds))
        return f"{s // 3600}:{s % 3600 // 60:02d}:{s % 60:02d}"

    @staticmethod
    def clock(when: str | dt.datetime | None, now: dt.datetime | None = None) -> str:
        """A time for people: ``15:29`` today; any other day with its weekday and date, ``Wed 2 Dec
        15:29`` (local time; ISO 8601 stays in machine formats).

        >>> n = dt.datetime(2026, 12, 1, 9, 0)
        >>> Display.clock("2026-12-01T15:29", n), Display.clock("2026-12-02T15:29", n)
        ('15:29', 'Wed 2 Dec 15:29')
        >>> Display.clock("2026-11-30T18:00", n), Display.clock("2019-03-04T09:15", n)
        ('Mon 30 Nov 18:00', 'Mon 4 Mar 09:15')
        """
        if when is None:
            return "—"
        t = dt.datetime.fromisoformat(when) if isinstance(when, str) else when
        now = now or dt.datetime.now(t.tzinfo)
        if t.tzinfo is not None and now.tzinfo is None:
            now = now.replace(tzinfo=t.tzinfo)
        elif t.tzinfo is None and now.tzinfo is not None:
            t = t.replace(tzinfo=now.tzinfo)
        elif t.tzinfo is not None and now.tzinfo is not None:
            t = t.astimezone(now.tzinfo)
        if t.date() == now.date():
            return t.strftime("%H:%M")
        return f"{t:%a} {t.day} {t:%b %H:%M}"

    @staticmethod
    def short_clock(when: dt.datetime, now: dt.datetime) -> str:
        """A compact time for a narrow column: ``15:29`` today, else ``2 Dec 15:29``.

        >>> n = dt.datetime(2026, 12, 1, 9, 0)
        >>> Display.short_clock(dt.datetime(2026, 12, 1, 23, 5), n), Display.short_clock(dt.datetime(2026, 12, 3, 1, 0), n)
        ('23:05', '3 Dec 01:00')
        """
        if when.date() == now.date():
            return when.strftime("%H:%M")
        return f"{when.day} {when:%b %H:%M}"

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


def open_hold_text(h: Any, d: Display, now: dt.datetime, step_pa: float | None = None) -> str:
    """One line for a hold test started and not finished (a
    :class:`benchwarden.workflows.hold_runs.OpenHold`): ``hold test on n2-A started at 18:02
    with 62.0 bar(g); finish after 12 h 00 min (Thu 3 Dec 06:02)``, or ``due now``."""
    due = "due now" if h.due(now) else f"finish after {fmt_hours(h.hold_s / 3600)} ({Display.clock(h.due_at, now)})"
    return f"hold test on {h.supply_id} started at {Display.clock(h.at, now)} with {d.gauge(h.pressure_abs_pa, step_pa)}; {due}"


def cylinder_text(c: Any, d: Display, now: dt.datetime) -> str:
    """One line for a cylinder of a supply (a :class:`benchwarden.workflows.record.CylinderLife`):
    ``N2-0417 · fill 198 bar · Tue 1 Dec 09:30 → in use · 4 readings · 1.25 kg used · 1 hold
    test · retest 2031-05-01``."""
    since = Display.clock(c.since, now) if c.since else "first record"
    until = Display.clock(c.until, now) if c.until else "in use"
    used = f"{c.gas_used_kg:.2f} kg used" if c.gas_used_kg is not None else "gas used: needs two readings"
    return "  ·  ".join([c.label or "no label", f"fill {c.fill_text or '—'}", f"{since} → {until}",
                         f"{c.readings} reading(s)", used, f"{c.hold_tests} hold test(s)",
                         f"retest {c.retest_due or 'not recorded'}"])


def lab_link_text(link: Any, now: dt.datetime) -> str:
    """How the background push to the lab stands (a :class:`~benchwarden.workflows.lab.LabLink`):
    when the lab last received this bench's record, by the server's clock, and why not now.

    >>> from types import SimpleNamespace as L
    >>> n = dt.datetime(2026, 12, 1, 9, 30, tzinfo=dt.UTC)
    >>> lab_link_text(L(received_at=dt.datetime(2026, 12, 1, 9, 25, tzinfo=dt.UTC), error=None,
    ...                 retry_in_s=240.0, events_sent=12), n)
    'lab: last received 09:25 (12 event(s) this run)'
    >>> lab_link_text(L(received_at=None, error="lab database x cannot be reached: refused", retry_in_s=125.0,
    ...                 events_sent=0), n)
    'lab: nothing received yet; not reachable (lab database x cannot be reached: refused), retry in 2 min'
    """
    head = ("lab: last received " + Display.clock(link.received_at, now)
            + f" ({link.events_sent} event(s) this run)") if link.received_at else "lab: nothing received yet"
    if not link.error:
        return head
    wait = link.retry_in_s
    again = f"{wait:.0f} s" if wait < 90 else (f"{wait / 60:.0f} min" if wait < 5400 else f"{wait / 3600:.1f} h")
    return f"{head}; not reachable ({link.error[:80]}), retry in {again}"
