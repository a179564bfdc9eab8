"""Lines of text from a serial transducer or a growing log, read strictly as their source declares.

A line is either read exactly as its profile section says — columns split by ``delimiter``, the
value in ``value_column`` with ``decimal`` as its decimal mark, the time in ``time_column`` in
``time_format`` (and ``timezone`` where the stamp has no offset), or the named groups ``value``,
``unit`` and ``time`` of ``pattern`` — or it is refused with the reason (:class:`LineError`),
never coerced into a number. Nothing is guessed: a line with a channel prefix, a decimal comma
where a point is declared, or two value columns where none is named is refused, the way
``csv`` takes an explicit delimiter and ``strptime`` refuses what does not match.

:class:`Splitter` cuts a byte stream into lines at CR, LF or CRLF (a CRLF split across two reads
is one line end), and never holds more than :data:`MAX_LINE_BYTES` of an unfinished line.
A ``pattern`` is matched with a time limit (:data:`PATTERN_TIMEOUT_S`, the ``regex`` package's
``timeout``), so a pattern that backtracks catastrophically makes a bad sample, not a hang.
"""

from __future__ import annotations

import csv
import datetime as dt
import math
import re
from dataclasses import dataclass, field
from typing import Any

from benchwarden.errors import InputError

__all__ = ["MAX_LINE_BYTES", "PATTERN_TIMEOUT_S", "OVERLONG", "LineError", "Dialect", "Parsed", "Splitter",
           "parse_number", "parse_time", "parse_line", "split_columns"]

#: A line longer than this [bytes] is a bad sample; an unfinished line never grows past it.
MAX_LINE_BYTES = 4096
#: Longest time one line may take to match a profile's ``pattern`` [s].
PATTERN_TIMEOUT_S = 0.05
#: What :class:`Splitter` gives for a line longer than :data:`MAX_LINE_BYTES` (its bytes dropped).
OVERLONG = b"\x00overlong"

_NUMBER = {".": re.compile(r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"),
           ",": re.compile(r"[-+]?(?:\d+(?:,\d*)?|,\d+)(?:[eE][-+]?\d+)?")}
_UNIT = re.compile(r"[A-Za-z°µ%][A-Za-z0-9°µ%()/.]*")


class LineError(InputError):
    """A line that does not read as its source declares (the message is the sample's reason)."""


@dataclass(frozen=True)
class Dialect:
    """How a source's lines are written (the profile keys of the same names)."""

    delimiter: str | None = None
    decimal: str = "."
    time_column: int | str | None = None
    value_column: int | str | None = None
    time_format: str = "iso8601"
    timezone: str | None = None
    header_lines: int = 0
    pattern: str | None = None
    _compiled: Any = field(default=None, compare=False, repr=False)

    def __post_init__(self) -> None:
        if self.pattern is not None:
            import regex

            object.__setattr__(self, "_compiled", regex.compile(self.pattern))

    @classmethod
    def of(cls, src: Any) -> Dialect:
        """The dialect a profile's source section declares."""
        return cls(src.delimiter, src.decimal, src.time_column, src.value_column, src.time_format, src.timezone,
                   src.header_lines, src.pattern)

    def zone(self) -> dt.tzinfo | None:
        if self.timezone is None:
            return None
        from zoneinfo import ZoneInfo

        return ZoneInfo(self.timezone)


@dataclass(frozen=True)
class Parsed:
    """What one line says: the value as written, its unit when the line has one, its time stamp
    when the dialect declares one."""

    value: float
    unit: str | None = None
    at: dt.datetime | None = None


def parse_number(text: str, decimal: str = ".") -> tuple[float, str | None]:
    """A number written with ``decimal`` as its decimal mark, optionally followed by a unit.

    >>> parse_number("63.87 bar"), parse_number("63,75", ",")
    ((63.87, 'bar'), (63.75, None))
    >>> parse_number("63,75 bar")
    Traceback (most recent call last):
    ...
    benchwarden.live.lines.LineError: '63,75 bar' is not a number with a decimal point (decimal = ".")
    """
    s = text.strip()
    m = _NUMBER[decimal].match(s)
    rest = s[m.end():].strip() if m else s
    if m is None or (rest and not _UNIT.fullmatch(rest)):
        mark = "point" if decimal == "." else "comma"
        raise LineError(f"{_show(text)} is not a number with a decimal {mark} (decimal = \"{decimal}\")")
    x = float(m.group(0).replace(",", "."))
    if not math.isfinite(x):
        raise LineError(f"{_show(text)} is not a finite number")
    return x, rest or None


def parse_time(text: str, fmt: str, zone: dt.tzinfo | None) -> dt.datetime:
    """A time stamp in ``fmt`` (``iso8601`` with a space or ``T`` between date and time,
    ``epoch`` seconds, ``epoch-ms``, or a strftime pattern); a stamp without an offset is in
    ``zone`` (None: the computer's zone).

    >>> parse_time("2026-12-02 09:00:00", "iso8601", dt.UTC).isoformat()
    '2026-12-02T09:00:00+00:00'
    >>> parse_time("1764666000", "epoch", None).astimezone(dt.UTC).isoformat()
    '2025-12-02T09:00:00+00:00'
    """
    s = text.strip()
    try:
        if fmt in ("epoch", "epoch-ms"):
            if not re.fullmatch(r"\d+(?:\.\d+)?", s):
                raise ValueError
            return dt.datetime.fromtimestamp(float(s) / (1000.0 if fmt == "epoch-ms" else 1.0), dt.UTC)
        if fmt == "iso8601":
            if not re.fullmatch(r"\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?(?:Z|[+-]\d{2}:?\d{2})?", s):
                raise ValueError
            at = dt.datetime.fromisoformat(s.replace(",", ".").replace("Z", "+00:00"))
        else:
            at = dt.datetime.strptime(s, fmt)
    except (ValueError, OverflowError, OSError):
        raise LineError(f"time {_show(s)} is not in the declared time_format {fmt!r}") from None
    if at.tzinfo is None:
        at = at.replace(tzinfo=zone) if zone is not None else at.astimezone()
    return at


def _show(text: str) -> str:
    return repr(text[:40] + ("…" if len(text) > 40 else ""))


def split_columns(line: str, delimiter: str) -> list[str]:
    if delimiter == "whitespace":
        return line.split()
    return next(csv.reader([line], delimiter="\t" if delimiter in ("\t", "\\t") else delimiter))


def _index(col: int | str, header: list[str] | None, key: str) -> int:
    if isinstance(col, int):
        return col - 1
    if header is None:
        raise LineError(f"{key} {col!r} is a header name but the source has no header line (header_lines)")
    names = [h.strip() for h in header]
    if col not in names:
        raise LineError(f"{key} {col!r} is not in the header ({', '.join(repr(n) for n in names[:8])})")
    return names.index(col)


def _match(d: Dialect, line: str) -> Parsed:
    try:
        m = d._compiled.search(line, timeout=PATTERN_TIMEOUT_S)
    except TimeoutError:
        raise LineError(f"the pattern took longer than {PATTERN_TIMEOUT_S:g} s on the line {_show(line)}") from None
    if m is None:
        raise LineError(f"line {_show(line)} does not match the pattern")
    groups = m.groupdict()
    value, unit = parse_number(groups["value"] or "", d.decimal)
    if groups.get("unit"):
        if unit is not None:
            raise LineError(f"line {_show(line)} has two units ({unit!r} and {groups['unit']!r})")
        unit = groups["unit"].strip()
    at = parse_time(groups["time"], d.time_format, d.zone()) if groups.get("time") else None
    return Parsed(value, unit, at)


def parse_line(line: str, dialect: Dialect, header: list[str] | None = None) -> Parsed:
    """Read one line as ``dialect`` declares it (raises :class:`LineError` with the reason).

    >>> parse_line("2026-12-02 09:00:00,64.02", Dialect(",", time_column=1, value_column=2, timezone="UTC"))
    Parsed(value=64.02, unit=None, at=datetime.datetime(2026, 12, 2, 9, 0, tzinfo=zoneinfo.ZoneInfo(key='UTC')))
    """
    text = line.strip()
    if dialect.pattern is not None:
        return _match(dialect, text)
    if dialect.delimiter is None:
        value, unit = parse_number(text, dialect.decimal)
        return Parsed(value, unit)
    cells = split_columns(text, dialect.delimiter)
    t_i = _index(dialect.time_column, header, "time_column") if dialect.time_column is not None else None
    if dialect.value_column is not None:
        v_i = _index(dialect.value_column, header, "value_column")
    else:
        others = [i for i in range(len(cells)) if i != t_i]
        if len(others) != 1:
            raise LineError(f"line {_show(text)} has {len(others)} value columns; say which one with value_column")
        v_i = others[0]
    if max(v_i, t_i if t_i is not None else 0) >= len(cells):
        raise LineError(f"line {_show(text)} has {len(cells)} column(s), fewer than declared")
    value, unit = parse_number(cells[v_i], dialect.decimal)
    at = parse_time(cells[t_i], dialect.time_format, dialect.zone()) if t_i is not None else None
    return Parsed(value, unit, at)


class Splitter:
    """Cuts bytes into lines at CR, LF or CRLF; an unfinished line is kept up to
    :data:`MAX_LINE_BYTES`, beyond that it is dropped and given once as :data:`OVERLONG`."""

    def __init__(self) -> None:
        self.partial = bytearray()
        self.after_cr = False
        self.dropping = False

    def feed(self, data: bytes) -> list[bytes]:
        out: list[bytes] = []
        i = 0
        if self.after_cr and data[:1] == b"\n":
            i = 1  # the LF of a CRLF split across two reads
        self.after_cr = False
        n = len(data)
        while i < n:
            j = _next_end(data, i)
            if j < 0:
                self._keep(data[i:], out)
                break
            self._keep(data[i:j], out)
            if not self.dropping:
                out.append(bytes(self.partial))
            self.partial.clear()
            self.dropping = False
            if data[j] == 13:
                if j + 1 < n and data[j + 1] == 10:
                    j += 1
                elif j + 1 == n:
                    self.after_cr = True
            i = j + 1
        return out

    def _keep(self, piece: bytes, out: list[bytes]) -> None:
        if self.dropping:
            return
        if len(self.partial) + len(piece) > MAX_LINE_BYTES:
            out.append(OVERLONG)
            self.partial.clear()
            self.dropping = True
            return
        self.partial += piece

    def flush(self) -> list[bytes]:
        """The unfinished line as a line (its file ended: rotated away)."""
        out = [bytes(self.partial)] if self.partial and not self.dropping else []
        self.partial.clear()
        self.after_cr = self.dropping = False
        return out


def _next_end(data: bytes, start: int) -> int:
    cr, lf = data.find(b"\r", start), data.find(b"\n", start)
    if cr < 0:
        return lf
    if lf < 0:
        return cr
    return min(cr, lf)
