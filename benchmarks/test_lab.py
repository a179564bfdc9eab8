"""The lab at scale (issue 30): 20 benches × 5 supplies × one year of events (daily readings,
weekly sessions and hold tests, hourly sample summaries) pushed to a real PostgreSQL; push rate
(events/s), `lab status` time (target ≤ 1 s) and the database's size.

Run: uv run pytest benchmarks/test_lab.py -s   (several minutes; needs PostgreSQL's binaries)
"""

import datetime as dt
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))

from pgserver import server_or_skip  # noqa: E402

from benchwarden.lab import client, schema  # noqa: E402
from benchwarden.storage.journal import Journal  # noqa: E402
from benchwarden.workflows.lab import lab_view  # noqa: E402

BENCHES, SUPPLIES, DAYS = 20, 5, 365
T0 = dt.datetime(2025, 12, 1, tzinfo=dt.UTC)


def _year(j: Journal, bench: str) -> None:
    rows = []
    for s in range(SUPPLIES):
        for d in range(DAYS):
            at = (T0 + dt.timedelta(days=d, hours=9)).isoformat(timespec="seconds")
            rows.append((bench, f"s{s}", at, 150e5 - d * 1e5 % 130e5, "x bar", 294.15, at, None, 101325.0, None))
    j.add_readings(rows)

    def rest(db):
        for w in range(DAYS // 7):
            start = (T0 + dt.timedelta(weeks=w, hours=10)).isoformat(timespec="seconds")
            stop = (T0 + dt.timedelta(weeks=w, hours=14)).isoformat(timespec="seconds")
            sid = db.execute("INSERT INTO sessions(bench, started_at) VALUES (?, ?)", (bench, start)).lastrowid
            db.execute("UPDATE sessions SET stopped_at = ?, operator = 'op', shots = 1000 WHERE id = ?", (stop, sid))
            db.execute("INSERT INTO hold_tests(at, bench, supply_id, gas, volume_m3, duration_s, verdict,"
                       " leak_rate_sccm, leak_rate_uncertainty_sccm, details, kind) VALUES"
                       " (?, ?, 's0', 'nitrogen', 0.05, 43200, 'no-leak-resolved', 1.0, 2.0, '', 'two-readings')",
                       (stop, bench))
        for s in range(SUPPLIES):
            sid = db.execute("INSERT INTO streams(bench, supply_id, quantity, tolerance) VALUES (?, ?, 'pressure', 100)",
                             (bench, f"s{s}")).lastrowid
            t = T0.timestamp()
            db.executemany("INSERT INTO sample_blocks(stream, t0, t1, n, bad, vmin, vmax, tolerance, points)"
                           " VALUES (?, ?, ?, 3600, 0, 1e7, 1.01e7, 100, x'00')",
                           [(sid, t + h * 3600, t + h * 3600 + 3599) for h in range(DAYS * 24)])
    j.write(rest)


def test_lab_at_scale(tmp_path):
    srv = server_or_skip()
    try:
        with client.connect(srv.url()) as conn:
            schema.migrate(conn)
            for b in range(BENCHES):
                schema.add_bench(conn, f"b{b:02d}")
        t_build = time.perf_counter()
        journals = []
        for b in range(BENCHES):
            j = Journal(tmp_path / f"b{b:02d}.sqlite")
            _year(j, f"Bench {b:02d}")
            journals.append(j)
        t_build = time.perf_counter() - t_build
        total, t_push = 0, time.perf_counter()
        with client.connect(srv.url()) as conn:
            for b, j in enumerate(journals):
                last = 0
                while events := j.events(f"Bench {b:02d}", last, 2000):
                    total += client.insert_events(conn, f"b{b:02d}", events)
                    last = events[-1].seq
                client.insert_snapshot(conn, f"b{b:02d}", T0.isoformat(), {
                    "bench": f"Bench {b:02d}", "findings": [],
                    "supplies": [{"id": f"s{s}", "gas": "nitrogen", "pressure_gauge_pa": 1e7, "time_to_reserve_s": 3.6e5,
                                  "order_by": (dt.date.today() + dt.timedelta(days=s * 5)).isoformat(),
                                  "leak_verdict": None} for s in range(SUPPLIES)]}, None, None)
        t_push = time.perf_counter() - t_push
        t_status = min(_timed(lambda: lab_view(srv.url(), dt.date.today())) for _ in range(3))
        with client.connect(srv.url()) as conn:
            size = conn.execute("SELECT pg_database_size(current_database())").fetchone()[0]
        print(f"\nlab: {BENCHES} benches × {SUPPLIES} supplies × {DAYS} days = {total:,} events "
              f"(journals built in {t_build:.0f} s)\n  push {total / t_push:,.0f} events/s ({t_push:.0f} s), "
              f"lab status {t_status:.3f} s, database {size / 1e6:.0f} MB")
        assert total > 0
        for j in journals:
            j.close()
    finally:
        srv.cleanup()


def _timed(fn) -> float:
    t = time.perf_counter()
    fn()
    return time.perf_counter() - t
