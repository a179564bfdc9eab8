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
