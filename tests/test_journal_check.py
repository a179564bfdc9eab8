"""The journal's check on open (issue 28): a cost that does not grow with the file on every open
(header, identity, the b-trees' first and last branches), the full ``PRAGMA quick_check`` when the
file was not closed cleanly, when that check finds something, or on demand. Page layout from
sqlite.org/fileformat.html (sections 1.3 and 1.6)."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest

from benchwarden.errors import JournalError
from benchwarden.storage import journal_file as jf
from benchwarden.storage.journal import Journal


def _journal(path: Path, n: int = 3000) -> None:
    with Journal(path) as j:
        j.add_readings([("b", "s", f"2026-12-01T{i // 3600 % 24:02d}:{i // 60 % 60:02d}:{i % 60:02d}.{i:06d}",
                         1e6 - i, f"{i}", 293.15, "x", None, None, None) for i in range(n)])


def _last_leaf_of_readings(path: Path) -> int:
    db = sqlite3.connect(path)
    try:
        root = db.execute("SELECT rootpage FROM sqlite_master WHERE name = 'readings'").fetchone()[0]
        ps = db.execute("PRAGMA page_size").fetchone()[0]
    finally:
        db.close()
    data, page = path.read_bytes(), root
    while data[(page - 1) * ps] == 5:  # an interior table page: follow its right-most pointer
        page = int.from_bytes(data[(page - 1) * ps + 8:(page - 1) * ps + 12], "big")
    return page


def _spoil(path: Path, page: int) -> None:
    data = bytearray(path.read_bytes())
    ps = int.from_bytes(data[16:18], "big")
    data[(page - 1) * ps:(page - 1) * ps + 64] = b"\x42" * 64
    path.write_bytes(bytes(data))


def test_a_healthy_journal_passes_the_check_that_does_not_grow(tmp_path):
    path = tmp_path / "j.sqlite3"
    _journal(path)
    assert jf.closed_cleanly(path) and jf.structure_problem(path) is None
    with Journal(path) as j:
        assert not j._full_check and j.integrity_ok()


def test_a_spoilt_newest_page_is_found_without_reading_every_page(tmp_path, capsys):
    from benchwarden.cli import main

    path = tmp_path / "j.sqlite3"
    _journal(path)
    _spoil(path, _last_leaf_of_readings(path))
    assert "not a b-tree page" in (jf.structure_problem(path) or "")
    with pytest.raises(JournalError, match="is damaged; nothing was written"):
        Journal(path)
    assert main(["sessions", "--journal", str(path)]) == 2 and "damaged" in capsys.readouterr().err


def test_a_truncated_journal_is_found_by_its_header(tmp_path):
    path = tmp_path / "j.sqlite3"
    _journal(path)
    data = path.read_bytes()
    path.write_bytes(data[:len(data) - 4096])
    assert jf.structure_problem(path) is not None  # SQLite or the header says so
    with pytest.raises(JournalError, match="damaged"):
        Journal(path)


def test_a_spoilt_page_inside_is_found_by_the_full_check_on_demand(tmp_path):
    # a leaf in the middle of the readings is on neither branch the check on open follows: the
    # full check (on demand, or after an unclean close) reads it
    path = tmp_path / "j.sqlite3"
    _journal(path)
    db = sqlite3.connect(path)
    middle = db.execute("SELECT pageno FROM dbstat WHERE name = 'readings' AND pagetype = 'leaf'"
                        " ORDER BY pageno").fetchall() if _has_dbstat(db) else []
    db.close()
    if not middle:
        pytest.skip("this SQLite has no dbstat table to find a middle leaf with")
    _spoil(path, middle[len(middle) // 2][0])
    with Journal(path, check=False):
        pass
    with pytest.raises(JournalError, match="damaged"):
        Journal(path, check="full")


def test_a_journal_not_closed_cleanly_gets_the_full_check(tmp_path):
    path = tmp_path / "j.sqlite3"
    _journal(path)
    Path(f"{path}-wal").write_bytes(b"\0" * 32)  # left behind, as after a crash (no valid frames)
    assert not jf.closed_cleanly(path)
    with Journal(path) as j:
        assert j._full_check and j.integrity_ok()
    assert jf.closed_cleanly(path)  # the last close checkpoints and removes it


def _has_dbstat(db: sqlite3.Connection) -> bool:
    try:
        db.execute("SELECT 1 FROM dbstat LIMIT 1")
    except sqlite3.OperationalError:
        return False
    return True
