"""Reading a hold-test log (CSV) into a :class:`benchwarden.core.hold.HoldLog`.

The file declares its dialect in its header: a time column (elapsed time with its unit,
``time (h)``/``elapsed_min``, or ISO 8601 timestamps), a pressure column (gauge unless the unit
is marked absolute: ``pressure (bar)``, ``pressure (bar(a))``, ``p_psia``) and an optional
temperature column (``temperature (degC)``, ``T_K``). Each column's unit is read once and turned
into an affine map (SI = a·x + b, checked on two values by the units layer), so a long log costs
one float conversion per cell; a cell that is not a plain decimal number is refused with its
row, never coerced.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import math
import re

from benchwarden.core.hold import HoldLog
from benchwarden.errors import InputError, RangeError
from benchwarden.units import parse_temperature, pressure_abs
from benchwarden.units.constants import ATM_PA, SECONDS_PER_DAY

__all__ = ["parse_log", "TIME_UNITS"]

#: Units an elapsed-time column may name in its header, in seconds.
TIME_UNITS = {"s": 1.0, "sec": 1.0, "min": 60.0, "h": 3600.0, "hr": 3600.0, "d": SECONDS_PER_DAY,
              "day": SECONDS_PER_DAY}
#: A plain decimal number, ASCII digits only (no thousands separators, no underscores, no inf/nan).
_NUMBER = re.compile(r"[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?")
#: The body of a log holding nothing but ASCII decimal numbers, separators, blanks and comment
#: lines: the only text numpy's parser is given (so it cannot read inf, nan or 1_000 as numbers).
_NUMBERS_ONLY = re.compile(r"(?:[ \t]*(?:#[^\n]*|[-+0-9.eE,; \t\r]*)\n?)*")
#: the bytes a body of plain numbers without comments is made of (the same set as _NUMBERS_ONLY)
_PLAIN_BYTES = b"-+0123456789.eE,; \t\r\n"


def _header_unit(name: str) -> tuple[str, str | None]:
    n = name.strip()
    m = re.fullmatch(r"(.*?)\s*[\(\[]\s*([^\)\]]+)\s*[\)\]]\s*", n)
    if m:
        return m.group(1).strip().lower(), m.group(2).strip()
    m = re.fullmatch(r"([A-Za-z]+)_(.+)", n)
    if m:
        return m.group(1).lower(), m.group(2)
    return n.lower(), None


def _affine(parse: object, unit: str) -> tuple[float, float]:
    """(a, b) with SI = a·x + b for values written in ``unit`` (from the units layer, at x = 1, 2)."""
    assert callable(parse)
    y1, y2 = parse(f"1 {unit}"), parse(f"2 {unit}")
    return y2 - y1, y1 - (y2 - y1)


def _number(cell: str) -> float:
    c = cell.strip()
    if not _NUMBER.fullmatch(c):
        raise ValueError(f"{c!r} is not a plain decimal number")
    return float(c)


def _columns(header: list[tuple[str, str | None]], raw: list[str]) -> tuple[int, int, int | None]:
    idx_t = idx_p = idx_T = None
    for i, (name, _) in enumerate(header):
        if idx_t is None and name in ("t", "time", "elapsed", "timestamp", "datetime", "date"):
            idx_t = i
        elif idx_p is None and name in ("p", "pressure", "reading", "gauge"):
            idx_p = i
        elif idx_T is None and (name in ("temperature", "temp", "t_c", "t_k") or (name == "t" and idx_t is not None)):
            idx_T = i
    if idx_t is None or idx_p is None:
        raise InputError("log header needs a time column (time/elapsed/timestamp) and a pressure column "
                         f"(pressure/p); got {', '.join(raw)}")
    return idx_t, idx_p, idx_T


def _rows(text: str) -> tuple[list[list[str]], str]:
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise InputError("the log is empty; it needs a header row and at least two readings")
    delimiter = ";" if lines[0].count(";") > lines[0].count(",") else ","
    rows = [r for r in csv.reader(io.StringIO("\n".join(lines)), delimiter=delimiter) if r and any(c.strip() for c in r)]
    if len(rows) < 3:
        raise InputError("the log needs a header row and at least two readings")
    width = len(rows[0])
    for n, r in enumerate(rows[1:], start=2):
        if len(r) != width:
            raise InputError(f"log row {n} has {len(r)} fields where the header has {width}: write numbers with a "
                             "decimal point and no thousands separators")
        if delimiter == ";" and any("," in c for c in r):
            raise InputError(f"log row {n}: decimal commas are not read; write decimal points (e.g. 150.5)")
    return rows, delimiter


def _fast(text: str, delimiter: str, cols: tuple[int, int, int | None], scale: tuple[float, ...],
          width: int) -> HoldLog | None:
    """A log of plain numbers read by numpy's C parser in one pass; None whenever anything is
    unusual (a timestamp, a non-number, an empty cell, a decreasing time, a pressure below
    vacuum): then the row-by-row reader runs and names the row."""
    import numpy as np

    idx_t, idx_p, idx_T = cols
    t_f, p_a, p_b, T_a, T_b = scale
    use = [idx_t, idx_p] if idx_T is None else [idx_t, idx_p, idx_T]
    try:
        full = np.loadtxt(io.StringIO(text), delimiter=delimiter, skiprows=1, comments="#", ndmin=2, dtype=float,
                          encoding=None)
    except ValueError:
        return None
    if full.shape[0] < 2 or full.shape[1] != width or not np.isfinite(full).all():
        return None
    d = full[:, use]
    t = d[:, 0] * t_f
    p = d[:, 1] * p_a + p_b
    T = d[:, 2] * T_a + T_b if idx_T is not None else None
    if (np.diff(t) <= 0).any() or (p < 0).any() or (T is not None and ((T <= 0) | (T >= 1e4)).any()):
        return None
    return HoldLog(t, p, T)


def _first_line(text: str) -> str | None:
    """The first line that is not blank or a comment, looked for in the log's head first (a long
    log is split into lines only when its head holds no such line whole)."""
    for split in (lambda: text[:8192].splitlines()[:-1], text.splitlines):
        found = next((ln for ln in split() if ln.strip() and not ln.lstrip().startswith("#")), None)
        if found is not None:
            return found
    return None


def _plain_numbers(body: str) -> bool:
    """Whether a log's body holds nothing but ASCII decimal numbers, separators, blanks and
    comment lines (see ``_NUMBERS_ONLY``); without comments, one pass over its bytes."""
    if "#" in body:
        return _NUMBERS_ONLY.fullmatch(body) is not None
    return body.isascii() and not body.encode("ascii").translate(None, _PLAIN_BYTES)


def parse_log(text: str, pressure_unit: str | None = None, ambient_pa: float = ATM_PA) -> HoldLog:
    """Read a hold-test log (see the module docstring); errors name the row."""
    first = _first_line(text)
    if first is None:
        raise InputError("the log is empty; it needs a header row and at least two readings")
    delimiter = ";" if first.count(";") > first.count(",") else ","
    raw = next(csv.reader([first], delimiter=delimiter))
    header = [_header_unit(h) for h in raw]
    idx_t, idx_p, idx_T = _columns(header, raw)
    t_unit = header[idx_t][1]
    p_unit = pressure_unit or header[idx_p][1]
    if not p_unit:
        raise InputError("the pressure unit is missing: put it in the header, e.g. 'pressure (bar)', or use --pressure-unit")
    p_a, p_b = _affine(lambda s: pressure_abs(s, ambient_pa), p_unit)
    T_a, T_b = _affine(parse_temperature, header[idx_T][1] or "degC") if idx_T is not None else (1.0, 0.0)
    t_factor = TIME_UNITS.get((t_unit or "").lower())
    body = text[text.index(first) + len(first):]
    if t_factor is not None and not text[:text.index(first)].strip() and _plain_numbers(body) \
            and (delimiter == "," or "," not in body):
        fast = _fast(text, delimiter, (idx_t, idx_p, idx_T), (t_factor, p_a, p_b, T_a, T_b), len(raw))
        if fast is not None:
            return fast
    rows, _ = _rows(text)
    ts: list[float] = []
    ps: list[float] = []
    Ts: list[float] = []
    t0: dt.datetime | None = None
    for n, r in enumerate(rows[1:], start=2):
        raw_t = r[idx_t].strip()
        try:
            if t_factor is not None:
                tv = _number(raw_t) * t_factor
            else:
                try:
                    stamp = dt.datetime.fromisoformat(raw_t)
                except ValueError:
                    raise InputError("time is neither a number with a unit in the header nor an ISO timestamp") from None
                if t0 is not None and (stamp.tzinfo is None) != (t0.tzinfo is None):
                    raise InputError("timestamps mix local times and times with a UTC offset; give all one way")
                t0 = t0 or stamp
                tv = (stamp - t0).total_seconds()
            pv = p_a * _number(r[idx_p]) + p_b
            if pv < 0:
                raise InputError(f"pressure {r[idx_p].strip()} {p_unit} is below vacuum")
            if idx_T is not None:
                if not r[idx_T].strip():
                    raise InputError("temperature is empty")
                Tv = T_a * _number(r[idx_T]) + T_b
                if not 0 < Tv < 1e4:
                    raise InputError(f"temperature {r[idx_T].strip()} is below absolute zero or beyond 10 000 K")
                Ts.append(Tv)
        except (InputError, ValueError, IndexError) as exc:
            if isinstance(exc, RangeError):  # keeps its data: worded in the display unit
                raise exc.located(f"log row {n}") from None
            raise InputError(f"log row {n}: {exc}") from None
        if not math.isfinite(tv):
            raise InputError(f"log row {n}: time is not a finite number")
        if ts and tv <= ts[-1]:
            raise InputError(f"log row {n}: time {raw_t} is not after the previous row's")
        ts.append(tv)
        ps.append(pv)
    return HoldLog(ts, ps, Ts if idx_T is not None else None)
