"""Journal: schema, each reading committed, crash survival, resumption, export, CLI."""

import json
import os
import signal
import sqlite3
import subprocess
import sys
import textwrap

import pytest

from gasbench.cli import main
from gasbench.errors import JournalError
from gasbench.journal import SCHEMA_VERSION, Journal, default_path


def test_schema_version_and_wal(tmp_path):
    with Journal(tmp_path / "j.sqlite3") as j:
        assert j.db.execute("PRAGMA user_version").fetchone()[0] == SCHEMA_VERSION
        assert j.db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"


def test_migrates_a_version_1_journal(tmp_path):
    p = tmp_path / "old.sqlite3"
    db = sqlite3.connect(p)
    from gasbench.journal import _MIGRATIONS

    db.executescript(_MIGRATIONS[1] + "PRAGMA user_version = 1;")
    db.execute("INSERT INTO sessions(bench, started_at) VALUES ('b', '2026-01-01T10:00')")
    db.commit()
    db.close()
    with Journal(p) as j:
        assert j.sessions()[0].bench == "b"
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
        csv_text = j.export_csv(sid)
        assert csv_text.count("\n") == 3 and "64 bar" in csv_text
        j.stop_session(sid, "2026-12-01T13:30:00")
        assert j.unfinished_session("bench A") is None
        assert j.sessions()[0].readings == 2


def test_env_and_option_choose_the_path(tmp_path, monkeypatch):
    monkeypatch.setenv("GASBENCH_JOURNAL", str(tmp_path / "env.sqlite3"))
    assert default_path() == tmp_path / "env.sqlite3"
    assert default_path(tmp_path / "opt.sqlite3") == tmp_path / "opt.sqlite3"


WRITER = textwrap.dedent("""
    import sys, time
    from gasbench.journal import Journal
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
