"""Ranges at the edge: one helper that refuses a value outside what is physical, what a method
covers, or what makes sense, and raises a :class:`~benchwarden.errors.RangeError` that carries its
data (what, the value in SI, the bounds, the unit, why) besides one line of words; the same for
dates and for options that exclude each other.

Text checks shared by every reader of typed text live here too: a quantity's length, ASCII digits,
and invisible format characters (bidi overrides and isolates, zero-width characters).
"""

from __future__ import annotations

import datetime as dt
import re
import unicodedata
from collections.abc import Sequence
from dataclasses import dataclass

from benchwarden.errors import ConflictError, InputError, RangeError
from benchwarden.units.constants import SCCM_PER_M3_S

__all__ = ["within", "in_range", "Range", "RANGES", "within_dates", "conflict", "plain_number", "MAX_QUANTITY_CHARS", "check_quantity_text", "text_problem",
           "EARLIEST_RECORD", "RETEST_HORIZON_YEARS", "MIN_FLOW"]

#: A quantity a person types is short ("152.5 bar(a)"); anything longer is refused before parsing.
MAX_QUANTITY_CHARS = 100
#: The oldest date a record may carry: a paper logbook's years are fine, 1970 (a zero clock) or
#: 1900 (a default date) are not (benchwarden rule).
EARLIEST_RECORD = dt.date(1990, 1, 1)
#: A flow too small to be a draw or a leak [standard m³/s, m³/s or kg/s]: 0.001 sccm (a slip of the
#: unit or the exponent; run times of thousands of years follow from less).
MIN_FLOW = 1e-3 / SCCM_PER_M3_S
#: How far ahead a retest (periodic inspection) date may lie: intervals are at most 10 years
#: (common practice, from memory), with room for a fill dated before its stamp.
RETEST_HORIZON_YEARS = 15


def within(value: float, what: str, lo: float | None = None, hi: float | None = None, unit: str = "", *,
           why: str = "", text: str | None = None, shown: tuple[str, float] | None = None,
           lo_open: bool = False, hi_open: bool = False, words: str | None = None, lo_name: str = "",
           hi_name: str = "", where: str = "") -> float:
    """Return ``value`` (SI) if it is finite and within ``lo``..``hi`` (inclusive unless
    ``lo_open``/``hi_open``; None is no bound), else raise :class:`RangeError` naming the value as
    typed (``text``) and the range in the unit ``shown = (name, SI per unit)`` (default ``unit``);
    ``lo_name``/``hi_name`` name a bound ("the tare weight"), ``where`` what the value belongs to.
    A renderer (``render.errors.error_line``) words it for people in the display unit.

    >>> within(0.05, "cylinder volume", 0.0, 5.0, "m³", lo_open=True)
    0.05
    >>> within(7.0, "room volume", 1.0, None, "m³")
    7.0
    >>> within(0.2, "room volume", 1.0, None, "m³", text="0.2 m3", why="a room, not a box")
    Traceback (most recent call last):
    ...
    benchwarden.errors.RangeError: room volume '0.2 m3' is out of range: at least 1 m³ (a room, not a box)
    """
    finite = isinstance(value, (int, float)) and value == value and abs(value) != float("inf")
    low = lo is not None and (not finite or (value <= lo if lo_open else value < lo))
    high = hi is not None and (not finite or (value >= hi if hi_open else value > hi))
    if finite and not low and not high:
        return float(value)
    raise RangeError(what=what, value=value, lo=lo, hi=hi, unit=unit, why=why, lo_open=lo_open, hi_open=hi_open,
                     typed=text, words=words, shown=shown, lo_name=lo_name, hi_name=hi_name, where=where)


@dataclass(frozen=True)
class Range:
    """A named range [SI]: bounds (None: open), the SI unit, the words people read, why it holds."""

    lo: float | None
    hi: float | None
    unit: str
    words: str | None = None
    why: str = ""
    shown: tuple[str, float] | None = None


#: The ranges of sense and of method every interface (command line, app, profile) applies to a
#: value of that name; one table, so the app's tools and the commands never disagree.
RANGES: dict[str, Range] = {
    "cylinder volume": Range(1e-5, 5.0, "m³", "from 10 mL to 5 m³ (a cylinder bundle)"),
    "held volume": Range(1e-6, 5.0, "m³", "from 1 mL to 5 m³"),
    "purged volume": Range(1e-6, 5.0, "m³", "from 1 mL to 5 m³"),
    "room volume": Range(1.0, 1e6, "m³", why="a room a person works in"),
    "hold duration": Range(60.0, 366 * 86400.0, "s", "from 1 min to a year"),
    "session duration": Range(60.0, 31 * 86400.0, "s", "from 1 min to 31 days"),
    "run duration": Range(0.1, 366 * 86400.0, "s", "from 0.1 s to a year"),
    "temperature uncertainty": Range(0.0, 10.0, "K", why="a thermometer's standard uncertainty"),
    "gap spacing": Range(1e-5, 1.0, "m", shown=("mm", 1e-3)),
    "gap pressure": Range(100.0, 2e7, "Pa(a)"),
    "orifice diameter": Range(1e-6, 0.1, "m", "from 0.001 mm to 100 mm"),
    "line length": Range(1e-3, 1e3, "m"),
    "bore": Range(1e-4, 0.1, "m", shown=("mm", 1e-3)),
    "flow": Range(MIN_FLOW, None, "m³/s or kg/s", "at least 0.001 sccm (or 0.001 mL/min, 1.7e-11 kg/s)",
                  "a smaller flow is a slip of the unit or the exponent"),
    "target leak rate": Range(1e-3, 1e6, "sccm"),
    "repetition rate": Range(1e-3, 1e6, "Hz"),
    "per-shot volume": Range(1e-9, 1.0, "m³", "from 1 µL to 1 m³"),
}


def in_range(name: str, value: float, what: str | None = None, text: str | None = None) -> float:
    """``value`` [SI] checked against :data:`RANGES` ``[name]``; ``what`` names it in the message
    (default ``name``), ``text`` is the value as typed.

    >>> in_range("room volume", 36.0)
    36.0
    """
    r = RANGES[name]
    return within(value, what or name, r.lo, r.hi, r.unit, why=r.why, text=text, shown=r.shown, words=r.words)


def within_dates(value: dt.date, what: str, earliest: dt.date | None, latest: dt.date | None, *, why: str = "",
                 text: str | None = None) -> dt.date:
    """Return the date if it lies from ``earliest`` to ``latest`` (None: no bound), else raise
    :class:`RangeError` (value and bounds as dates).

    >>> within_dates(dt.date(2026, 3, 1), "reading time", EARLIEST_RECORD, dt.date(2026, 12, 2))
    datetime.date(2026, 3, 1)
    """
    day = value.date() if isinstance(value, dt.datetime) else value
    if (earliest is None or day >= earliest) and (latest is None or day <= latest):
        return value
    parts = ([f"from {earliest.isoformat()}"] if earliest else []) + ([f"to {latest.isoformat()}"] if latest else [])
    typed = repr(text.strip()) if text is not None else value.isoformat()
    raise RangeError(f"{what} {typed} is out of range: {' '.join(parts)}" + (f" ({why})" if why else ""),
                     what=what, value=value, lo=earliest, hi=latest, unit="date", why=why)


def conflict(given: Sequence[str], why: str = "") -> None:
    """Refuse options that exclude each other when more than one of ``given`` (their names, or
    empty strings for those not given) is set, naming them all.

    >>> conflict(["--volume", ""])
    >>> conflict(["--volume", "--line-length"], "the volume is given or computed, not both")
    Traceback (most recent call last):
    ...
    benchwarden.errors.ConflictError: --volume and --line-length exclude each other: give one (the volume is given or computed, not both)
    """
    names = tuple(n for n in given if n)
    if len(names) > 1:
        raise ConflictError(f"{', '.join(names[:-1])} and {names[-1]} exclude each other: give one"
                            + (f" ({why})" if why else ""), names=names)


def plain_number(text: str, what: str, integer: bool = False) -> float:
    """A bare number a person typed (a class, a coefficient, a port): ASCII digits, a decimal
    point, finite; ``integer`` for whole numbers.

    >>> plain_number("1.6", "gauge class"), plain_number("502", "port", integer=True)
    (1.6, 502)
    """
    check_quantity_text(text, what)
    pattern = _INT if integer else _FLOAT
    if not pattern.fullmatch(text.strip()):
        raise InputError(f"{what} {text.strip()!r} is not {'a whole number' if integer else 'a number'}"
                         + (", e.g. 502" if integer else ", e.g. 1.6 (digits 0-9 and a decimal point)"))
    return int(text) if integer else float(text)


_INT = re.compile(r"[-+]?[0-9]+")
_FLOAT = re.compile(r"[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?")


# ----------------------------------------------------------------------------- text

_BIDI = {"\u202a", "\u202b", "\u202c", "\u202d", "\u202e", "\u2066", "\u2067", "\u2068", "\u2069"}


def _char(c: str) -> str:
    return f"U+{ord(c):04X} ({unicodedata.name(c, 'unnamed').lower()})"


def text_problem(text: str, newlines: bool = True) -> str | None:
    """What makes ``text`` unfit for a terminal or a file, or None: a control character or escape
    sequence (a line break and a tab are fine where ``newlines``), or an invisible format character
    (Unicode category Cf: bidi overrides and isolates, zero-width characters) that can make a name
    display reversed or hide text.

    >>> text_problem("bench 2") is None
    True
    >>> text_problem("N2\\u202e-A")
    'an invisible format character U+202E (right-to-left override)'
    """
    for c in text:
        if (c in "\n\t" and newlines):
            continue
        cat = unicodedata.category(c)
        if cat == "Cc":
            return "control characters or escape sequences"
        if cat == "Cf" or c in _BIDI:
            return f"an invisible format character {_char(c)}"
    return None


def check_quantity_text(text: str, what: str) -> str:
    """A quantity's text before it is parsed: at most :data:`MAX_QUANTITY_CHARS` characters (so a
    huge unit costs nothing), digits 0–9 only, no control or invisible characters.

    >>> check_quantity_text(" 50 L ", "volume")
    ' 50 L '
    >>> check_quantity_text("٣ bar", "pressure")
    Traceback (most recent call last):
    ...
    benchwarden.errors.InputError: pressure '٣ bar': write numbers with the digits 0-9 (found U+0663 (arabic-indic digit three))
    """
    if len(text) > MAX_QUANTITY_CHARS:
        raise InputError(f"{what} is {len(text)} characters long; a quantity with its unit is at most "
                         f"{MAX_QUANTITY_CHARS}")
    problem = text_problem(text, newlines=False)
    if problem:
        raise InputError(f"{what} contains {problem}; type plain text")
    for c in text:
        if unicodedata.category(c) == "Nd" and not "0" <= c <= "9":
            raise InputError(f"{what} {text.strip()!r}: write numbers with the digits 0-9 (found {_char(c)})")
    return text
