"""The journal's record as immutable events (issue 30): every entry gets a stable id and a local
sequence number in the same transaction, nothing is updated in place, old journals get ids."""

import shutil
import sqlite3
import uuid
from pathlib import Path

import pytest

from benchwarden.cli import main
from benchwarden.storage.journal import Journal

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "profiles" / "demo-teaching-bench.toml")
BENCH = "Demo: Larkfield teaching lab, bench 2 (N2 laser)"


def test_every_kind_of_entry_is_an_event_with_a_uuid(tmp_path, capsys):
    j = str(tmp_path / "j.sqlite")
    for argv in (["reading", DEMO, "n2-A", "--pressure", "150 bar", "--at", "2026-11-27T18:00"],
                 ["reading", DEMO, "n2-A", "--pressure", "120 bar", "--at", "2026-11-30T08:00", "--confirm"],
                 ["strike", DEMO, "2", "--reason", "misread"],
                 ["swap", DEMO, "n2-A", "--pressure", "198 bar", "--at", "2026-11-30T09:00"],
                 ["session", "start", DEMO, "--operator", "R. Okafor", "--at", "2026-11-30T09:30"],
                 ["session", "stop", DEMO, "--shots", "1200", "--note", "ok", "--at", "2026-11-30T10:30"]):
        assert main(["--journal", j, *argv]) == 0, capsys.readouterr().err
    with Journal(j) as jr:
        events = jr.events(BENCH)
    kinds = [e.kind for e in events]
    for k in ("reading", "strike", "cylinder-change", "session-start", "session-record", "note", "session-stop"):
        assert k in kinds, (k, kinds)
    assert [e.seq for e in events] == sorted(e.seq for e in events)
    assert len({e.event_id for e in events}) == len(events)
    for e in events:
        assert uuid.UUID(e.event_id).version == 4  # RFC 4122 random UUID
    strike = next(e for e in events if e.kind == "strike")
    assert strike.payload["reason"] == "misread" and strike.payload["reading_id"] == 2


def test_events_cannot_be_changed_or_deleted(tmp_path):
    with Journal(tmp_path / "j.sqlite") as j:
        j.add_alarm(BENCH, None, "alarm-leak", "2026-11-30T08:00:00+00:00", "a leak")
    db = sqlite3.connect(tmp_path / "j.sqlite")
    with pytest.raises(sqlite3.DatabaseError, match="immutable"):
        db.execute("UPDATE events SET kind = 'x'")
    with pytest.raises(sqlite3.DatabaseError, match="immutable"):
        db.execute("DELETE FROM events")


def test_a_journal_from_an_earlier_release_gets_ids_on_migration(tmp_path):
    # the fixture journal written before the rename (schema 4): two readings, an idle-drop hold
    # test, a cylinder change (with its fill as a reading)
    path = tmp_path / "old.sqlite"
    shutil.copy(ROOT / "tests" / "fixtures" / "journal-before-rename.sqlite", path)
    with Journal(path) as j:
        events = j.events(BENCH)
    assert sorted(e.kind for e in events) == sorted(["reading"] * 3 + ["hold-test", "cylinder-change"])
    assert all(uuid.UUID(e.event_id) for e in events)


def test_an_hour_of_samples_is_an_event_with_its_minimum_maximum_and_last_value(tmp_path):
    # the hour's summary checked against the samples themselves (min, max and the latest good one,
    # by their definitions); a late log for the same hour is a new event, and the first stays
    from benchwarden.storage.samples import SampleStore

    t0 = 1_780_000_000.0 - (1_780_000_000.0 % 3600)
    vals = [2.0e6 - 10.0 * i + (5000.0 if i == 900 else 0.0) for i in range(1800)]
    with Journal(tmp_path / "j.sqlite") as j:
        store = SampleStore(j, raw_window_s=3600.0)
        sid = store.stream(BENCH, "n2-A", "pressure", 100.0)
        store.add(sid, [(t0 + i, v) for i, v in enumerate(vals)])
        store.compact(sid, t0 + 3 * 3600)
        first = [e for e in j.events(BENCH) if e.kind == "samples-hour"]
        assert len(first) == 1
        p = first[0].payload
        assert (p["min"], p["max"], p["last"], p["n"]) == (min(vals), max(vals), vals[-1], 1800)
        late = [(t0 + i, 1.0e6) for i in range(1800, 2400)]      # arrives after the hour was compressed
        store.add(sid, late)
        store.compact(sid, t0 + 3 * 3600)
        hours = [e for e in j.events(BENCH) if e.kind == "samples-hour"]
        assert len(hours) == 2 and hours[0].payload == p          # nothing updated in place
        q = hours[1].payload
        assert (q["min"], q["max"], q["last"], q["n"]) == (1.0e6, max(vals), 1.0e6, 2400)
        store.add(sid, [(t0 + 3599.0, None)])                    # a bad sample last: the good one stays last
        store.compact(sid, t0 + 3 * 3600)
        assert [e for e in j.events(BENCH) if e.kind == "samples-hour"][-1].payload["last"] == 1.0e6


def test_an_hour_compressed_before_migration_9_says_no_last_value(tmp_path):
    # a journal at schema 8 with a compressed hour: after the migration its event stays as it was
    # and new hours carry their last value
    from benchwarden.storage.journal_schema import _MIGRATIONS

    path = tmp_path / "j8.sqlite"
    db = sqlite3.connect(path)
    for v in range(1, 9):
        m = _MIGRATIONS[v]
        if isinstance(m, str):
            db.executescript(m)
        else:
            for stmt in m:
                db.execute(stmt)
    db.execute("INSERT INTO streams(id, bench, supply_id, quantity, tolerance) VALUES (1, ?, 'n2-A', 'pressure', 1)",
               (BENCH,))
    db.execute("INSERT INTO sample_blocks(stream, t0, t1, n, bad, vmin, vmax, tolerance, points) "
               "VALUES (1, 0, 10, 2, 0, 1.0, 2.0, 1, x'')")
    db.execute("PRAGMA application_id = 1196638794")
    db.execute("PRAGMA user_version = 8")
    db.commit()
    db.close()
    with Journal(path) as j:
        (old,) = [e for e in j.events(BENCH) if e.kind == "samples-hour"]
        assert "last" not in old.payload and old.payload["max"] == 2.0
        assert j.db.execute("SELECT vlast FROM sample_blocks").fetchone()[0] is None
