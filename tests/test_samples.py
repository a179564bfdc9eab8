"""The sample store: swinging-door compression within its tolerance, raw window and blocks,
window queries and min/max per column, checked against brute force with numpy on the same
samples (the definition of each quantity, computed the plain way)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from benchwarden.storage.journal import Journal
from benchwarden.storage.samples import BLOCK_S, RAW_WINDOW_S, SampleStore, swinging_door

T0 = 1_780_000_000.0  # a day boundary is not assumed anywhere


@pytest.mark.parametrize("seed", range(30))
def test_swinging_door_keeps_every_sample_within_the_tolerance(seed):
    # the compression's bound, checked by interpolating the vertices at every sample time (numpy)
    rng = np.random.default_rng(seed)
    n = int(rng.integers(3, 3000))
    t = np.cumsum(rng.uniform(0.05, 5.0, n))
    v = 1.5e7 - rng.uniform(-80, 80) * t + rng.normal(0, rng.uniform(1, 3000), n)
    if seed % 3 == 0:
        v = np.round(v / 1000) * 1000  # a transducer that reports 0.01 bar steps
    if seed % 5 == 0:
        v[n // 2:] += 5e5  # a step: a cylinder change or a valve opened
    tol = float(rng.uniform(1, 2000))
    tt, vv = swinging_door(t.tolist(), v.tolist(), tol)
    assert tt[0] == t[0] and tt[-1] == t[-1] and vv[0] == v[0]
    assert np.all(np.diff(tt) > 0)
    assert np.max(np.abs(np.interp(t, tt, vv) - v)) <= tol * (1 + 1e-9)


def test_a_flat_or_linear_trace_compresses_to_its_ends():
    t = list(range(3600))
    assert len(swinging_door(t, [5e6] * 3600, 1.0)[0]) == 2
    assert len(swinging_door(t, [5e6 - 3.0 * x for x in t], 1.0)[0]) == 2


def _fill(store, sid, n, rng, start=T0, bad_every=0):
    t = start + np.arange(n, dtype=float)
    v = np.round((1.5e7 - 20.0 * (t - start) / 3600 + rng.normal(0, 300, n)) / 1000) * 1000
    rows = [(float(a), None if bad_every and i % bad_every == 0 else float(b))
            for i, (a, b) in enumerate(zip(t, v, strict=True))]
    for k in range(0, n, 3600):
        store.add(sid, rows[k:k + 3600])
    return t, v, rows


def test_compaction_moves_old_samples_into_blocks_and_keeps_them_within_tolerance(tmp_path):
    rng = np.random.default_rng(1)
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=RAW_WINDOW_S / 8)
        sid = store.stream("bench", "n2-A", "pressure", 1000.0)
        n = int(store.raw_window_s + 86400)
        t, v, rows = _fill(store, sid, n, rng, bad_every=997)
        now = float(t[-1])
        moved = store.compact(sid, now)
        raw, packed, vertices = store.counts(sid)
        good = sum(1 for r in rows if r[1] is not None)
        limit = math.floor((now - store.raw_window_s) / BLOCK_S) * BLOCK_S
        assert moved == sum(1 for r in rows if r[0] < limit)       # every old sample, good or bad, moved
        assert raw == sum(1 for r in rows if r[0] >= limit)         # the raw window untouched
        assert packed == sum(1 for r in rows if r[0] < limit and r[1] is not None)
        assert vertices < packed / 20                               # and it did compress
        assert raw + packed <= len(rows) and raw + packed >= good
        # every good sample, old or recent, within the tolerance of what the store gives back
        pt, pv = store.points(sid, float(t[0]), now)
        ok = np.array([r[1] is not None for r in rows])
        assert np.max(np.abs(np.interp(t[ok], pt, pv) - v[ok])) <= 1000.0 * (1 + 1e-9)
        assert store.latest(sid) == (float(t[-1]), float(v[-1]))
        assert store.compact(sid, now) == 0  # nothing more to move


def test_late_samples_for_a_compressed_hour_join_it(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=3600.0)
        sid = store.stream("b", "s", "pressure", 10.0)
        store.add(sid, [(T0 + i, 1e6) for i in range(0, 1800)])
        store.compact(sid, T0 + 3 * 3600)
        store.add(sid, [(T0 + i, 1e6 + 100) for i in range(1800, 3000)])  # a log that arrives late
        store.compact(sid, T0 + 3 * 3600)
        raw, packed, _ = store.counts(sid)
        assert raw == 0 and packed == 3000
        pt, pv = store.points(sid, T0, T0 + 3600)
        assert pv[0] == pytest.approx(1e6, abs=10) and pv[-1] == pytest.approx(1e6 + 100, abs=10)


@pytest.mark.parametrize("span, cols", [(3600.0, 60), (86400.0, 200), (1.9 * 86400.0, 20), (1.5 * 86400.0, 7)])
def test_min_max_per_column_agrees_with_brute_force(tmp_path, span, cols):
    rng = np.random.default_rng(3)
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=6 * 3600.0)
        sid = store.stream("b", "s", "pressure", 1000.0)
        t, v, _ = _fill(store, sid, 2 * 86400, rng)
        end = float(t[-1]) + 1
        store.compact(sid, end)
        start = end - span
        c = store.columns(sid, start, end, cols)
        edges = start + (end - start) / cols * np.arange(cols + 1)
        idx = np.searchsorted(edges, t, side="right") - 1
        sel = (t >= start) & (t < end)
        for k in range(cols):
            inside = v[sel & (idx == k)]
            if inside.size == 0:
                continue
            # a column of whole blocks takes their summaries (a block on a column edge counts where
            # its middle lies), else the compressed trace: within one block's swing or the tolerance
            slack = 1000.0 if (end - start) / cols < BLOCK_S else 2100.0
            assert c.vmin[k] <= inside.max() and c.vmax[k] >= inside.min()
            assert abs(c.vmin[k] - inside.min()) <= slack and abs(c.vmax[k] - inside.max()) <= slack


def test_streams_are_separate_and_unknown_ones_are_none(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j)
        a = store.stream("b", "s1", "pressure", 10.0)
        b = store.stream("b", "s1", "temperature", 0.05)
        assert a != b and store.stream("b", "s2", "pressure") is None
        store.add(a, [(T0, 2e6)])
        assert store.latest(b) is None and store.latest(a) == (T0, 2e6)
    with Journal(tmp_path / "j.sqlite3") as j:  # and they are there after reopening
        assert SampleStore(j).stream("b", "s1", "pressure") == a


def test_a_log_read_again_after_compaction_adds_nothing_twice(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        store = SampleStore(j, raw_window_s=3600.0)
        sid = store.stream("b", "s", "pressure", 10.0)
        rows = [(T0 + i, 1e6 - 0.5 * i) for i in range(0, 7200)]
        store.add(sid, rows)
        store.compact(sid, T0 + 4 * 3600)
        before = store.counts(sid)
        store.add(sid, rows)  # a restarted watcher reads the whole log again
        store.compact(sid, T0 + 4 * 3600)
        assert store.counts(sid) == before
        pt, _ = store.points(sid, T0, T0 + 7200)
        assert np.all(np.diff(pt) > 0)  # no time twice


# --------------------------------------------------------------------------- issue 26: through watch and samples

import csv  # noqa: E402
import datetime as dt  # noqa: E402
import io  # noqa: E402
import json  # noqa: E402
from pathlib import Path  # noqa: E402

from benchwarden.cli import main  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
DEMO = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
#: a psi is 0.45359237 kg × 9.80665 m/s² per (0.0254 m)² (exact by definition)
PSI = 0.45359237 * 9.80665 / 0.0254 ** 2


def _supply(sid: str, source: str) -> str:
    return (f'\n[[supplies]]\nid = "{sid}"\ngas = "nitrogen"\nwater_volume = "50 L"\nservice_pressure = "200 bar"\n'
            f'test_pressure = "300 bar"\nreading = "64 bar"\nreserve = "15 bar"\n[supplies.source]\n{source}'
            'interval = "0.2 s"\n')


def _logger(path: Path, lines: list[str], end: str = "\n") -> None:
    """A test logger: writes its lines as a data logger does (its own separator and line end)."""
    with open(path, "w", newline="") as fh:
        fh.writelines(ln + end for ln in lines)


def _export(tmp_path: Path, prof: Path, supply: str, *more: str) -> list[dict[str, str]]:
    out = tmp_path / f"{supply}-{len(list(tmp_path.glob('*.csv')))}.csv"
    assert main(["--journal", str(tmp_path / "j.sqlite3"), "samples", str(prof), supply, "--output", str(out),
                 *more]) == 0
    return list(csv.DictReader(io.StringIO(out.read_text())))


def _bar(row: dict[str, str], amb: float) -> float:
    return round((float(row["value_si"]) - amb) / 1e5, 4)


@pytest.mark.slow  # the command line end to end
def test_every_row_of_the_issue_through_watch_and_samples(tmp_path, capsys):
    from benchwarden.storage.profile import parse_profile

    local = dt.datetime.now().astimezone().replace(microsecond=0) - dt.timedelta(minutes=30)
    zone = __import__("zoneinfo").ZoneInfo("Europe/Berlin")

    def at(i: int) -> dt.datetime:
        return local + dt.timedelta(seconds=i)

    def lines(fmt, n: int = 3) -> list[str]:  # the logger's lines: 64.02, 64.01, 64.00 bar one second apart
        return [fmt(at(i), 64.02 - 0.01 * i) for i in range(n)]

    csv_keys = 'delimiter = ","\ntime_column = 1\nvalue_column = 2\n'
    rows = {  # supply: (lines, line end, source keys, expected good values in bar(g) or a bad reason)
        "prefix-raw": (lines(lambda t, v: f"P1: {v:.2f} bar"), "\n", "", "not a number"),
        "prefix": (lines(lambda t, v: f"P1: {v:.2f} bar"), "\n",
                   'pattern = \'P1:\\s*(?P<value>\\S+)\\s*(?P<unit>\\w+)\'\n', [64.02, 64.01, 64.0]),
        "comma-raw": (lines(lambda t, v: f"{v:.2f} bar".replace(".", ",")), "\n", "", "decimal point"),
        "comma": (lines(lambda t, v: f"{v:.2f} bar".replace(".", ",")), "\n", 'decimal = ","\n', [64.02, 64.01, 64.0]),
        "psi": (["925.3 psi", "925.2 psi", "925.1 psi"], "\n", "", None),
        "header-raw": (["timestamp,P1 (bar)"] + lines(lambda t, v: f"{t.astimezone(dt.UTC):%Y-%m-%dT%H:%M:%SZ},{v:.2f}"),
                       "\n", 'delimiter = ","\ntime_column = 1\n', ([64.02, 64.01, 64.0], "not a number")),
        "header": (["timestamp,P1 (bar)"] + lines(lambda t, v: f"{t.astimezone(dt.UTC):%Y-%m-%dT%H:%M:%SZ},{v:.2f}"),
                   "\n", 'delimiter = ","\ntime_column = "timestamp"\nvalue_column = "P1 (bar)"\nheader_lines = 1\n',
                   [64.02, 64.01, 64.0]),
        "space": (lines(lambda t, v: f"{t:%Y-%m-%d %H:%M:%S},{v:.2f}"), "\n", csv_keys, [64.02, 64.01, 64.0]),
        "german": (lines(lambda t, v: f"{t.astimezone(zone):%d.%m.%Y %H:%M:%S};{v:.2f}".replace(".", ",")
                         .replace(",", ".", 2)), "\n",
                   'delimiter = ";"\ndecimal = ","\ntime_column = 1\nvalue_column = 2\n'
                   'time_format = "%d.%m.%Y %H:%M:%S"\ntimezone = "Europe/Berlin"\n', [64.02, 64.01, 64.0]),
        "two-raw": (lines(lambda t, v: f"{t:%Y-%m-%dT%H:%M:%S},21.3,{v:.2f}"), "\n", 'delimiter = ","\ntime_column = 1\n',
                    "2 value columns"),
        "two": (lines(lambda t, v: f"{t:%Y-%m-%dT%H:%M:%S},21.3,{v:.2f}"), "\n",
                'delimiter = ","\ntime_column = 1\nvalue_column = 3\n', [64.02, 64.01, 64.0]),
        "epoch": (lines(lambda t, v: f"{int(t.timestamp())},{v:.2f}"), "\n", csv_keys + 'time_format = "epoch"\n',
                  [64.02, 64.01, 64.0]),
        "epoch-raw": (lines(lambda t, v: f"{int(t.timestamp())},{v:.2f}"), "\n", csv_keys, "time_format"),
        "cr": (["64.0", "63.9", "63.8", "63.7"], "\r", "", [64.0, 63.9, 63.8, 63.7]),
        "crlf": (["64.0", "63.9", "63.8", "63.7"], "\r\n", "", [64.0, 63.9, 63.8, 63.7]),
        "ahead": ([f"{at(0):%Y-%m-%dT%H:%M:%S},64.0", f"{at(1).replace(year=local.year + 1):%Y-%m-%dT%H:%M:%S},9.0"]
                  + [f"{at(i):%Y-%m-%dT%H:%M:%S},{64.0 - 0.1 * i:.1f}" for i in (2, 3)], "\n", csv_keys,
                  [64.0, 63.8, 63.7]),
        "backwards": ([f"{at(0):%Y-%m-%dT%H:%M:%S},64.0", f"{at(-3600):%Y-%m-%dT%H:%M:%S},63.0"]
                      + [f"{at(i):%Y-%m-%dT%H:%M:%S},{64.0 - 0.1 * i:.1f}" for i in (2, 3)], "\n", csv_keys,
                      [64.0, 63.8, 63.7]),
    }
    utc = local.astimezone(dt.UTC)
    text = DEMO
    for sid, (lines, end, keys, _) in rows.items():
        log = tmp_path / f"{sid}.log"
        _logger(log, lines, end)
        text += _supply(sid, f'kind = "file"\npath = "{log}"\n{keys}')
    prof = tmp_path / "bench.toml"
    prof.write_text(text)
    amb = parse_profile(text, "bench.toml").ambient_pa
    assert main(["--journal", str(tmp_path / "j.sqlite3"), "watch", str(prof), "--for", "1.5 s", "--every", "1 s"]) == 0
    capsys.readouterr()
    for sid, (_lines, _, _, expect) in rows.items():
        got = _export(tmp_path, prof, sid)
        good = [r for r in got if r["status"] == "good"]
        assert all(r["kind"] == "raw" and r["stream"] == "pressure" and r["unit"] == "Pa(a)" for r in got), sid
        if expect is None:                # the unit on the line, not the profile's bar
            assert [float(r["value_si"]) for r in good] == pytest.approx([p * PSI + amb for p in (925.3, 925.2, 925.1)])
        elif isinstance(expect, tuple):     # the header line is a bad sample, the data line good
            assert [_bar(r, amb) for r in good] == expect[0]
            assert [expect[1] in r["reason"] for r in got if r["status"] == "bad"] == [True], (sid, got)
        elif isinstance(expect, str):     # declared otherwise: a bad sample with its reason, never a good one
            assert not good and got and all(expect in r["reason"] for r in got if r["status"] == "bad"), (sid, got)
        else:
            assert [_bar(r, amb) for r in good] == expect, (sid, got)
    stamps = [r["time"] for r in _export(tmp_path, prof, "space")]
    assert stamps == [f"{utc + dt.timedelta(seconds=i):%Y-%m-%dT%H:%M:%S}.000000Z" for i in range(3)]  # own, in UTC
    (ahead,) = [r for r in _export(tmp_path, prof, "ahead") if r["status"] == "bad"]
    assert "after the computer's clock" in ahead["reason"] and ahead["time"].startswith(str(local.year + 1))
    (back,) = [r for r in _export(tmp_path, prof, "backwards") if r["status"] == "bad"]
    assert "before the stream's latest sample" in back["reason"]
    # the live value is the latest confirmed one, not the line dated a year ahead
    capsys.readouterr()
    assert main(["--journal", str(tmp_path / "j.sqlite3"), "status", str(prof), "--json"]) == 0
    status = {s["id"]: s for s in json.loads(capsys.readouterr().out)["supplies"]}
    assert status["ahead"]["live"]["pressure_gauge_pa"] == pytest.approx(63.7e5)
    assert "after the computer's clock" in status["ahead"]["last_bad_sample"]["reason"]
    assert status["prefix-raw"]["live"] is None and status["prefix-raw"]["last_bad_sample"]["status"] == "bad"


@pytest.mark.slow  # the command line end to end
def test_samples_bad_input_is_one_line_exit_2_and_nothing_written(tmp_path, capsys):
    prof = tmp_path / "bench.toml"
    prof.write_text(DEMO)
    out = tmp_path / "out.csv"
    for argv, words in ((["n2-Z"], "unknown supply"), (["n2-A", "--from", "yesterday"], "--from 'yesterday'"),
                        (["n2-A", "--from", "2026-12-02", "--to", "2026-12-01"], "before --from"),
                        (["n2-A", "--format", "xml"], "invalid choice")):
        try:
            code = main(["--journal", str(tmp_path / "j.sqlite3"), "samples", str(prof), *argv, "--output", str(out)])
        except SystemExit as exc:  # argparse's own refusal of a choice
            code = exc.code
        assert code == 2
        err = capsys.readouterr().err
        assert words in err and err.count("\n") == 1 and "Traceback" not in err
        assert not out.exists()


@pytest.mark.slow  # the command line end to end
def test_samples_gives_raw_rows_trace_points_and_hourly_extremes_in_the_span(tmp_path, capsys):
    prof = tmp_path / "bench.toml"
    prof.write_text(DEMO)
    j = Journal(tmp_path / "j.sqlite3")
    store = SampleStore(j, raw_window_s=3600.0)
    sid = store.stream("Demo: Larkfield teaching lab, bench 2 (N2 laser)", "n2-A", "pressure", 100.0)
    h0 = T0 - T0 % 3600        # an hour's start
    t = h0 + np.arange(0, 7200, 10.0)
    v = 65e5 - 10.0 * (t - h0)
    store.add(sid, [(float(a), float(b)) for a, b in zip(t, v, strict=True)])
    store.add(sid, [(h0 + 7205.0, None, "bad", "no line within the timeout"),
                    (h0 + 7215.0, 1e5, "implausible", "departs from the trend")])
    assert store.compact(sid, h0 + 7200.0) == 360       # the first hour compressed
    j.close()
    assert main(["--journal", str(tmp_path / "j.sqlite3"), "samples", str(prof), "n2-A", "--format", "jsonl"]) == 0
    rows = [json.loads(x) for x in capsys.readouterr().out.splitlines()]
    kinds = [r["kind"] for r in rows]
    assert kinds.count("min") == kinds.count("max") == 1 and kinds.count("raw") == 362
    assert 2 <= kinds.count("trace") < 360                     # a straight line: a few vertices
    (lo,) = [r for r in rows if r["kind"] == "min"]
    (hi,) = [r for r in rows if r["kind"] == "max"]
    assert (lo["value_si"], hi["value_si"]) == (float(v[359]), float(v[0]))   # the hour's extremes, numpy's way
    assert lo["time"] == dt.datetime.fromtimestamp(h0, dt.UTC).isoformat(
        timespec="microseconds").replace("+00:00", "Z")
    assert set(rows[0]) == {"time", "stream", "kind", "value_si", "unit", "status", "reason"}
    bad = [r for r in rows if r["status"] != "good"]
    assert [(r["status"], r["value_si"], r["reason"]) for r in bad] == [
        ("bad", None, "no line within the timeout"), ("implausible", 1e5, "departs from the trend")]
    # the span
    frm = dt.datetime.fromtimestamp(h0 + 7000, dt.UTC).isoformat()
    assert main(["--journal", str(tmp_path / "j.sqlite3"), "samples", str(prof), "n2-A", "--from", frm]) == 0
    got = list(csv.DictReader(io.StringIO(capsys.readouterr().out)))
    assert [r["kind"] for r in got] == ["raw"] * 22 and got[0]["time"].endswith("Z")


def test_a_journal_from_schema_4_opens_and_its_samples_keep_their_meaning(tmp_path):
    import sqlite3

    from benchwarden.storage.journal import _MIGRATIONS, APPLICATION_ID

    path = tmp_path / "old.sqlite3"
    db = sqlite3.connect(path)
    for v in range(1, 5):
        db.executescript(_MIGRATIONS[v])
    db.execute(f"PRAGMA application_id = {APPLICATION_ID}")
    db.execute("PRAGMA user_version = 4")
    db.execute("INSERT INTO streams(id, bench, supply_id, quantity, tolerance) VALUES (1, 'b', 's', 'pressure', 1)")
    db.executemany("INSERT INTO samples(stream, t, value) VALUES (1, ?, ?)", [(T0, 65e5), (T0 + 1, None)])
    db.commit()
    db.close()
    with Journal(path) as j:
        store = SampleStore(j)
        assert store.latest(1) == (T0, 65e5)
        assert [(r.status, r.value) for r in store.rows(1, 0, 4e9)] == [("good", 65e5), ("bad", None)]


@pytest.mark.slow  # the command line end to end
@pytest.mark.parametrize("how", ["rename", "copy-truncate"])
def test_a_rotated_log_through_the_watcher_and_samples_loses_no_line_and_reads_none_twice(tmp_path, capsys, how):
    import shutil

    from benchwarden.storage.profile import parse_profile
    from benchwarden.workflows.feeds import Watcher

    log = tmp_path / "p.log"
    text = DEMO.replace('gauge = { range = "315 bar", accuracy_class = 1.6 }\n',
                        'gauge = { range = "315 bar", accuracy_class = 1.6 }\n[supplies.source]\nkind = "file"\n'
                        f'path = "{log}"\ndelimiter = ","\ntime_column = 1\nvalue_column = 2\ninterval = "1 s"\n', 1)
    prof_path = tmp_path / "bench.toml"
    prof_path.write_text(text)
    prof = parse_profile(text, "bench.toml")
    t0 = dt.datetime.now(dt.UTC).replace(microsecond=0) - dt.timedelta(minutes=20)
    stamp = iter(range(100))

    def lines(n: int) -> list[str]:   # the logger: one line a second, 0.01 bar less each
        out = []
        for _ in range(n):
            i = next(stamp)
            out.append(f"{(t0 + dt.timedelta(seconds=i)).isoformat()},{64.0 - 0.01 * i:.2f}")
        return out

    def append(rows: list[str]) -> None:
        with open(log, "a") as fh:
            fh.writelines(r + "\n" for r in rows)

    clock = [0.0]
    with Journal(tmp_path / "j.sqlite3") as j:
        w = Watcher(prof, j, monotonic=lambda: clock[0])

        def poll() -> None:
            clock[0] += 1.0
            w.poll(dt.datetime.now(dt.UTC))

        append(lines(5))
        poll()
        append(lines(2))                        # written just before the rotation
        if how == "rename":
            log.rename(tmp_path / "p.log.1")
        else:
            shutil.copy(log, tmp_path / "p.log.1")
            log.write_text("")
        append(lines(4))
        poll()
        append(lines(2))
        poll()
        w.close()
    assert main(["--journal", str(tmp_path / "j.sqlite3"), "samples", str(prof_path), "n2-A"]) == 0
    rows = list(csv.DictReader(io.StringIO(capsys.readouterr().out)))
    got = [round((float(r["value_si"]) - prof.ambient_pa) / 1e5, 2) for r in rows if r["status"] == "good"]
    assert [r["status"] for r in rows] == ["good"] * len(rows)
    expected = [round(64.0 - 0.01 * i, 2) for i in range(13)]
    if how == "copy-truncate":                  # the 2 lines written between the last read and the copy are
        expected = expected[:5] + expected[7:]  # in the copy only: the new file is read from its start
    assert got == expected
