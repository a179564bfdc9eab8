"""A year of live samples in the journal: raw for a recent window, compressed after it.

Samples (time, value) of one **stream** — a supply's pressure or a temperature — go first into
the ``samples`` table, one row each, committed as they arrive (a killed watcher loses at most
the sample it was writing). Samples older than the raw window (two days by default) are moved,
an hour at a time, into ``sample_blocks``: each block keeps its count, its minimum and maximum
and the vertices of a piecewise-linear trace that stays within the stream's tolerance (half the
gauge's resolution) of every good sample — swinging-door compression as data historians use it
(E. H. Bristol, "Swinging door trending: adaptive trend recording?", ISA 1990), in its
feasible-slope form so that the bound holds exactly. Bad samples (``value`` NULL: out of range,
a spike, a failed read) stay in the raw window and are counted, never kept as points.

Window queries read raw rows through the primary key (stream, time) and blocks by their start
time; a plot gets the minimum and maximum per screen column, from block summaries where a
block lies inside one column (only blocks across a column edge are read vertex by vertex), so a
year costs a few thousand rows, not 31 million.
"""

from __future__ import annotations

import math
import sqlite3
import zlib
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from benchwarden.errors import InputError

if TYPE_CHECKING:
    import numpy as np

    from benchwarden.storage.journal import Journal

__all__ = ["RAW_WINDOW_S", "BLOCK_S", "GOOD", "swinging_door", "SampleStore", "Columns", "StoredRow"]

#: Samples younger than this stay raw, one row each [s].
RAW_WINDOW_S = 2 * 86400.0
#: Older samples are compressed in blocks of this length [s].
BLOCK_S = 3600.0
#: The SQL condition of a good raw sample.
GOOD = "value IS NOT NULL AND status IS NULL"

#: A sample to store: (unix time [s], value or None) for a good or bad one, or (time, value,
#: status, reason) with status ``good``, ``bad`` or ``implausible``.
Row = tuple[float, float | None] | tuple[float, float | None, str, str]


def _row(stream: int, r: Row) -> tuple[int, float, float | None, str | None, str | None]:
    if len(r) == 2:
        return stream, float(r[0]), r[1], None if r[1] is not None else "bad", None
    status = None if r[2] == "good" else r[2]
    if status not in (None, "bad", "implausible"):
        raise InputError(f"sample status {r[2]!r} is not good, bad or implausible")
    if status is None and r[1] is None:
        raise InputError("a good sample needs a value")
    return stream, float(r[0]), r[1], status, r[3] or None


@dataclass(frozen=True)
class StoredRow:
    """One row of a stream as stored: a raw sample, a trace vertex, or an hour's min or max."""

    t: float
    kind: str  # raw | trace | min | max
    value: float | None
    status: str  # good | bad | implausible
    reason: str


def swinging_door(t: Sequence[float], v: Sequence[float], tolerance: float) -> tuple[list[float], list[float]]:
    """Vertices of a piecewise-linear trace within ``tolerance`` of every (t, v) sample.

    Swinging-door trending (Bristol 1990) in its feasible-slope form: from the last vertex, the
    slopes that pass within ``±tolerance`` of every later sample form a narrowing interval (the
    two "doors"); when a sample closes it, a vertex is placed at the previous sample's time on
    the middle of the interval that was still open, and the doors start again from there. The
    first sample is kept as it is; the last vertex lies within the tolerance of the last sample.
    ``t`` must increase.

    >>> swinging_door([0, 1, 2, 3, 4], [0.0, 1.0, 2.0, 3.0, 4.0], 0.01)   # a line: its two ends
    ([0, 4], [0.0, 4.0])
    """
    n = len(t)
    if n != len(v):
        raise ValueError("times and values differ in length")
    if n <= 2:
        return list(t), list(v)
    if not tolerance > 0:
        return list(t), list(v)
    out_t = [t[0]]
    out_v = [v[0]]
    ta, va = t[0], v[0]
    lo, hi = -math.inf, math.inf
    for i in range(1, n):
        d = t[i] - ta
        s_lo = (v[i] - tolerance - va) / d
        s_hi = (v[i] + tolerance - va) / d
        new_lo = s_lo if s_lo > lo else lo
        new_hi = s_hi if s_hi < hi else hi
        if new_lo > new_hi:
            # the doors crossed: a vertex at the previous sample, on the slope still open
            tp = t[i - 1]
            vp = va + 0.5 * (lo + hi) * (tp - ta) if math.isfinite(lo) and math.isfinite(hi) else v[i - 1]
            out_t.append(tp)
            out_v.append(vp)
            ta, va = tp, vp
            d = t[i] - ta
            lo = (v[i] - tolerance - va) / d
            hi = (v[i] + tolerance - va) / d
        else:
            lo, hi = new_lo, new_hi
    # the last vertex, on the slope still open (within the tolerance of the last sample)
    out_t.append(t[-1])
    out_v.append(va + 0.5 * (lo + hi) * (t[-1] - ta))
    return out_t, out_v


def _pack(t0: float, t: Sequence[float] | np.ndarray, v: Sequence[float] | np.ndarray) -> bytes:
    import numpy as np

    offsets = (np.asarray(t, dtype=float) - t0).astype("<f4")
    return zlib.compress(offsets.tobytes() + np.asarray(v, dtype="<f8").tobytes(), 6)


def _unpack(t0: float, blob: bytes) -> tuple[np.ndarray, np.ndarray]:
    import numpy as np

    raw = zlib.decompress(blob)
    n = len(raw) // 12
    return np.frombuffer(raw[: 4 * n], dtype="<f4").astype(float) + t0, np.frombuffer(raw[4 * n:], dtype="<f8")


@dataclass(frozen=True)
class Columns:
    """A window cut into screen columns: each column's time (its middle) and the minimum and
    maximum of the stream in it (NaN where there is no good sample)."""

    t: np.ndarray
    vmin: np.ndarray
    vmax: np.ndarray


class SampleStore:
    """Samples of a journal's streams (one store per open journal)."""

    def __init__(self, journal: Journal, raw_window_s: float = RAW_WINDOW_S, block_s: float = BLOCK_S) -> None:
        self.journal = journal
        self.raw_window_s, self.block_s = raw_window_s, block_s
        self._ids: dict[tuple[str, str, str], int] = {}

    # -- streams

    def stream(self, bench: str, supply_id: str, quantity: str, tolerance: float | None = None) -> int | None:
        """The id of a stream (``quantity`` ``pressure`` [Pa abs] or ``temperature`` [K]); with
        ``tolerance`` it is created (or its tolerance updated), without it None when unknown."""
        key = (bench, supply_id, quantity)
        if tolerance is not None and not (math.isfinite(tolerance) and tolerance >= 0):
            raise InputError(f"sample tolerance {tolerance!r} must be zero or more")
        if key in self._ids and tolerance is None:
            return self._ids[key]
        row = self._q("SELECT id, tolerance FROM streams WHERE bench = ? AND supply_id = ? AND quantity = ?", key)
        if row:
            sid = int(row[0][0])
            if tolerance is not None and row[0][1] != tolerance:
                self.journal.write(lambda db: db.execute("UPDATE streams SET tolerance = ? WHERE id = ?",
                                                         (tolerance, sid)))
        elif tolerance is None:
            return None
        else:
            sid = int(self.journal.write(lambda db: db.execute(
                "INSERT INTO streams(bench, supply_id, quantity, tolerance) VALUES (?, ?, ?, ?)",
                (*key, tolerance)).lastrowid))
        self._ids[key] = sid
        return sid

    def _q(self, sql: str, args: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
        return self.journal.read(sql, args)

    # -- writing

    def add(self, stream: int, rows: Sequence[Row]) -> int:
        """Store samples (see :data:`Row`), committed before returning; a sample at a time
        already stored is ignored. Returns how many were new."""
        if not rows:
            return 0
        data: list[tuple[int, float, float | None, str | None, str | None]]
        if all(len(r) == 2 for r in rows):  # the common case, kept fast: good or bad by the value
            data = [(stream, float(r[0]), r[1], None if r[1] is not None else "bad", None) for r in rows]
        else:
            data = [_row(stream, r) for r in rows]
        return int(self.journal.write(lambda db: db.executemany(
            "INSERT OR IGNORE INTO samples(stream, t, value, status, reason) VALUES (?, ?, ?, ?, ?)",
            data).rowcount))

    def compact(self, stream: int, now: float) -> int:
        """Move whole blocks of raw samples older than the raw window into compressed blocks
        (one transaction per call); returns how many samples were moved."""
        limit = math.floor((now - self.raw_window_s) / self.block_s) * self.block_s
        tol = self._q("SELECT tolerance FROM streams WHERE id = ?", (stream,))
        if not tol:
            return 0
        tolerance = float(tol[0][0])
        first = self._q("SELECT MIN(t) FROM samples WHERE stream = ? AND t < ?", (stream, limit))[0][0]
        if first is None:
            return 0

        def move(db: sqlite3.Connection) -> int:
            moved = db.execute(f"SELECT t, CASE WHEN {GOOD} THEN value END FROM samples WHERE stream = ? AND t < ? "
                               "ORDER BY t", (stream, limit)).fetchall()
            # a log read again from its start (a restarted watcher) replays samples an hour already
            # compressed holds: only those after the hour's last stored sample join it
            covered = dict(db.execute("SELECT t0, t1 FROM sample_blocks WHERE stream = ? AND t0 >= ? AND t0 < ?",
                                      (stream, math.floor(first / self.block_s) * self.block_s, limit)).fetchall())
            rows = [r for r in moved
                    if r[0] > covered.get(math.floor(r[0] / self.block_s) * self.block_s, -math.inf)]
            blocks: list[tuple[Any, ...]] = []
            i = 0
            while i < len(rows):
                b0 = math.floor(rows[i][0] / self.block_s) * self.block_s
                j = i
                while j < len(rows) and rows[j][0] < b0 + self.block_s:
                    j += 1
                good = [r for r in rows[i:j] if r[1] is not None]
                bad = (j - i) - len(good)
                if good:
                    tt, vv = swinging_door([r[0] for r in good], [r[1] for r in good], tolerance)
                    vals = [r[1] for r in good]
                    blocks.append((stream, b0, good[-1][0], len(good), bad, min(vals), max(vals), tolerance,
                                   _pack(b0, tt, vv), good[-1][1]))
                else:
                    blocks.append((stream, b0, rows[j - 1][0], 0, bad, None, None, tolerance, b"", None))
                i = j
            merged = self._merge(db, stream, blocks)
            db.executemany("INSERT OR REPLACE INTO sample_blocks(stream, t0, t1, n, bad, vmin, vmax, tolerance, "
                           "points, vlast) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)", merged)
            db.execute("DELETE FROM samples WHERE stream = ? AND t < ?", (stream, limit))
            return len(moved)

        return int(self.journal.write(move))

    def _merge(self, db: sqlite3.Connection, stream: int, blocks: list[tuple[Any, ...]]) -> list[tuple[Any, ...]]:
        """Late samples for a block already compressed join its vertices (never overwrite it); the
        block's last value is that of its latest good sample (late rows all come after the stored
        ones). A block is (stream, t0, t1, n, bad, vmin, vmax, tolerance, points, last value)."""
        out = []
        for b in blocks:
            old = db.execute("SELECT t1, n, bad, vmin, vmax, points, vlast FROM sample_blocks WHERE stream = ? "
                             "AND t0 = ?", (stream, b[1])).fetchone()
            if old is None:
                out.append(b)
                continue
            import numpy as np

            ot, ov = _unpack(b[1], old[5]) if old[5] else (np.empty(0), np.empty(0))
            nt, nv = _unpack(b[1], b[8]) if b[8] else (np.empty(0), np.empty(0))
            t = np.concatenate([ot, nt])
            order = np.argsort(t, kind="stable")
            vmins = [x for x in (old[3], b[5]) if x is not None]
            vmaxs = [x for x in (old[4], b[6]) if x is not None]
            out.append((stream, b[1], max(old[0], b[2]), old[1] + b[3], old[2] + b[4],
                        min(vmins) if vmins else None, max(vmaxs) if vmaxs else None, b[7],
                        _pack(b[1], t[order], np.concatenate([ov, nv])[order]),
                        old[6] if b[9] is None else b[9]))  # late rows come after the stored ones
        return out

    # -- reading

    def latest(self, stream: int) -> tuple[float, float] | None:
        """The latest good sample (time, value), raw or compressed."""
        row = self._q(f"SELECT t, value FROM samples WHERE stream = ? AND {GOOD} ORDER BY t DESC LIMIT 1", (stream,))
        if row:
            return float(row[0][0]), float(row[0][1])
        blk = self._q("SELECT t0, points FROM sample_blocks WHERE stream = ? AND n > 0 ORDER BY t0 DESC LIMIT 1",
                      (stream,))
        if not blk:
            return None
        t, v = _unpack(blk[0][0], blk[0][1])
        return float(t[-1]), float(v[-1])

    def last_not_good(self, stream: int) -> tuple[float, str, str] | None:
        """The latest raw sample that is not good: (time, ``bad`` or ``implausible``, reason)."""
        row = self._q(f"SELECT t, status, reason FROM samples WHERE stream = ? AND NOT ({GOOD}) ORDER BY t DESC "
                      "LIMIT 1", (stream,))
        if not row:
            return None
        return float(row[0][0]), row[0][1] or "bad", row[0][2] or ""

    def last_time(self, stream: int) -> float | None:
        """The time of the latest sample, good or bad."""
        row = self._q("SELECT MAX(t) FROM samples WHERE stream = ?", (stream,))
        if row and row[0][0] is not None:
            return float(row[0][0])
        blk = self._q("SELECT MAX(t1) FROM sample_blocks WHERE stream = ?", (stream,))
        return float(blk[0][0]) if blk and blk[0][0] is not None else None

    def counts(self, stream: int) -> tuple[int, int, int]:
        """(raw rows, compressed samples, stored vertices) of a stream."""
        raw = self._q("SELECT COUNT(*) FROM samples WHERE stream = ?", (stream,))[0][0]
        n, pts = 0, 0
        for t0, cnt, blob in self._q("SELECT t0, n, points FROM sample_blocks WHERE stream = ?", (stream,)):
            n += cnt
            pts += len(_unpack(t0, blob)[0]) if blob else 0
        return int(raw), n, pts

    def rows(self, stream: int, t0: float, t1: float) -> list[StoredRow]:
        """Everything stored of a stream between t0 and t1, in time order: raw samples with their
        status and reason, and for compressed hours the trace vertices and the hour's minimum and
        maximum (stamped with the hour's start: a block keeps no time for them)."""
        out: list[StoredRow] = []
        for b0, n, vmin, vmax, blob in self._q(
                "SELECT t0, n, vmin, vmax, points FROM sample_blocks WHERE stream = ? AND t0 <= ? AND t1 >= ? "
                "ORDER BY t0", (stream, t1, t0)):
            if n > 0 and blob:
                t, v = _unpack(b0, blob)
                out += [StoredRow(float(a), "trace", float(b), "good", "") for a, b in zip(t, v, strict=True)
                        if t0 <= a <= t1]
            if vmin is not None and t0 <= b0 <= t1:
                out += [StoredRow(float(b0), "min", float(vmin), "good", ""),
                        StoredRow(float(b0), "max", float(vmax), "good", "")]
        for t, value, status, reason in self._q(
                "SELECT t, value, status, reason FROM samples WHERE stream = ? AND t BETWEEN ? AND ? ORDER BY t",
                (stream, t0, t1)):
            st = status or ("good" if value is not None else "bad")
            out.append(StoredRow(float(t), "raw", value, st, reason or ""))
        out.sort(key=lambda r: (r.t, r.kind != "raw"))
        return out

    def points(self, stream: int, t0: float, t1: float) -> tuple[np.ndarray, np.ndarray]:
        """Good samples between t0 and t1 (raw rows, and the vertices of compressed blocks), in
        time order; for fits and plots."""
        import numpy as np

        ts: list[np.ndarray] = []
        vs: list[np.ndarray] = []
        for b0, blob in self._q("SELECT t0, points FROM sample_blocks WHERE stream = ? AND t0 <= ? AND t1 >= ? "
                                "AND t0 >= ? AND n > 0 ORDER BY t0", (stream, t1, t0, t0 - self.block_s)):
            t, v = _unpack(b0, blob)
            keep = (t >= t0) & (t <= t1)
            ts.append(t[keep])
            vs.append(v[keep])
        raw = self._q(f"SELECT t, value FROM samples WHERE stream = ? AND t BETWEEN ? AND ? AND {GOOD} "
                      "ORDER BY t", (stream, t0, t1))
        if raw:
            arr = np.asarray(raw, dtype=float)
            ts.append(arr[:, 0])
            vs.append(arr[:, 1])
        if not ts:
            return np.empty(0), np.empty(0)
        t = np.concatenate(ts)
        v = np.concatenate(vs)
        order = np.argsort(t, kind="stable")
        return t[order], v[order]

    def columns(self, stream: int, t0: float, t1: float, n: int) -> Columns:
        """Minimum and maximum per column of a window cut into ``n`` columns (for a plot)."""
        import numpy as np

        if not (t1 > t0 and n >= 1):
            raise InputError("a window needs an end after its start and at least one column")
        width = (t1 - t0) / n
        lo = np.full(n, np.inf)
        hi = np.full(n, -np.inf)

        def fold(idx: np.ndarray, vmin: np.ndarray, vmax: np.ndarray) -> None:
            ok = (idx >= 0) & (idx < n)
            np.minimum.at(lo, idx[ok], vmin[ok])
            np.maximum.at(hi, idx[ok], vmax[ok])

        rows = self._q("SELECT t0, t1, vmin, vmax FROM sample_blocks WHERE stream = ? AND t0 <= ? AND t0 >= ? "
                       "AND n > 0", (stream, t1, t0 - self.block_s))
        if rows:
            arr = np.asarray(rows, dtype=float)
            first = np.floor((arr[:, 0] - t0) / width).astype(int)
            last = np.floor((arr[:, 1] - t0) / width).astype(int)
            # a block inside one column: its summary is enough; one across a column edge (or the
            # window's) is read vertex by vertex
            whole = (first == last) & (arr[:, 0] >= t0) & (arr[:, 1] < t1)
            fold(first[whole], arr[whole, 2], arr[whole, 3])
            edges = t0 + width * np.arange(n + 1)
            starts = [float(x) for x in arr[~whole, 0]]
            blobs: list[tuple[Any, ...]] = []
            for k in range(0, len(starts), 500):
                part = starts[k:k + 500]
                blobs += self._q(f"SELECT t0, points FROM sample_blocks WHERE stream = ? AND t0 IN "
                                 f"({', '.join('?' * len(part))})", (stream, *part))
            for b0, blob in blobs:
                t, v = _unpack(float(b0), blob)
                # the piecewise-linear trace: its vertices, and where it crosses column edges
                inside = edges[(edges > t[0]) & (edges < t[-1])]
                at_edges = np.interp(inside, t, v)
                tt = np.concatenate([t, inside])
                vv = np.concatenate([v, at_edges])
                keep = (tt >= t0) & (tt < t1)
                fold(np.floor((tt[keep] - t0) / width).astype(int), vv[keep], vv[keep])
                ends = np.floor((inside - t0) / width).astype(int) - 1  # an edge belongs to both columns
                fold(ends, at_edges, at_edges)
        raw = self._q("SELECT CAST((t - ?) / ? AS INTEGER) AS c, MIN(value), MAX(value) FROM samples "
                      f"WHERE stream = ? AND t >= ? AND t < ? AND {GOOD} GROUP BY c",
                      (t0, width, stream, t0, t1))
        if raw:
            arr = np.asarray(raw, dtype=float)
            fold(arr[:, 0].astype(int), arr[:, 1], arr[:, 2])
        empty = ~np.isfinite(lo)
        lo[empty] = np.nan
        hi[empty] = np.nan
        return Columns(t0 + width * (np.arange(n) + 0.5), lo, hi)
