"""Stored samples as CSV or JSON Lines (``benchwarden samples``): one row per sample, trace
point or hourly extreme, with the columns ``time`` (ISO 8601, UTC), ``stream``, ``kind``,
``value_si``, ``unit``, ``status`` and ``reason``."""

from __future__ import annotations

import csv
import datetime as dt
import io
import json
from collections.abc import Iterable
from typing import Any

from benchwarden.render.files import csv_cell

__all__ = ["COLUMNS", "iso_utc", "samples_csv", "samples_jsonl"]

COLUMNS = ("time", "stream", "kind", "value_si", "unit", "status", "reason")


def iso_utc(t: float) -> str:
    """A unix time as ISO 8601 in UTC, to the microsecond.

    >>> iso_utc(1796202000.25)
    '2026-12-02T09:00:00.250000Z'
    """
    return dt.datetime.fromtimestamp(t, dt.UTC).isoformat(timespec="microseconds").replace("+00:00", "Z")


def _fields(r: Any) -> list[Any]:
    return [iso_utc(r.t), r.stream, r.kind, r.value_si, r.unit, r.status, r.reason]


def samples_csv(rows: Iterable[Any]) -> str:
    """CSV with a header row; an empty ``value_si`` where nothing was read (values in ``repr``
    precision, so they read back exactly)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(COLUMNS)
    for r in rows:
        f = _fields(r)
        f[3] = "" if f[3] is None else repr(float(f[3]))
        w.writerow([csv_cell(x) for x in f])
    return buf.getvalue()


def samples_jsonl(rows: Iterable[Any]) -> str:
    """One JSON object per line with the same keys; ``value_si`` null where nothing was read."""
    return "".join(json.dumps(dict(zip(COLUMNS, _fields(r), strict=True)), ensure_ascii=False) + "\n" for r in rows)
