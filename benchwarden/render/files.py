"""Writing output files safely, and text safe for a terminal or a spreadsheet.

* :func:`write_output` — atomic (temporary file in the same folder, flush, fsync, rename), never
  over an existing file without ``force``, never over the journal (nor its ``-wal``, ``-shm``,
  ``-journal`` files) or the profile in use, however the path is spelt; every
  failure is one line naming the path.
* :func:`clean` — control characters and escape sequences out of text bound for a terminal.
* :func:`csv_cell` — a cell a spreadsheet will not run as a formula.
"""

from __future__ import annotations

import os
import re
import tempfile
import unicodedata
from collections.abc import Callable, Iterable
from pathlib import Path

from benchwarden.errors import InputError
from benchwarden.storage.journal import Journal
from benchwarden.units.constants import ATM_PA

__all__ = ["write_output", "clean", "csv_cell", "session_csv"]

_CONTROL = re.compile(r"\x1b\[[0-?]*[ -/]*[@-~]|\x1b\][^\x07\x1b]*(?:\x07|\x1b\\)?|\x1b.|[\x00-\x08\x0b-\x1f\x7f-\x9f]")
#: a number as text (a CSV cell that stays a number, sign and all)
_NUMBER = re.compile(r"[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?")


def clean(text: str) -> str:
    """Text without escape sequences, control characters or invisible format characters
    (Unicode category Cf: bidi overrides and isolates U+202A–U+202E and U+2066–U+2069, zero-width
    characters; newlines and tabs kept), so a bench name or a note cannot retitle, clear or recolour the
    terminal, nor display reversed.

    >>> clean("bench\\x1b]0;owned\\x07 2\\x1b[2J"), clean("N2\\u202e-A")
    ('bench 2', 'N2-A')
    """
    text = _CONTROL.sub("", text)
    if text.isascii():
        return text
    return "".join(c for c in text if unicodedata.category(c) != "Cf")


def csv_cell(value: object) -> object:
    """A CSV cell that a spreadsheet shows as text: text beginning with ``=``, ``+``, ``-``, ``@``,
    a tab or a carriage return is quoted with an apostrophe; numbers stay numbers, negative ones
    too (OWASP "CSV injection" list of leading characters, from memory).

    >>> csv_cell("=HYPERLINK(1)"), csv_cell("-0.5 bar"), csv_cell("\\tx"), csv_cell("-50000.0"), csv_cell(3.5)
    ("'=HYPERLINK(1)", "'-0.5 bar", "'\\tx", '-50000.0', 3.5)
    """
    if isinstance(value, str):
        if value[:1] in ("\t", "\r") and not _NUMBER.fullmatch(value.strip()):
            return "'" + clean(value)
        value = clean(value)
        if value[:1] in ("=", "+", "-", "@") and not _NUMBER.fullmatch(value):
            return "'" + value
    return value


def _umask() -> int:
    """The process's umask (read from /proc where it can be, else set and restored)."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


#: The files SQLite keeps beside a database (sqlite.org/tempfiles.html): the write-ahead log, its
#: shared-memory index and the rollback journal. Overwriting one loses committed data.
SIDE_FILES = ("-wal", "-shm", "-journal")


def _is_protected(out: Path, protected: Iterable[str | os.PathLike[str] | None]) -> bool:
    """Whether ``out``, however spelt (relative, ``..``, a symlink, a hard link), is one of the
    ``protected`` files or a journal side file of one, existing or not yet."""
    try:
        target = Path(os.path.realpath(out))
        guarded: set[Path] = set()
        for p in protected:
            if p is None:
                continue
            base = Path(p).expanduser()
            for b in (Path(os.path.abspath(base)), Path(os.path.realpath(base))):
                guarded.update(b.with_name(b.name + suffix) for suffix in ("",) + SIDE_FILES)
        if target in guarded or target in {Path(os.path.realpath(g)) for g in guarded}:
            return True
        return out.exists() and any(g.exists() and os.path.samefile(out, g) for g in guarded)
    except OSError as exc:
        raise InputError(f"output {out}: {exc.strerror or exc}") from None


def write_output(path: str | os.PathLike[str], data: bytes | str | Callable[[Path], object], *, force: bool = False,
                 protected: Iterable[str | os.PathLike[str] | None] = ()) -> Path:
    """Write ``data`` (bytes, text, or a function that writes a given temporary path) to
    ``path`` atomically. Refuses an existing file unless ``force``, and always, whatever
    ``force`` says and however the path is spelt, the ``protected`` files (the journal, the profile)
    and the journal's side files (``-wal``, ``-shm``, ``-journal``)."""
    out = Path(path).expanduser()
    if _is_protected(out, protected):
        raise InputError(f"output {out} is the journal, its -wal/-shm/-journal file or the profile: choose another "
                         "file")
    if out.is_dir():
        raise InputError(f"output {out} is a folder: give a file name")
    if not out.parent.is_dir():
        raise InputError(f"output {out}: the folder {out.parent} does not exist")
    if out.exists() and not force:
        raise InputError(f"output {out} exists: choose another name, or add --force to replace it")
    fd, tmp_name = tempfile.mkstemp(prefix=f".{out.name}.", suffix=".tmp", dir=out.parent)
    tmp = Path(tmp_name)
    try:
        if callable(data):
            os.close(fd)
            data(tmp)
            with open(tmp, "rb+") as fh:
                os.fsync(fh.fileno())
        else:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data.encode("utf-8") if isinstance(data, str) else data)
                fh.flush()
                os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())  # a document like any other (mkstemp made it 0600)
        os.replace(tmp, out)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise InputError(f"cannot write {out}: {exc.strerror or exc}; nothing was written") from None
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    return out


def session_csv(journal: Journal, session_id: int, ambient_pa: float = ATM_PA) -> str:
    """One session's readings as CSV: SI columns, the text as typed, and each gauge pressure
    converted back with the ambient it was typed against (so an export reads back exactly what
    was typed). Text cells are spreadsheet-safe (:func:`csv_cell`)."""
    import csv
    import io

    s = journal.session(session_id)
    if s is None:
        raise InputError(f"no session {session_id} in {journal.path}")
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["session", "bench", "supply", "time", "pressure_abs_pa", "pressure_gauge_pa", "typed",
                "temperature_k", "weight_kg", "ambient_pa", "struck_at", "struck_reason", "session_operator",
                "session_shots", "session_notes"])
    notes = " | ".join(text for _, text in journal.notes(session_id))
    for r in journal.readings(session_id):
        amb = r.ambient_pa if r.ambient_pa is not None else ambient_pa
        w.writerow([csv_cell(x) for x in (
            s.id, s.bench, r.supply_id, r.at,
            "" if r.pressure_abs_pa is None else f"{r.pressure_abs_pa:.1f}",
            "" if r.pressure_abs_pa is None else f"{r.pressure_abs_pa - amb:.1f}", r.pressure_text,
            f"{r.temperature_k:.2f}", "" if r.weight_kg is None else f"{r.weight_kg:.3f}",
            f"{amb:.1f}", r.struck_at or "", r.struck_reason or "", s.operator or "",
            "" if s.shots is None else s.shots, notes)])
    return buf.getvalue()
