"""A year of 1 Hz samples for one supply: the journal's sample store against a plain
one-row-per-sample SQLite table, built in the same run.

Run: ``uv run pytest benchmarks/test_samples.py -s`` (``BENCHWARDEN_BENCH_DAYS=30`` for a shorter
synthetic span; the default is a whole year, about 31.5 million samples, some minutes and ~1 GB
of scratch space for the plain table). Reports journal size, ingest rate, open time and a
window query (min/max per column for a 200-column plot) for a day, a week and the whole span.
Targets of the issue: ≤ 100 MB per supply-year, ingest ≥ 20 000 samples/s, open ≤ 1 s, any
window ≤ 0.2 s. Printed, not asserted.
"""

from __future__ import annotations

import os
import sqlite3
import time
from pathlib import Path

import numpy as np

from benchwarden.storage.journal import Journal
from benchwarden.storage.samples import SampleStore

DAYS = int(os.environ.get("BENCHWARDEN_BENCH_DAYS", "365"))
CHUNK = 86400  # one synthetic day at a time
RESOLUTION_PA = 1000.0  # a 0–250 bar transducer read to 0.01 bar
COLUMNS = 200


def synthetic_day(day: int, rng: np.random.Generator, state: dict[str, float]) -> tuple[np.ndarray, np.ndarray]:
    """One day of a nitrogen cylinder at 1 Hz: idle leak at night, a 3-hour session on working
    days, a daily temperature swing, transducer noise, readings quantised to the resolution,
    a cylinder change when the reserve is reached (a scenario of our own)."""
    t = state["t0"] + day * 86400.0 + np.arange(86400, dtype=float)
    hour = (t - state["t0"]) % 86400 / 3600.0
    rate = np.full(86400, 0.5)  # Pa/s fall: a small leak
    if day % 7 < 5:
        rate[(hour >= 9) & (hour < 12)] = 40.0  # a session's draw
    p = state["p"] - np.cumsum(rate)
    swing = 0.004 * p * np.sin(2 * np.pi * (hour - 9) / 24)  # about ±1 K on 290 K
    raw = p + swing + rng.normal(0, 250.0, 86400)
    state["p"] = float(p[-1])
    if state["p"] < 2.0e6:
        state["p"] = 20.0e6  # a new cylinder
    return t, np.round(raw / RESOLUTION_PA) * RESOLUTION_PA


def _size(path: Path) -> float:
    return sum(f.stat().st_size for f in path.parent.glob(path.name + "*")) / 1e6


def test_year_of_samples(tmp_path):
    rng = np.random.default_rng(7)
    ours_path = tmp_path / "journal.sqlite3"
    plain_path = tmp_path / "plain.sqlite3"
    j = Journal(ours_path)
    store = SampleStore(j)
    sid = store.stream("bench", "n2-A", "pressure", RESOLUTION_PA)
    assert sid is not None
    plain = sqlite3.connect(plain_path, isolation_level=None)
    plain.execute("PRAGMA journal_mode=WAL")
    plain.execute("CREATE TABLE samples (t REAL, value REAL)")
    plain.execute("CREATE INDEX samples_t ON samples(t)")

    state = {"t0": 1.7e9, "p": 20.0e6}
    ours_s = plain_s = 0.0
    for day in range(DAYS):
        t, v = synthetic_day(day, rng, state)
        rows = list(zip(t.tolist(), v.tolist(), strict=True))
        start = time.perf_counter()
        for k in range(0, len(rows), 3600):  # an hour per transaction, as a backfill would
            store.add(sid, rows[k:k + 3600])
        store.compact(sid, float(t[-1]))
        ours_s += time.perf_counter() - start
        start = time.perf_counter()
        for k in range(0, len(rows), 3600):
            plain.execute("BEGIN")
            plain.executemany("INSERT INTO samples VALUES (?, ?)", rows[k:k + 3600])
            plain.execute("COMMIT")
        plain_s += time.perf_counter() - start
    n = DAYS * 86400
    end = state["t0"] + n
    j.close()
    plain.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    plain.close()

    start = time.perf_counter()
    j = Journal(ours_path)  # what the app does on open: identify, quick_check, migrate
    store = SampleStore(j)
    sid2 = store.stream("bench", "n2-A", "pressure")
    open_ours = time.perf_counter() - start
    start = time.perf_counter()
    plain = sqlite3.connect(plain_path)
    plain.execute("PRAGMA quick_check").fetchone()
    open_plain = time.perf_counter() - start

    lines = [f"{DAYS} days, {n:,} samples at 1 Hz, resolution {RESOLUTION_PA:g} Pa",
             f"{'':28}{'ours':>14}{'plain table':>16}",
             f"{'size [MB]':28}{_size(ours_path):14.1f}{_size(plain_path):16.1f}",
             f"{'ingest [samples/s]':28}{n / ours_s:14,.0f}{n / plain_s:16,.0f}",
             f"{'open [s]':28}{open_ours:14.3f}{open_plain:16.3f}"]
    raw, packed, vertices = store.counts(sid2)  # type: ignore[arg-type]
    for name, span in (("day", 86400.0), ("week", 7 * 86400.0), ("whole span", float(n))):
        t0 = end - span
        best_ours = best_plain = float("inf")
        for _ in range(3):
            start = time.perf_counter()
            cols = store.columns(sid2, t0, end, COLUMNS)  # type: ignore[arg-type]
            best_ours = min(best_ours, time.perf_counter() - start)
            start = time.perf_counter()
            width = span / COLUMNS
            got = plain.execute("SELECT CAST((t - ?) / ? AS INTEGER) c, MIN(value), MAX(value) FROM samples "
                                "WHERE t >= ? AND t < ? GROUP BY c", (t0, width, t0, end)).fetchall()
            best_plain = min(best_plain, time.perf_counter() - start)
        agree = np.nanmax(np.abs(np.asarray([g[2] for g in got][:COLUMNS]) - cols.vmax[:len(got)]))
        lines.append(f"{'window ' + name + ' [s]':28}{best_ours:14.4f}{best_plain:16.4f}"
                     f"   (max-per-column differs by ≤ {agree:g} Pa)")
    lines.append(f"raw rows {raw:,}, compressed samples {packed:,} as {vertices:,} vertices "
                 f"({packed / max(vertices, 1):.0f}:1)")
    j.close()
    plain.close()
    print("\n" + "\n".join(lines))
    (Path(__file__).parent / "samples_result.txt").write_text("\n".join(lines) + "\n", encoding="utf-8")


def test_leak_watch_refresh(tmp_path, ratio):
    """The leak watch over 6 h of 1 Hz samples (raw, in the journal) against the plain approach:
    CoolProp density per sample and a least-squares line."""
    import datetime as dt

    from CoolProp.CoolProp import PropsSI

    from benchwarden.storage.profile import parse_profile
    from benchwarden.workflows.watch import leak_watch

    demo = (Path(__file__).resolve().parents[1] / "profiles" / "demo-teaching-bench.toml").read_text()
    anchor = 'gauge = { range = "315 bar", accuracy_class = 1.6 }\n'
    prof = parse_profile(demo.replace(anchor, anchor + '[supplies.source]\nkind = "file"\npath = "x"\n'
                                      'range = "250 bar"\naccuracy_class = 0.1\nresolution = "0.01 bar"\n'), "x.toml")
    end = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    n = 6 * 3600
    t0 = end.timestamp() - n
    rows = [(t0 + i, round((62e5 - 0.05 * i) / 1000) * 1000 + prof.ambient_pa) for i in range(n)]
    j = Journal(tmp_path / "j.sqlite3")
    store = SampleStore(j)
    sid = store.stream(prof.bench.name, "n2-A", "pressure", 1000.0)
    store.add(sid, rows)
    best = float("inf")
    for _ in range(3):
        start = time.perf_counter()
        lw = leak_watch(j, prof, "n2-A", end)
        best = min(best, time.perf_counter() - start)
    assert lw is not None
    start = time.perf_counter()
    t = np.asarray([r[0] for r in rows])
    m = np.asarray([PropsSI("D", "T", 294.15, "P", p, "Nitrogen") * 0.05 for _, p in rows])
    np.polyfit(t - t.mean(), m, 1)
    plain = time.perf_counter() - start
    ratio("leak watch, 6 h of 1 Hz samples", best, plain)
    j.close()
