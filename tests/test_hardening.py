"""Hardening, third pass (issue 27): each numbered problem pinned by a regression test named after
it. The generated classes of the same problems are in tests/test_generated_bad_input.py."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from clitools import limit_s

from benchwarden.cli import main
from benchwarden.errors import InputError

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "profiles" / "demo-teaching-bench.toml"
CONTENTS = ["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC"]


def _run(argv: list[str], capsys) -> tuple[int, str, str]:
    try:
        code = main(argv)
    except SystemExit as exc:
        code = int(exc.code or 0)
    out, err = capsys.readouterr()
    return code, out, err


def _refused(argv: list[str], capsys, *words: str) -> str:
    code, out, err = _run(argv, capsys)
    assert code == 2 and not out and len(err.splitlines()) == 1 and "Traceback" not in err, (code, out, err)
    for w in words:
        assert w in err, (w, err)
    return err


def _with(argv: list[str], opt: str, value: str) -> list[str]:
    out = list(argv)
    out[out.index(opt) + 1] = value
    return out


# ----------------------------------------------------------------------------- 4. bounded reads


def test_checklist_items_at_dev_zero_are_refused_without_reading(tmp_path, capsys):
    prof = tmp_path / "b.toml"
    prof.write_text(DEMO.read_text() + '\n[checklist]\nitems = "/dev/zero"\n')
    _refused(["checklist", str(prof)], capsys, "/dev/zero", "not a regular file")


@pytest.mark.parametrize("kind", ["fifo", "folder", "huge"])
def test_every_file_a_profile_names_is_a_regular_file_of_bounded_size(kind, tmp_path, capsys):
    target = tmp_path / "items.toml"
    if kind == "fifo":
        os.mkfifo(target)  # opening it for reading would wait for a writer forever
    elif kind == "folder":
        target.mkdir()
    else:
        with open(target, "wb") as fh:  # sparse: 3 MB that cost nothing on disk
            fh.truncate(3_000_000)
    prof = tmp_path / "b.toml"
    prof.write_text(DEMO.read_text() + f'\n[checklist]\nitems = "{target}"\n')
    _refused(["checklist", str(prof)], capsys, str(target))
    _refused(["plan", str(target)], capsys, str(target))


# ----------------------------------------------------------------------------- 5. long quantities


def test_a_100000_character_unit_is_refused_at_once(capsys, monkeypatch):
    # was over 90 s, growing faster than the input: refused on its length, before any parsing
    from benchwarden.units import parse

    def never(*a, **k):
        raise AssertionError("a long unit reached pint")

    monkeypatch.setattr(parse, "_pint_quantity", never)
    _refused(_with(CONTENTS, "--volume", "50 " + "L" * 100_000), capsys, "volume", "100003 characters",
             "at most 100")


def test_long_quantities_are_refused_before_parsing_everywhere():
    from benchwarden.units import parse_flow, parse_pressure
    from benchwarden.units.quantities import parse_fraction, parse_ventilation

    for fn in (parse_pressure, parse_flow, parse_ventilation, parse_fraction):
        with pytest.raises(InputError, match="characters long"):
            fn("1 " + "x" * 200)


# ----------------------------------------------------------------------------- 6. invisible characters


@pytest.mark.parametrize("char", ["\u202a", "\u202b", "\u202c", "\u202d", "\u202e", "\u2066", "\u2067", "\u2068",
                                  "\u2069", "\u200b", "\u200e", "\ufeff", "\u00ad", "\u2060"])
def test_bidi_and_invisible_format_characters_in_profile_text_are_refused_with_the_line(char, tmp_path, capsys):
    text = DEMO.read_text()
    needle = 'name = "Demo: Larkfield'
    line = text[: text.index(needle)].count("\n") + 1
    prof = tmp_path / "b.toml"
    prof.write_text(text.replace(needle, f'name = "Demo{char}: Larkfield'))
    for cmd in ("plan", "checklist"):
        err = _refused([cmd, str(prof)], capsys, f"b.toml:{line}", f"U+{ord(char):04X}", "bench.name")
        assert char not in err


def test_invisible_characters_in_a_checklist_items_file_are_refused_with_the_line(tmp_path, capsys):
    items = tmp_path / "items.toml"
    items.write_text('[[sections]]\nid = "x"\nitems = [\n  { id = "a", text = "valve \u202eclosed" },\n]\n')
    prof = tmp_path / "b.toml"
    prof.write_text(DEMO.read_text() + f'\n[checklist]\nitems = "{items}"\n')
    _refused(["checklist", str(prof)], capsys, "items.toml:4", "U+202E")


def test_invisible_characters_never_reach_the_terminal():
    from benchwarden.cli.common import one_line
    from benchwarden.render.files import clean

    assert clean("N2\u202e-A\u2066x\u2069") == "N2-Ax"
    assert "\u202e" not in one_line("unknown unit 'L\u202e'")


def test_csv_cells_beginning_with_tab_or_cr_are_neutralised_and_negative_numbers_stay_numbers():
    from benchwarden.render.files import csv_cell

    assert csv_cell("\t=1+1") == "'\t=1+1" and csv_cell("\r=1+1") == "'=1+1"
    assert csv_cell("-50000.0") == "-50000.0" and csv_cell("-1.5e3") == "-1.5e3" and csv_cell("+3") == "+3"
    assert csv_cell("-1+2") == "'-1+2" and csv_cell("=-5") == "'=-5" and csv_cell(-2.5) == -2.5


def test_a_vacuum_reading_exports_as_a_negative_number(tmp_path):
    from benchwarden.render.files import session_csv
    from benchwarden.storage.journal import Journal

    with Journal(tmp_path / "j.sqlite3") as j:
        sid = j.start_session("b", None, "2026-12-01T09:00:00+00:00")
        j.add_reading(sid, "s", "2026-12-01T09:05:00+00:00", 50_000.0, "-0.5 bar", 293.15,
                      "2026-12-01T09:05:00+00:00", ambient_pa=101_325.0)
        row = session_csv(j, sid).splitlines()[1].split(",")
    assert row[4] == "50000.0" and row[5] == "-51325.0" and row[6] == "'-0.5 bar"


# ----------------------------------------------------------------------------- 7. ASCII digits


@pytest.mark.parametrize("value", ["٣ bar", "２００ bar", "٠.٦ bar", "۲۰۰ bar", "१०० bar", "2٠ bar"])
def test_unicode_digits_are_refused_with_a_clear_line(value, capsys):
    _refused(_with(CONTENTS, "--pressure", value), capsys, "digits 0-9", "U+")


def test_unicode_digits_in_a_profile_quantity_are_refused(tmp_path, capsys):
    prof = tmp_path / "b.toml"
    text = DEMO.read_text()
    assert 'water_volume = "50 L"' in text
    prof.write_text(text.replace('water_volume = "50 L"', 'water_volume = "٥٠ L"', 1))
    _refused(["plan", str(prof)], capsys, "digits 0-9", "water_volume")


# ----------------------------------------------------------------------------- 1. foreign databases


def _db(path: Path, script: str, app_id: int = 0, version: int = 0) -> bytes:
    import sqlite3

    db = sqlite3.connect(path)
    db.executescript(script + f"PRAGMA application_id = {app_id}; PRAGMA user_version = {version};")
    db.commit()
    db.close()
    return path.read_bytes()


def _untouched(path: Path, before: bytes) -> None:
    assert path.read_bytes() == before
    assert sorted(p.name for p in path.parent.iterdir() if p.name.startswith(path.name)) == [path.name]


FOREIGN = {
    # the case: a `sessions` table, application id 0 (any other program's)
    "sessions-id-0": ("CREATE TABLE sessions (id INTEGER, who TEXT);", 0, 0),
    "sessions-id-0-version-1": ("CREATE TABLE sessions (id INTEGER, who TEXT);", 0, 1),
    "v1-tables-and-one-more": ("CREATE TABLE sessions (id INTEGER); CREATE TABLE readings (id INTEGER); "
                               "CREATE TABLE notes (id INTEGER); CREATE TABLE invoices (id INTEGER);", 0, 1),
    "v2-tables-claiming-v1": ("CREATE TABLE sessions (id INTEGER); CREATE TABLE readings (id INTEGER); "
                              "CREATE TABLE notes (id INTEGER); CREATE TABLE hold_tests (id INTEGER);", 0, 1),
    "another-application-id": ("CREATE TABLE sessions (id INTEGER);", 0x12345678, 2),
    "empty-database-of-another-program": ("", 0, 0),
}


@pytest.mark.parametrize("case", sorted(FOREIGN))
def test_a_foreign_sqlite_database_is_never_written_to(case, tmp_path, capsys):
    path = tmp_path / "other.db"
    script, app_id, version = FOREIGN[case]
    before = _db(path, script + "CREATE TABLE IF NOT EXISTS filler (x);" if not script else script, app_id, version)
    for argv in (["reading", str(DEMO), "n2-A", "--pressure", "60 bar", "--at", "2026-12-01T09:00"],
                 ["sessions"], ["status", str(DEMO)], ["plan", str(DEMO)], ["export", "1"]):
        _refused(argv + ["--journal", str(path)], capsys, "not a benchwarden journal", "untouched")
        _untouched(path, before)


def test_a_journal_from_before_the_application_id_is_still_ours(tmp_path):
    import sqlite3

    from benchwarden.storage.journal import _MIGRATIONS, APPLICATION_ID, Journal

    for version in (1, 2, 3):
        path = tmp_path / f"v{version}.sqlite3"
        _db(path, "".join(_MIGRATIONS[v] + ";" for v in range(1, version + 1)), 0, version)
        with Journal(path) as j:
            assert j.db.execute("PRAGMA application_id").fetchone()[0] == APPLICATION_ID
        assert (tmp_path / f"v{version}.sqlite3.v{version}.bak").exists()
        db = sqlite3.connect(tmp_path / f"v{version}.sqlite3.v{version}.bak")
        assert db.execute("PRAGMA user_version").fetchone()[0] == version
        db.close()


# ----------------------------------------------------------------------------- 3. true words


def _journal_with_a_reading(path: Path) -> None:
    from benchwarden.storage.journal import Journal

    with Journal(path) as j:
        for i in range(200):
            sid = j.start_session("b", None, f"2026-12-01T09:{i % 60:02d}:00")
            j.add_note(sid, "2026-12-01T10:00", "n" * 300)


def test_a_truncated_journal_gets_recovery_advice(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    path = Path("j.sqlite3")
    _journal_with_a_reading(path)
    data = path.read_bytes()
    path.write_bytes(data[: len(data) // 2])
    err = _refused(["sessions", "--journal", str(path)], capsys, "damaged", "nothing was written",
                   "sqlite3 j.sqlite3 .recover | sqlite3 new.sqlite3")
    assert "not a benchwarden journal" not in err
    (tmp_path / "j.sqlite3.v3.bak").write_bytes(b"")
    for argv in (["status", str(DEMO)], ["reading", str(DEMO), "n2-A", "--pressure", "60 bar"]):
        _refused(argv + ["--journal", str(path)], capsys, "damaged", "Restore j.sqlite3.v3.bak, or: sqlite3 j.sqlite3 .recover")
    assert path.read_bytes() == data[: len(data) // 2]


def test_a_journal_opened_for_reading_says_read_only_when_written(tmp_path):
    from benchwarden.errors import JournalError
    from benchwarden.storage.journal import Journal

    path = tmp_path / "j.sqlite3"
    _journal_with_a_reading(path)
    with Journal(path, readonly=True) as j:
        assert len(j.sessions()) == 200
        with pytest.raises(JournalError, match="is read-only: reading commands .* work; .* nothing was recorded"):
            j.start_session("b", None, "2026-12-02T09:00")


def test_a_full_disk_says_so_and_nothing_is_written(tmp_path):
    # SQLITE_FULL made without filling a disk: a page limit on the connection (sqlite.org/pragma.html
    # #pragma_max_page_count: "database or disk is full" when it is reached)
    from benchwarden.errors import JournalError
    from benchwarden.storage.journal import Journal

    path = tmp_path / "j.sqlite3"
    _journal_with_a_reading(path)
    with Journal(path) as j:
        pages = j.db.execute("PRAGMA page_count").fetchone()[0]
        j.db.execute(f"PRAGMA max_page_count = {pages}")
        with pytest.raises(JournalError, match="the disk is full; nothing was written"):
            for _ in range(50):
                j.add_note(1, "2026-12-02T09:00", "x" * 3000)
        assert len(j.notes(1)) == 1 + sum(1 for a, t in j.notes(1) if t.startswith("x"))


def _unshare(tmp_path: Path, script: str) -> str:
    """Run ``script`` in a private mount namespace (its mounts vanish with it); skip where the
    machine does not allow one."""
    import shutil
    import subprocess
    import sys

    if shutil.which("unshare") is None:
        pytest.skip("no unshare here")
    probe = subprocess.run(["unshare", "-m", "true"], capture_output=True)
    if probe.returncode != 0:
        pytest.skip("mount namespaces are not permitted here")
    env = dict(os.environ, PY=sys.executable, DEMO=str(DEMO), MNT=str(tmp_path / "mnt"), PYTHONPATH=str(ROOT))
    (tmp_path / "mnt").mkdir()
    r = subprocess.run(["unshare", "-m", "sh", "-c", "set -u\nmount -t tmpfs -o size=256k none \"$MNT\" || exit 77\n"
                        + script], capture_output=True, text=True, env=env, timeout=limit_s(120))
    if r.returncode == 77:
        pytest.skip("tmpfs mounts are not permitted here")
    assert r.returncode == 0, r.stderr
    return r.stdout + r.stderr


def test_a_read_only_mount_reads_and_refuses_writes_with_true_words(tmp_path):
    out = _unshare(tmp_path, """
export BENCHWARDEN_JOURNAL="$MNT/j.sqlite3"
$PY -m benchwarden reading "$DEMO" n2-A --pressure "60 bar" --at 2026-12-01T09:00 >/dev/null; echo "first=$?"
mount -o remount,ro "$MNT"
$PY -m benchwarden status "$DEMO" --json >/dev/null; echo "status=$?"
$PY -m benchwarden sessions; echo "sessions=$?"
$PY -m benchwarden reading "$DEMO" n2-A --pressure "59 bar" --at 2026-12-01T10:00; echo "reading=$?"
""")
    assert "first=0" in out and "status=0" in out and "sessions=0" in out and "reading=2" in out, out
    assert "is read-only: reading commands" in out and "not a benchwarden journal" not in out


def test_a_full_disk_reads_and_refuses_writes_with_true_words(tmp_path):
    out = _unshare(tmp_path, """
export BENCHWARDEN_JOURNAL="$MNT/j.sqlite3"
$PY -m benchwarden reading "$DEMO" n2-A --pressure "60 bar" --at 2026-12-01T09:00 >/dev/null; echo "first=$?"
dd if=/dev/zero of="$MNT/fill" bs=4k 2>/dev/null
$PY -m benchwarden reading "$DEMO" n2-A --pressure "59 bar" --at 2026-12-01T10:00; echo "reading=$?"
$PY -m benchwarden status "$DEMO" --json >/dev/null; echo "status=$?"
rm "$MNT/fill"
$PY -m benchwarden status "$DEMO" --json >/dev/null; echo "after=$?"
""")
    assert "first=0" in out and "reading=2" in out and "status=0" in out and "after=0" in out, out
    assert "the disk is full; nothing was written" in out and "not a benchwarden journal" not in out


# ----------------------------------------------------------------------------- 2. side files


def _spellings(tmp_path: Path, target: Path) -> list[str]:
    """One path, spelt several ways: absolute, relative, through `..`, a symlink, a symlink to the
    folder (all exist or not, as the target does)."""
    (tmp_path / "sub").mkdir(exist_ok=True)
    link = tmp_path / f"link-to-{target.name}"
    if not link.is_symlink():
        link.symlink_to(target)
    folder_link = tmp_path / "folder-link"
    if not folder_link.is_symlink():
        folder_link.symlink_to(tmp_path)
    return [str(target), os.path.relpath(target), str(tmp_path / "sub" / ".." / target.name), str(link),
            str(folder_link / target.name)]


@pytest.mark.parametrize("suffix", ["", "-wal", "-shm", "-journal"])
def test_outputs_never_go_to_the_journal_or_its_side_files_whatever_force_says(suffix, tmp_path, capsys, monkeypatch):
    # regression: `checklist … --output JOURNAL-wal --force` destroyed a committed reading in the WAL
    from benchwarden.storage.journal import Journal

    monkeypatch.chdir(tmp_path)
    journal = tmp_path / "j.sqlite3"
    with Journal(journal) as j:  # kept open: the reading stays in the write-ahead log
        sid = j.start_session("b", None, "2026-12-01T09:00:00+00:00")
        j.add_reading(sid, "s", "2026-12-01T09:05:00+00:00", 15e6, "149 bar", 293.15, "2026-12-01T09:05:00+00:00")
        target = tmp_path / f"j.sqlite3{suffix}"
        for spelt in _spellings(tmp_path, target):
            for argv in (["checklist", str(DEMO), "--output", spelt, "--force"],
                         ["export", str(sid), "--output", spelt, "--force"]):
                _refused(argv + ["--journal", str(journal)], capsys, "-wal/-shm/-journal", "choose another")
                # (the journal's own files change as it is read and its marks kept: never our output)
                data = target.read_bytes() if target.exists() else b""
                assert b"CHECKLIST" not in data and b"pressure_abs_pa,pressure_gauge_pa" not in data
    with Journal(journal) as j:
        assert [r.pressure_text for r in j.readings(sid)] == ["149 bar"]


def test_outputs_never_go_to_the_profile_or_a_hard_link_of_the_journal(tmp_path, capsys, monkeypatch):
    from benchwarden.storage.journal import Journal

    monkeypatch.chdir(tmp_path)
    prof = tmp_path / "bench.toml"
    prof.write_text(DEMO.read_text())
    journal = tmp_path / "j.sqlite3"
    Journal(journal).close()
    hard = tmp_path / "hard.sqlite3"
    os.link(journal, hard)
    before = journal.read_bytes()
    for spelt in _spellings(tmp_path, prof):
        _refused(["checklist", str(prof), "--output", spelt, "--force", "--journal", str(journal)], capsys,
                 "choose another")
    _refused(["checklist", str(prof), "--output", str(hard), "--force", "--journal", str(journal)], capsys,
             "choose another")
    data = journal.read_bytes()  # read, and its marks kept: still the journal, never our output
    assert prof.read_text() == DEMO.read_text() and data.startswith(b"SQLite format 3\x00") and b"CHECKLIST" not in data
    assert len(data) >= len(before)


# ----------------------------------------------------------------------------- 8. a range for every value

HOLD = ["hold", "--gas", "n2", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar", "--duration", "14 h"]
HEAT = ["heat", "--gas", "n2", "--pressure", "200 bar", "--temperature", "15 degC", "--to", "40 degC"]
RUNTIME = ["runtime", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "20 degC",
           "--reserve", "10 bar", "--flow", "2 slpm"]
GAP = ["gap", "--gas", "n2", "--spacing", "2 mm", "--pressure", "3 bar", "--temperature", "20 degC"]
ROOM = ["room", "--gas", "n2", "--room-volume", "40 m3", "--leak", "5 slpm", "--ventilation", "2/h"]

RANGES = [
    # (argv, words the one line must carry) — each accepted before issue 27
    (HOLD + ["--t-uncertainty", "1e308 K"], ["temperature uncertainty", "at most 10 K"]),  # was an OverflowError
    (_with(HOLD, "--duration", "0.0000001 s"), ["hold duration", "from 1 min to a year"]),  # was −2e12 sccm
    (HOLD + ["--reserve", "-1 bar"], ["reserve", "at least 0 bar(g)"]),
    (HOLD + ["--reserve", "500 bar"], ["reserve", "below the start pressure"]),
    (HOLD + ["--line-length", "3 m", "--bore", "4 mm"], ["--volume, --line-length and --bore exclude each other"]),
    (HOLD + ["--bore", "4 mm"], ["--volume and --bore exclude each other"]),
    (HEAT + ["--service", "0 bar", "--test", "0 bar"], ["service pressure", "above 0 bar(g)"]),
    (HEAT + ["--service", "300 bar", "--test", "200 bar"], ["test pressure", "at least the service pressure"]),
    (_with(RUNTIME, "--flow", "1e-300 slpm"), ["draw", "at least 0.001 sccm"]),  # was 300 digits of days
    (_with(RUNTIME, "--reserve", "250 bar"), ["reserve", "below the pressure now"]),
    (_with(GAP, "--spacing", "1e-30 mm"), ["gap spacing", "at least 0.01 mm"]),
    (_with(GAP, "--pressure", "1e-300 Torr"), ["gap pressure", "at least 0.001 bar(a)"]),
    (_with(ROOM, "--room-volume", "1e-9 m3"), ["room volume", "at least 1 m³"]),
    (CONTENTS + ["--gross", "70 kg", "--tare", "60 kg"], ["--pressure, --gross and --tare exclude each other"]),
    (["contents", "--gas", "co2", "--volume", "50 L", "--gross", "1000 kg", "--tare", "1 kg"],
     ["net weight", "holds no more"]),  # was "999 kg"
    (["orifice", "--gas", "n2", "--diameter", "1e-30 mm", "--upstream", "2 bar", "--downstream", "0 bar",
      "--temperature", "20 degC"], ["orifice diameter", "from 0.001 mm"]),  # was 2e-59 g/min
    (_with(ROOM, "--leak", "1e-300 slpm"), ["leak", "at least 0.001 sccm"]),
    (["room", "--gas", "n2", "--room-volume", "40 m3", "--release", "1e-300 m3"], ["release", "from 1 mL"]),
    (_with(ROOM, "--ventilation", "1e-300/h"), ["ventilation", "from 0.01 to 1000 air changes"]),
    (["purge", "--gas", "n2", "--volume", "1e-30 L", "--high", "4 bar", "--low", "0 bar", "--target", "10 ppm"],
     ["purged volume", "from 1 mL"]),
    (HOLD + ["--gauge-range", "250 bar", "--gauge-class", "1.6", "--resolution", "1e-300 bar"],
     ["resolution", "from 0.01 Pa"]),
    (["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "20 degC",
      "--ambient", "100 kPa", "--altitude", "300 m"], ["--ambient and --altitude exclude each other"]),
    (["hold", "--gas", "n2", "--volume", "50 L", "--log", str(ROOT / "examples" / "hold-log.csv"), "--start",
      "3 bar"], ["--log and --start exclude each other"]),
    (["simulate", "--gas", "n2", "--volume", "1e-30 L", "--pressure", "150 bar", "--for", "1 s"],
     ["cylinder volume", "from 10 mL"]),
    (["simulate", "--gas", "n2", "--volume", "50 L", "--pressure", "150 bar", "--leak", "1e-300 sccm"],
     ["leak", "0, or at least 0.001 sccm"]),
    (["simulate", "--gas", "n2", "--volume", "50 L", "--pressure", "150 bar", "--for", "1e-30 s"],
     ["--for", "from 0.1 s to a year"]),
    (["simulate", "--gas", "n2", "--volume", "50 L", "--pressure", "150 bar", "--port", "-1"], ["--port"]),
    (["simulate", "--gas", "n2", "--volume", "50 L", "--pressure", "150 bar", "--port", "70000"], ["--port"]),
    (["simulate", "--gas", "n2", "--volume", "50 L", "--pressure", "150 bar", "--port", "abc"], ["--port"]),
]


@pytest.mark.parametrize("argv, words", RANGES, ids=[" ".join(a[:1] + a[-2:])[:50] for a, _ in RANGES])
def test_every_value_has_a_range_and_conflicting_options_are_named(argv, words, capsys):
    _refused(argv, capsys, *words)


def test_range_errors_carry_their_data_for_renderers():
    from benchwarden.errors import ConflictError, RangeError
    from benchwarden.units.limits import conflict, within

    with pytest.raises(RangeError) as exc:
        within(1e308, "temperature uncertainty", 0.0, 10.0, "K", text="1e308 K")
    e = exc.value
    assert (e.what, e.value, e.lo, e.hi, e.unit) == ("temperature uncertainty", 1e308, 0.0, 10.0, "K")
    with pytest.raises(ConflictError) as cexc:
        conflict(["--pressure", "--gross"])
    assert cexc.value.names == ("--pressure", "--gross")


def test_nan_and_infinity_are_outside_every_range():
    from benchwarden.errors import RangeError
    from benchwarden.units.limits import within

    for bad in (float("nan"), float("inf"), -float("inf")):
        with pytest.raises(RangeError):
            within(bad, "x", 0.0, 1.0, "m")


def test_a_capacity_within_bounds_is_a_finding_not_bad_input(capsys):
    # 40 kg of CO2 in 50 L (0.8 kg/L) is overfilled — a STOP finding — but physically possible
    code, out, err = _run(["contents", "--gas", "co2", "--volume", "50 L", "--gross", "100 kg", "--tare", "60 kg"],
                          capsys)
    assert code == 0 and "STOP" in out and "overfilled" in out


DEMO_ARGS = [str(DEMO), "n2-A", "--pressure", "60 bar"]


@pytest.mark.parametrize("at", ["1970-01-01T00:00", "1900-01-01T00:00", "1989-12-31T23:59"])
def test_reading_times_absurdly_old_are_refused(at, capsys):
    _refused(["reading", *DEMO_ARGS, "--at", at], capsys, "time", "from 1990-01-01")


def test_a_reading_from_a_paper_logbook_is_shown_with_its_date(capsys):
    code, out, err = _run(["reading", *DEMO_ARGS, "--at", "2019-03-04T09:15"], capsys)
    assert code == 0 and "Mon 4 Mar 09:15" in out, (out, err)  # was "Mon 09:15", as if this week


@pytest.mark.parametrize("retest", ["1900-01-01", "1970-01-01", "2099-01-01"])
def test_retest_dates_out_of_range_are_refused(retest, capsys):
    _refused(["swap", *DEMO_ARGS, "--retest", retest], capsys, "retest date", "from 1990-01-01")


def test_a_past_retest_date_is_called_overdue(capsys):
    code, out, err = _run(["swap", *DEMO_ARGS, "--retest", "2020-06-01"], capsys)
    assert code == 0 and "RETEST OVERDUE since 2020-06-01" in out
    code, out, err = _run(["swap", *DEMO_ARGS, "--retest", "2020-06-01", "--json"], capsys)
    import json

    assert code == 0 and json.loads(out)["retest_overdue"] is True


def test_run_times_beyond_ten_years_are_not_printed_in_days():
    from benchwarden.render.display import fmt_hours

    assert fmt_hours(1e300) == "more than ten years" and fmt_hours(48.5) == "2 d 0 h"


PROFILE_RANGES = [
    ("fill_price = 62.0", "fill_price = inf", "fill_price"),
    ("fill_price = 62.0", "fill_price = 1e12", "fill_price"),
    ('reserve = "15 bar"', 'reserve = "-0.5 bar"', "reserve"),
    ('spacing = "1.4 mm"', 'spacing = "1e-30 mm"', "spacing"),
]
SOURCE = 'gauge = { range = "315 bar", accuracy_class = 1.6 }\n'
SOURCES = [
    ('kind = "modbus-tcp"\nhost = "10.0.0.5"\nscale = 0\n', "scale 0"),
    ('kind = "modbus-tcp"\nhost = "10.0.0.5"\nport = -1\n', "port -1"),
    ('kind = "modbus-tcp"\nhost = "10.0.0.5"\nport = 70000\n', "port 70000"),
    ('kind = "modbus-tcp"\nhost = "10.0.0.5"\nport = "abc"\n', "port 'abc'"),
    ('kind = "serial"\nport = "abc"\n', "not a serial port"),
    ('kind = "serial"\nport = 3\n', "not a serial port"),
]


@pytest.mark.parametrize("old, new, key", PROFILE_RANGES)
def test_profile_values_have_ranges(old, new, key, tmp_path, capsys):
    text = DEMO.read_text()
    assert old in text
    prof = tmp_path / "b.toml"
    prof.write_text(text.replace(old, new, 1))
    _refused(["plan", str(prof)], capsys, key)


@pytest.mark.parametrize("section, words", SOURCES)
def test_source_scale_and_port_have_ranges(section, words, tmp_path, capsys):
    text = DEMO.read_text()
    assert SOURCE in text
    prof = tmp_path / "b.toml"
    prof.write_text(text.replace(SOURCE, SOURCE + "[supplies.source]\n" + section, 1))
    _refused(["plan", str(prof)], capsys, words)


@pytest.mark.parametrize("date", ["1900-01-01", "2199-01-01"])
def test_profile_due_dates_have_ranges(date, tmp_path, capsys):
    prof = tmp_path / "b.toml"
    prof.write_text(DEMO.read_text().replace(SOURCE, SOURCE + f"retest_due = {date}\n", 1))
    _refused(["plan", str(prof)], capsys, "retest_due", "out of range")


@pytest.mark.parametrize("argv", [
    ["hold", "--gas", "n2", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar", "--duration", "14 h",
     "--gauge-range", "250 bar", "--gauge-class", "١.٦"],
    ["orifice", "--gas", "n2", "--diameter", "0.2 mm", "--upstream", "2 bar", "--downstream", "0 bar",
     "--temperature", "20 degC", "--cd", "٠.٦"],
    ["export", "٣"],
    ["reading", *DEMO_ARGS, "--at", "٠٩:٣٠"],
])
def test_bare_numbers_and_times_take_ascii_digits_only(argv, capsys):
    _refused(argv, capsys, "digits 0-9")


@pytest.mark.parametrize("char", ["\u202e", "\u2067", "\u200b"])
def test_invisible_characters_in_typed_labels_are_refused(char, capsys):
    _refused(["swap", *DEMO_ARGS, "--label", f"N2{char}-77"], capsys, "cylinder label", f"U+{ord(char):04X}")


@pytest.mark.parametrize("old, new, words", [
    ('water_volume = "50 L"', 'water_volume = "1e-30 L"', "water_volume"),
    ('duration = "4 h"', 'duration = "1e-30 h"', "session duration"),
    ('repetition_rate = "12 Hz"', 'repetition_rate = "1e-30 Hz"', "repetition_rate"),
    ('per_shot = "1.5 cm3"', 'per_shot = "1e-30 cm3"', "per_shot"),
    ('flow = "0.25 slpm"', 'flow = "1e-30 slpm"', "flow of draw"),
])
def test_tiny_profile_values_are_out_of_range(old, new, words, tmp_path, capsys):
    # each was accepted and assessed before issue 27 (a session of 1e-26 s, a draw of 1e-30 slpm)
    text = DEMO.read_text()
    assert old in text
    prof = tmp_path / "b.toml"
    prof.write_text(text.replace(old, new, 1))
    _refused(["plan", str(prof)], capsys, words, "out of range")


def test_imported_readings_get_the_same_dates_digits_and_text_checks(tmp_path, capsys):
    log = tmp_path / "old.csv"
    log.write_text("time,pressure\n1970-01-01T00:00,60 bar\n2026-11-30T09:00,6\u0663 bar\n"
                   "2026-11-30T10:00,60 bar\u202e\n", encoding="utf-8")
    code, out, err = _run(["reading", str(DEMO), "n2-A", "--from", str(log)], capsys)
    text = out + err
    assert code == 2 and "0 recorded" in text and "3 refused" in text, text
    assert "from 1990-01-01" in text and "digits 0-9" in text and "U+202E" in text and "\u202e" not in text


def test_the_core_range_checks_carry_their_data_too():
    from benchwarden.errors import InputError, RangeError
    from benchwarden.units import check_positive, check_range

    with pytest.raises(RangeError) as exc:
        check_range(9.0, "cylinder volume", 0.0, 5.0, "m³")
    assert (exc.value.what, exc.value.value, exc.value.lo, exc.value.hi) == ("cylinder volume", 9.0, 0.0, 5.0)
    assert str(exc.value) == "cylinder volume 9 m³ is out of range: above 0 m³ and at most 5 m³"  # worded from the data
    with pytest.raises(InputError):  # still an InputError (and a ValueError) for every caller
        check_positive(-1.0, "spacing", "m")


def test_the_app_tools_apply_the_same_ranges_as_the_commands():
    from benchwarden.errors import RangeError
    from benchwarden.tui.screens.tools import _hold_duration
    from benchwarden.units.limits import RANGES, in_range

    with pytest.raises(RangeError, match="from 1 min to a year"):
        _hold_duration(1e-7, "0.0000001 s")  # the app's hold tool, as `hold --duration` on the command line
    assert _hold_duration(3600.0, "1 h") == 3600.0
    for name, r in RANGES.items():  # every named range admits a value inside it and refuses one outside
        inside = r.lo if r.lo is not None else r.hi
        assert in_range(name, inside) == inside
        with pytest.raises(RangeError):
            in_range(name, (r.lo or 1.0) / 10 if r.lo else (r.hi or 1.0) * 10)
