"""Journal: schema, each reading committed, crash survival, resumption, export, CLI."""

import json
import os
import signal
import sqlite3
import subprocess
import sys
import textwrap

import pytest

from benchwarden.cli import main
from benchwarden.errors import JournalError
from benchwarden.render.files import session_csv
from benchwarden.storage.journal import SCHEMA_VERSION, Journal, default_path


def test_schema_version_and_wal(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        assert j.db.execute("PRAGMA user_version").fetchone()[0] == SCHEMA_VERSION
        assert j.db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"


def test_migrates_a_version_1_journal(tmp_path):
    p = tmp_path / "old.sqlite3"
    db = sqlite3.connect(p)
    from benchwarden.storage.journal import _MIGRATIONS

    db.executescript(_MIGRATIONS[1] + "PRAGMA user_version = 1;")
    db.execute("INSERT INTO sessions(bench, started_at) VALUES ('b', '2026-01-01T10:00')")
    db.execute("INSERT INTO readings(session_id, supply_id, at, pressure_abs_pa, pressure_text, temperature_k,"
               " entered_at) VALUES (1, 's1', '2026-01-01T10:05', 15e6, '149 bar', 293.15, '2026-01-01T10:05')")
    db.commit()
    db.close()
    with Journal(p) as j:
        assert j.sessions()[0].bench == "b"
        # version 3: readings carry their bench (from the session) and may be idle or struck
        (r,) = j.supply_readings("b", "s1")
        assert r.pressure_abs_pa == 15e6 and r.session_id == 1 and not r.struck
        j.add_reading(None, "s1", "2026-01-03T10:00", 14.9e6, "148 bar", 293.15, "2026-01-03T10:00", bench="b")
        j.strike_reading(r.id, "2026-01-03T10:01", "typo")
        assert [x.struck for x in j.supply_readings("b", "s1")] == [True, False]
        j.add_hold_test("2026-01-02T10:00", "b", None, "nitrogen", 0.05, 3600, "leak", 1.0, 0.1)
        assert j.last_hold_test("b").verdict == "leak"


def test_newer_schema_is_refused(tmp_path):
    p = tmp_path / "new.sqlite3"
    db = sqlite3.connect(p)
    db.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 5}")
    db.commit()
    db.close()
    with pytest.raises(JournalError, match="newer"):
        Journal(p)


def test_sessions_readings_resume_and_export(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        sid = j.start_session("bench A", "/x.toml", "2026-12-01T09:30:00")
        j.add_reading(sid, "n2-A", "2026-12-01T09:31:00", 65e5, "64 bar", 294.15, "2026-12-01T09:31:05")
        j.add_reading(sid, "n2-A", "2026-12-01T10:31:00", 63e5, "62 bar", 294.15, "2026-12-01T10:31:05")
        assert j.unfinished_session("bench A").id == sid
        csv_text = session_csv(j, sid)
        assert csv_text.count("\n") == 3 and "64 bar" in csv_text
        j.stop_session(sid, "2026-12-01T13:30:00")
        assert j.unfinished_session("bench A") is None
        assert j.sessions()[0].readings == 2


def test_env_and_option_choose_the_path(tmp_path, monkeypatch):
    monkeypatch.setenv("BENCHWARDEN_JOURNAL", str(tmp_path / "env.sqlite3"))
    assert default_path() == tmp_path / "env.sqlite3"
    assert default_path(tmp_path / "opt.sqlite3") == tmp_path / "opt.sqlite3"


WRITER = textwrap.dedent("""
    import sys, time
    from benchwarden.storage.journal import Journal
    j = Journal(sys.argv[1])
    sid = j.start_session("crash bench", None, "2026-12-01T09:00:00")
    for i in range(10_000):
        j.add_reading(sid, "s", f"2026-12-01T09:{i // 60 % 60:02d}:{i % 60:02d}.{i:06d}", 1e6 - i, f"{i}", 293.15, "x")
        print(i, flush=True)
        time.sleep(0.002)
""")


def test_killed_writer_loses_nothing_committed(tmp_path):
    # A writer process killed with SIGKILL between readings: every reading it reported as
    # committed is there and PRAGMA integrity_check is ok.
    path = tmp_path / "crash.sqlite3"
    proc = subprocess.Popen([sys.executable, "-c", WRITER, str(path)], stdout=subprocess.PIPE, text=True)
    seen = -1
    for line in proc.stdout:
        seen = int(line)
        if seen >= 40:
            break
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    with Journal(path) as j:
        assert j.integrity_ok()
        s = j.unfinished_session("crash bench")
        assert s is not None  # offered for resumption
        assert len(j.readings(s.id)) >= seen + 1


def test_concurrent_writers(tmp_path):
    path = tmp_path / "c.sqlite3"
    a, b = Journal(path), Journal(path)
    sid = a.start_session("x", None, "t")
    for i in range(20):
        a.add_reading(sid, "s", f"a{i:03d}", 1e6, "a", 293.0, "e")
        b.add_reading(sid, "s", f"b{i:03d}", 1e6, "b", 293.0, "e")
    assert len(a.readings(sid)) == 40
    a.close()
    b.close()


def test_failing_write_is_reported_and_nothing_half_written(tmp_path):
    j = Journal(tmp_path / "f.sqlite3")
    sid = j.start_session("x", None, "t")
    with pytest.raises(JournalError, match="nothing was recorded"):
        j.add_reading(sid + 99, "s", "t", 1e6, "a", 293.0, "e")  # foreign key fails
    assert j.readings(sid) == []
    j.close()


def test_sessions_and_export_cli(tmp_path, capsys):
    path = tmp_path / "j.sqlite3"
    with Journal(path) as j:
        sid = j.start_session("bench A", None, "2026-12-01T09:30:00")
        j.add_reading(sid, "n2-A", "2026-12-01T09:31:00", 65e5, "64 bar", 294.15, "x")
    assert main(["--journal", str(path), "sessions", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["sessions"][0]["readings"] == 1
    assert main(["--journal", str(path), "export", str(sid), "--format", "csv"]) == 0
    assert "64 bar" in capsys.readouterr().out
    assert main(["--journal", str(path), "export", "99"]) == 2
    assert "no session 99" in capsys.readouterr().err


def test_hold_command_records_into_existing_journal(tmp_path, capsys):
    path = tmp_path / "j.sqlite3"
    Journal(path).close()
    assert main(["--journal", str(path), "hold", "--gas", "n2", "--volume", "10 L", "--start", "5 bar",
                 "--end", "4 bar", "--duration", "1 h", "--bench", "bench A", "--json"]) == 0
    capsys.readouterr()
    with Journal(path) as j:
        assert j.last_hold_test("bench A").verdict == "leak"


def test_full_disk_keeps_journal_consistent_and_says_so(tmp_path):
    # Simulate a full disk: SQLite's max_page_count caps the file, so a write fails with
    # "database or disk is full" exactly as on a full filesystem.
    j = Journal(tmp_path / "full.sqlite3")
    sid = j.start_session("x", None, "t")
    j.db.execute("PRAGMA max_page_count = " + str(j.db.execute("PRAGMA page_count").fetchone()[0] + 2))
    written = 0
    with pytest.raises(JournalError, match="full"):
        for i in range(100_000):
            j.add_reading(sid, "s", f"t{i:06d}", 1e6, "x" * 500, 293.0, "e")
            written += 1
    assert written > 0
    assert len(j.readings(sid)) == written  # every acknowledged reading is there, nothing half-written
    assert j.integrity_ok()
    j.close()


async def test_app_tells_the_user_when_the_journal_cannot_write(tmp_path):
    import datetime as dt

    from benchwarden.tui.app import make_app

    t0 = dt.datetime(2026, 12, 1, 9, 30, tzinfo=dt.UTC)
    app = make_app(None, tmp_path / "j.sqlite3", clock=lambda: t0)
    async with app.run_test(size=(100, 32)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        await pilot.press("s")
        await pilot.pause()
        await pilot.press("escape")
        j = app.state.journal

        def failing_write(*args, **kwargs):  # a failing write, as on a full disk
            raise JournalError(f"journal {j.path}: write failed (database or disk is full); nothing was recorded")

        j.add_reading = failing_write
        await pilot.press("r")
        await pilot.pause()
        app.screen.query_one("#pressure").value = "60 bar"
        await pilot.press("enter")
        await app.workers.wait_for_complete()
        await pilot.pause()
        # the reading is kept (not silently dropped), marked unsaved, and the status line says so
        assert app.state.unsaved and app.state.readings["n2-A"][0].saved is False
        assert "NOT saved" in str(app.screen.query_one("#status").render())


def test_journal_option_after_the_sub_command(tmp_path, capsys):
    path = tmp_path / "j.sqlite3"
    with Journal(path) as j:
        j.start_session("bench B", None, "2026-12-01T09:30:00")
    assert main(["sessions", "--journal", str(path), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["sessions"][0]["bench"] == "bench B"


def test_app_writer_and_command_line_on_one_journal(tmp_path, capsys):
    # A separate process writes readings (as the app does) while the command line records hold
    # tests into the same journal: both complete, nothing is lost, the file stays consistent.
    path = tmp_path / "shared.sqlite3"
    Journal(path).close()
    writer = WRITER.replace("range(10_000)", "range(150)")
    proc = subprocess.Popen([sys.executable, "-c", writer, str(path)], stdout=subprocess.DEVNULL)
    for _ in range(15):
        assert main(["--journal", str(path), "hold", "--gas", "n2", "--volume", "10 L", "--start", "5 bar",
                     "--end", "4.9 bar", "--duration", "1 h", "--bench", "shared", "--json"]) == 0
    capsys.readouterr()
    assert proc.wait(timeout=60) == 0
    with Journal(path) as j:
        assert j.integrity_ok()
        s = j.unfinished_session("crash bench")
        assert len(j.readings(s.id)) == 150
        n = j.db.execute("SELECT COUNT(*) FROM hold_tests WHERE bench = 'shared'").fetchone()[0]
        assert n == 15


def test_journal_written_before_the_rename_opens_unchanged(tmp_path, capsys):
    """Regression (issue 21): a journal made by the release before the project was renamed (kept
    as a fixture: two idle readings, the idle-drop hold test they formed, a cylinder change) opens
    with its application id and schema, and `status` reads it as the old release did."""
    import shutil
    from pathlib import Path

    fixture = Path(__file__).parent / "fixtures" / "journal-before-rename.sqlite"
    path = tmp_path / "old.sqlite"
    shutil.copy(fixture, path)
    with Journal(path) as j:
        assert j.db.execute("PRAGMA application_id").fetchone()[0] == 0x4753_424A
        assert j.db.execute("PRAGMA user_version").fetchone()[0] == SCHEMA_VERSION
        readings = j.supply_readings("Demo: Larkfield teaching lab, bench 2 (N2 laser)", "n2-A")
        assert [round(r.pressure_abs_pa - 99891.70147786745) for r in readings] == [15_000_000, 14_950_000, 20_000_000]
    assert main(["--journal", str(path), "status", "profiles/demo-teaching-bench.toml", "--json"]) == 0
    (supply,) = json.loads(capsys.readouterr().out)["supplies"]
    assert supply["cylinder_label"] == "Cyl 4471" and supply["retest_due"] == "2029-05-01"
    assert supply["pressure_gauge_pa"] == pytest.approx(200e5)
