"""Whose file is it, and what went wrong with it.

A journal's identity is read from the SQLite header (and, for a journal written before the
application id existed, its exact set of tables through a read-only, immutable connection) before
anything opens it for writing, so a foreign database is refused with the same bytes as before. A
failure is named for what it is: read-only (reading works, writing says why not), disk full
(nothing was written) or damaged (how to recover).
"""

from __future__ import annotations

import errno
import os
import sqlite3
from dataclasses import dataclass
from pathlib import Path
from typing import BinaryIO

from benchwarden.errors import JournalError

__all__ = ["Header", "read_header", "identify", "owned", "writable", "failure", "JournalFailure", "damaged", "read_only_words",
           "closed_cleanly", "structure_problem"]

#: The first 16 bytes of every SQLite 3 database file (sqlite.org/fileformat.html, section 1.3.1).
MAGIC = b"SQLite format 3\x00"
#: The table sets of journals written before the application id existed (schemas 1 to 3), by
#: ``user_version``: such a file is ours only with exactly these tables.
PRE_ID_TABLES: dict[int, frozenset[str]] = {
    1: frozenset({"sessions", "readings", "notes"}),
    2: frozenset({"sessions", "readings", "notes", "hold_tests"}),
    3: frozenset({"sessions", "readings", "notes", "hold_tests", "changes"}),
}


@dataclass(frozen=True)
class Header:
    """What a database file's header says: its application id and user version (big-endian at
    offsets 68 and 60, sqlite.org/fileformat.html, section 1.3)."""

    application_id: int
    user_version: int


def read_header(path: Path) -> Header | None:
    """The header of an existing database file; None for a missing or empty file (a new journal).
    A file that is not a SQLite database is refused, untouched."""
    try:
        with open(path, "rb") as fh:
            head = fh.read(100)
    except FileNotFoundError:
        return None
    if not head:
        return None
    if len(head) < 100 or not head.startswith(MAGIC):
        backups = _backups(path)
        raise JournalError(f"{path} is not a SQLite database, so not a benchwarden journal; it was left untouched"
                           + (f". If it was your journal, restore {backups[-1].name}" if backups else
                              " — point --journal at another file"))
    return Header(int.from_bytes(head[68:72], "big"), int.from_bytes(head[60:64], "big", signed=True))


def owned(application_id: int, ours: int, version: int, tables: set[str]) -> bool:
    """A file is ours by our application id, or (id 0, from before the id existed) by the exact
    table set of its schema version."""
    if application_id == ours:
        return True
    return application_id == 0 and PRE_ID_TABLES.get(version) == frozenset(t for t in tables
                                                                           if not t.startswith("sqlite_"))


def _tables(path: Path) -> set[str]:
    """The tables of a file, read without locks or side files (``immutable``: nothing is created
    or changed beside it)."""
    db = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro&immutable=1", uri=True)
    try:
        return {r[0] for r in db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    finally:
        db.close()


def foreign(path: Path) -> JournalError:
    return JournalError(f"{path} is not a benchwarden journal (another program's SQLite file); it was left "
                        "untouched — point --journal at another file")


def identify(path: Path, ours: int, schema: int) -> None:
    """Refuse, before anything opens it for writing, a file that is not a benchwarden journal or is
    one from a newer benchwarden. A missing or empty file passes (a new journal)."""
    head = read_header(path)
    if head is None:
        return
    if head.application_id not in (0, ours):
        raise foreign(path)
    if head.application_id == 0:
        try:
            tables = _tables(path)
        except sqlite3.DatabaseError:
            raise foreign(path) from None
        if not owned(0, ours, head.user_version, tables):
            raise foreign(path)
    if head.user_version > schema:
        raise JournalError(f"journal {path} has schema {head.user_version}, newer than this benchwarden "
                           f"({schema}): update benchwarden; the file was left untouched")


def closed_cleanly(path: Path) -> bool:
    """Whether the last connection closed the file: no write-ahead log or rollback journal with
    content beside it (SQLite checkpoints and removes the ``-wal`` on the last close; one left
    behind means a crash, a power cut, or another program that has it open)."""
    for suffix in ("-wal", "-journal"):
        try:
            if os.path.getsize(f"{path}{suffix}") > 0:
                return False
        except OSError:
            pass
    return True


#: b-tree page types (sqlite.org/fileformat.html, section 1.6): interior index, interior table,
#: leaf index, leaf table
_INTERIOR, _PAGE_TYPES = (2, 5), (2, 5, 10, 13)


def structure_problem(path: Path) -> str | None:
    """What a check whose cost does not grow with the file finds wrong with a closed journal (None:
    nothing). It reads the header (page size; the page count it records against the file's size)
    and, for every b-tree (tables and indexes, their root pages read through an ``immutable``
    connection), the pages from the root down its first and its last branch (where new rows go),
    checking each page's type, cell count and child pointers (sqlite.org/fileformat.html,
    sections 1.3 and 1.6). It does not read every page: a full ``PRAGMA quick_check`` does, when
    the file was not closed cleanly or on demand.

    Run it before this process connects to the file: closing a file descriptor drops every POSIX
    lock the process holds on the file, SQLite's included (sqlite.org/howtocorrupt.html, 2.2).
    A missing or empty file (a new journal) has nothing to check."""
    if not path.exists() or path.stat().st_size == 0:
        return None
    try:
        db = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro&immutable=1", uri=True)
        try:
            roots = [int(r[0]) for r in db.execute("SELECT rootpage FROM sqlite_master WHERE rootpage > 0")]
        finally:
            db.close()
    except sqlite3.DatabaseError as exc:
        return str(exc)
    try:
        size = os.path.getsize(path)
        with open(path, "rb") as fh:
            head = fh.read(100)
            ps = int.from_bytes(head[16:18], "big")
            ps = 65536 if ps == 1 else ps
            if ps < 512 or ps & (ps - 1):
                return f"page size {ps} in the header"
            usable = ps - head[20]
            pages = int.from_bytes(head[28:32], "big")
            if pages and head[24:28] == head[92:96] and pages * ps != size:
                return f"the header counts {pages} pages of {ps} bytes, the file has {size} bytes"
            if size % ps:
                return f"the file's size {size} is not a whole number of {ps}-byte pages"
            count = size // ps
            for root in roots:
                for side in (0, 1):
                    problem = _branch(fh, root, side, ps, usable, count)
                    if problem:
                        return problem
    except OSError as exc:
        return str(exc)
    return None


def _branch(fh: BinaryIO, page: int, last: int, ps: int, usable: int, count: int) -> str | None:
    """Follow one branch of a b-tree from ``page`` (``last``: the right-most child, else the first
    cell's) down to its leaf, checking every page on the way."""
    for _ in range(32):  # deeper than any b-tree of a file this size
        if not 1 <= page <= count:
            return f"page {page} is outside the file ({count} pages)"
        fh.seek((page - 1) * ps)
        data = fh.read(ps)
        h = 100 if page == 1 else 0
        kind, cells = data[h], int.from_bytes(data[h + 3:h + 5], "big")
        if kind not in _PAGE_TYPES:
            return f"page {page} is not a b-tree page (type {kind})"
        top = h + (12 if kind in _INTERIOR else 8)
        if top + 2 * cells > usable:
            return f"page {page} claims {cells} cells"
        if kind not in _INTERIOR:
            return None
        if last or not cells:
            page = int.from_bytes(data[h + 8:h + 12], "big")
            continue
        cell = int.from_bytes(data[top:top + 2], "big")
        if not top <= cell <= usable - 4:
            return f"page {page} points its first cell outside the page"
        page = int.from_bytes(data[cell:cell + 4], "big")
    return "a b-tree deeper than 32 pages"


def writable(path: Path) -> bool:
    """Whether the journal (or, for a new one, its folder) and its folder can be written: SQLite
    writes its ``-wal`` and ``-shm`` files beside it. A read-only mount says no even to root."""
    folder = path.parent if path.parent.exists() else next((p for p in path.parents if p.exists()), Path("/"))
    return os.access(folder, os.W_OK) and (not path.exists() or os.access(path, os.W_OK))


def _backups(path: Path) -> list[Path]:
    try:
        return sorted(path.parent.glob(f"{path.name}.v*.bak"))
    except OSError:
        return []


def read_only_words(path: Path) -> str:
    return (f"journal {path} is read-only: reading commands (sessions, status, plan, export) work; this one "
            "writes, so nothing was recorded")


def damaged(path: Path, detail: str) -> JournalError:
    """A damaged journal: refused, nothing written, with how to recover (a backup made before an
    upgrade, or SQLite's own ``.recover`` after keeping a copy)."""
    backups = _backups(path)
    how = f"sqlite3 {path.name} .recover | sqlite3 new.sqlite3"
    err = JournalError(f"journal {path} is damaged; nothing was written. "
                       + (f"Restore {backups[-1].name}, or: " if backups else "Keep a copy, then recover: ") + how)
    err.detail = detail  # type: ignore[attr-defined]  # the integrity check's own words
    return err


def _disk_full(path: Path) -> bool:
    try:
        st = os.statvfs(path.parent if path.parent.exists() else Path("/"))
    except OSError:
        return False
    return st.f_bavail * st.f_frsize < 64 * 1024


class JournalFailure(JournalError):
    """A failure named for what it is: ``kind`` is ``full``, ``read-only``, ``damaged`` or ``other``."""

    def __init__(self, msg: str, kind: str) -> None:
        super().__init__(msg)
        self.kind = kind


def failure(path: Path, exc: BaseException, writing: bool = True) -> JournalFailure:
    """The true words for a failure of SQLite or the file system on the journal: read-only, disk
    full, damaged, or (anything else) the library's own words."""
    name = str(getattr(exc, "sqlite_errorname", ""))
    code = getattr(exc, "errno", None)
    if name.startswith("SQLITE_FULL") or code in (errno.ENOSPC, errno.EDQUOT) or (
            name.startswith(("SQLITE_IOERR", "SQLITE_CANTOPEN")) and _disk_full(path)):
        return JournalFailure(f"journal {path}: the disk is full; nothing was written (free some space, then "
                              "repeat)", "full")
    if name.startswith("SQLITE_READONLY") or code in (errno.EROFS, errno.EACCES, errno.EPERM) or (
            name.startswith(("SQLITE_CANTOPEN", "SQLITE_IOERR")) and not writable(path)):
        if not path.exists():
            return JournalFailure(f"cannot create the journal {path}: its folder is read-only; nothing was written "
                                  "— point --journal at a folder you can write", "read-only")
        return JournalFailure(read_only_words(path), "read-only")
    if name.startswith(("SQLITE_CORRUPT", "SQLITE_NOTADB")):
        return JournalFailure(str(damaged(path, str(exc))), "damaged")
    what = "write failed" if writing else "read failed"
    return JournalFailure(f"journal {path}: {what} ({exc}); nothing was recorded" if writing
                          else f"journal {path}: {what} ({exc})", "other")
