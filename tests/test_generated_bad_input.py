"""A generated bad-input suite: every option of every sub-command that takes a value is given
values from a grammar of wrong ones (no number, no unit, the wrong unit, NaN, infinities,
negative, huge, thousands separators and decimal commas, control characters and escape
sequences, a 100 kB string). Each case must exit with status 2, print exactly one line under
200 characters on stderr that names the option's value or quantity, print nothing on stdout,
raise no traceback and write nothing. A hypothesis part adds random text with a fixed seed.

Generated classes (issue 27), each over every valued option or every path a command takes:
invisible format characters (every Unicode Cf character, in option values and in each text line of
a profile, refused with the line), digits of every other decimal system (unicodedata), long units,
options that exclude each other (refused naming both), dates out of range, foreign databases
(random table sets, other programs' application ids, non-SQLite files: never written), the
journal's side files however spelt as outputs, and huge or non-regular files (devices, a pipe, a
folder, sparse files) as profiles, checklist items and hold-test logs.

The counts are printed at the end of the run (cases tried, misbehaved)."""

from __future__ import annotations

import argparse
import os
import re
import tempfile
import unicodedata
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from benchwarden.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "profiles" / "demo-teaching-bench.toml")

#: the demo with a live gauge (a logger's file), for ``watch``
LIVE = Path(tempfile.mkdtemp(prefix="benchwarden-live-")) / "live.toml"
LIVE.write_text(Path(DEMO).read_text().replace(
    'gauge = { range = "315 bar", accuracy_class = 1.6 }\n',
    'gauge = { range = "315 bar", accuracy_class = 1.6 }\n[supplies.source]\nkind = "file"\npath = "gauge.log"\n', 1))

#: valid argv per command; the options in VALUED take quantities
VALID: dict[str, list[str]] = {
    "contents": ["contents", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC"],
    "heat": ["heat", "--gas", "n2", "--pressure", "200 bar", "--temperature", "15 degC", "--to", "40 degC"],
    "runtime": ["runtime", "--gas", "n2", "--volume", "50 L", "--pressure", "200 bar", "--temperature", "15 degC",
                "--reserve", "10 bar", "--flow", "2 slpm"],
    "throttle": ["throttle", "--gas", "n2", "--inlet", "150 bar", "--outlet", "3 bar", "--temperature", "20 degC"],
    "gap": ["gap", "--gas", "n2", "--spacing", "2 mm", "--pressure", "3 bar", "--temperature", "20 degC"],
    "orifice": ["orifice", "--gas", "n2", "--diameter", "0.2 mm", "--upstream", "2 bar", "--downstream", "0 bar",
                "--temperature", "20 degC"],
    "hold": ["hold", "--gas", "n2", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar", "--duration",
             "14 h", "--t-start", "21 degC", "--t-end", "18 degC", "--gauge-range", "250 bar", "--gauge-class", "1.6",
             "--target", "5 sccm"],
    "room": ["room", "--gas", "n2", "--room-volume", "40 m3", "--leak", "5 slpm", "--ventilation", "2/h",
             "--temperature", "20 degC"],
    "plan": ["plan", DEMO, "--leak", "5 sccm"],
    "reading": ["reading", DEMO, "n2-A", "--pressure", "60 bar", "--temperature", "20 degC", "--at", "now"],
    "swap": ["swap", DEMO, "n2-A", "--pressure", "190 bar", "--temperature", "20 degC", "--retest", "2031-01-01"],
    "watch": ["watch", str(LIVE), "--for", "1 s", "--every", "1 s"],
    "simulate": ["simulate", "--gas", "n2", "--volume", "50 L", "--pressure", "150 bar", "--temperature", "20 degC",
                 "--leak", "40 sccm", "--draw", "2 slpm", "--for", "1 s", "--port", "1"],
}
VALUED = {
    "contents": ["--gas", "--volume", "--pressure", "--temperature"],
    "heat": ["--gas", "--pressure", "--temperature", "--to"],
    "runtime": ["--volume", "--pressure", "--temperature", "--reserve", "--flow"],
    "throttle": ["--inlet", "--outlet", "--temperature"],
    "gap": ["--spacing", "--pressure", "--temperature"],
    "orifice": ["--diameter", "--upstream", "--downstream", "--temperature"],
    "hold": ["--volume", "--start", "--end", "--duration", "--t-start", "--t-end", "--gauge-range", "--target"],
    "room": ["--room-volume", "--leak", "--ventilation", "--temperature"],
    "plan": ["--leak"],
    "reading": ["--pressure", "--temperature", "--at"],
    "swap": ["--pressure", "--temperature", "--retest"],
    "watch": ["--for", "--every"],
    "simulate": ["--volume", "--pressure", "--temperature", "--leak", "--draw", "--for"],
}
#: the unit each option is written with, for values like "nan <unit>"
UNIT = {"--volume": "L", "--room-volume": "m3", "--pressure": "bar", "--inlet": "bar", "--outlet": "bar",
        "--upstream": "bar", "--downstream": "bar", "--start": "bar", "--end": "bar", "--reserve": "bar",
        "--gauge-range": "bar", "--temperature": "degC", "--to": "degC", "--t-start": "degC", "--t-end": "degC",
        "--spacing": "mm", "--diameter": "mm", "--duration": "h", "--flow": "slpm", "--leak": "slpm",
        "--target": "sccm", "--ventilation": "m3/h", "--gas": "", "--at": "", "--retest": "", "--draw": "slpm",
        "--for": "s", "--every": "s"}


def bad_values(opt: str) -> list[str]:
    u = UNIT[opt]
    common = ["", "abc", "\x1b]0;owned\x07", "5\x00 bar", "9" * 100_000, "[/]", "1,000 " + u, "2,5 " + u,
              "1 000 " + u]
    if not u:
        return common
    return common + [f"nan {u}", f"inf {u}", f"-inf {u}", f"1e400 {u}", "12 furlongs", "12", f"-1e9 {u}",
                     f"1e30 {u}"]


CASES = [(cmd, opt, v) for cmd, opts in VALUED.items() for opt in opts for v in bad_values(opt)]
TRIED: list[int] = [0]
MISBEHAVED: list[str] = []
LAST_ERR: list[str] = [""]


def _run(argv: list[str], capsys) -> tuple[int, str, str]:
    try:
        code = main(argv)
    except SystemExit as exc:
        code = int(exc.code or 0)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def workdir(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _check(argv: list[str], capsys, workdir: Path, journal_before: bytes | None) -> None:
    TRIED[0] += 1
    code, out, err = _run(argv, capsys)
    LAST_ERR[0] = err
    lines = err.splitlines()
    problems = []
    if code != 2:
        problems.append(f"exit {code}")
    if out:
        problems.append("stdout not empty")
    if len(lines) != 1 or len(lines[0]) >= 200:
        problems.append(f"{len(lines)} stderr lines, first {len(lines[0]) if lines else 0} chars")
    if "Traceback" in err or "\x1b" in err or "\x00" in err:
        problems.append("traceback or control characters on stderr")
    if any(unicodedata.category(c) == "Cf" for c in err):
        problems.append("an invisible format character on stderr")
    written = [p.name for p in workdir.iterdir() if p.name != "journal.sqlite3"]
    if written:
        problems.append(f"wrote {written}")
    journal = Path(os.environ["BENCHWARDEN_JOURNAL"])
    if (journal.read_bytes() if journal.exists() else None) != journal_before:
        problems.append("journal changed")
    if problems:
        MISBEHAVED.append(f"{argv[0]} {problems}")
    assert not problems, (argv[:1], [a[:40] for a in argv], problems, err[:300])


@pytest.mark.parametrize("cmd, opt, value", CASES, ids=[f"{c}{o}-{i}" for i, (c, o, _) in enumerate(CASES)])
def test_generated_bad_value_is_one_line_exit_2_nothing_written(cmd, opt, value, capsys, workdir):
    argv = list(VALID[cmd])
    argv[argv.index(opt) + 1] = value
    journal = Path(os.environ["BENCHWARDEN_JOURNAL"])
    _check(argv, capsys, workdir, journal.read_bytes() if journal.exists() else None)


@settings(max_examples=150, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(cmd=st.sampled_from(sorted(VALUED)), data=st.data())
def test_random_text_in_any_quantity_is_refused_cleanly(cmd, data, capsys, workdir):
    opt = data.draw(st.sampled_from(VALUED[cmd]))
    # random text that is not a plain number and has no known unit after it
    value = data.draw(st.text(alphabet=st.characters(blacklist_categories=("Cs",)), min_size=1, max_size=30)
                      .filter(lambda t: not any(ch.isdigit() for ch in t) and t.strip() not in ("now",)))
    argv = list(VALID[cmd])
    argv[argv.index(opt) + 1] = value
    if cmd == "contents" and opt == "--gas" and value.strip().lower() in {"n2", "air"}:
        return
    journal = Path(os.environ["BENCHWARDEN_JOURNAL"])
    _check(argv, capsys, workdir, journal.read_bytes() if journal.exists() else None)


# ----------------------------------------------------------------------------- generated classes (issue 27)
# Each class is a generator over every valued option (or every path a command takes), not a list of
# the cases the issue reported; the values come from the Unicode database and the tables above.

#: invisible format characters: every Unicode Cf character below U+30000 (unicodedata), bidi
#: embeddings, overrides and isolates first
INVISIBLE = sorted({c for c in map(chr, range(0x80, 0x30000)) if unicodedata.category(c) == "Cf"},
                   key=lambda c: (c not in "\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069", c))
#: the zero of every decimal digit system but ASCII's (unicodedata: category Nd, value 0)
ZEROS = [c for c in map(chr, range(0x80, 0x20000)) if unicodedata.category(c) == "Nd" and unicodedata.digit(c) == 0]
PAIRS = [(cmd, opt) for cmd, opts in VALUED.items() for opt in opts]


def _valid(cmd: str, opt: str) -> str:
    return VALID[cmd][VALID[cmd].index(opt) + 1]


def _invisible_cases() -> list[tuple[str, str, str]]:
    out = []
    for i, (cmd, opt) in enumerate(PAIRS):
        v = _valid(cmd, opt)
        for k, where in enumerate((0, len(v) // 2, len(v))):
            c = INVISIBLE[(3 * i + k) % len(INVISIBLE)]
            out.append((cmd, opt, v[:where] + c + v[where:]))
    return out


def _digit_cases() -> list[tuple[str, str, str]]:
    out = []
    for i, (cmd, opt) in enumerate(PAIRS):
        v = _valid(cmd, opt)
        if not any(ch.isdigit() for ch in v):
            continue
        zero = ord(ZEROS[i % len(ZEROS)])
        every = "".join(chr(zero + int(ch)) if "0" <= ch <= "9" else ch for ch in v)
        first = next(j for j, ch in enumerate(v) if "0" <= ch <= "9")
        one = v[:first] + chr(ord(ZEROS[(i + 7) % len(ZEROS)]) + int(v[first])) + v[first + 1:]
        out += [(cmd, opt, every), (cmd, opt, one)]
    return out


def _long_cases() -> list[tuple[str, str, str]]:
    out = []
    for cmd, opt in PAIRS:
        unit = UNIT[opt] or "x"
        for n in (101, 2_000, 100_000):
            out.append((cmd, opt, ("1 " + unit * n)[:max(n, 101)]))
        out.append((cmd, opt, "1" + "0" * 120 + " " + unit))
    return out


GENERATED = ([("invisible", *c) for c in _invisible_cases()] + [("digits", *c) for c in _digit_cases()]
             + [("long", *c) for c in _long_cases()])


@pytest.mark.parametrize("kind, cmd, opt, value", GENERATED,
                         ids=[f"{k}-{c}{o}-{i}" for i, (k, c, o, _) in enumerate(GENERATED)])
def test_generated_invisible_digits_and_long_values_are_refused(kind, cmd, opt, value, capsys, workdir):
    argv = list(VALID[cmd])
    argv[argv.index(opt) + 1] = value
    journal = Path(os.environ["BENCHWARDEN_JOURNAL"])
    _check(argv, capsys, workdir, journal.read_bytes() if journal.exists() else None)


#: options that exclude each other, and a valid value for each
EXCLUSIVE = [
    (("--ambient", "100 kPa"), ("--altitude", "300 m")),
    (("--volume", "50 L"), ("--line-length", "3 m")),
    (("--volume", "50 L"), ("--bore", "4 mm")),
    (("--pressure", "200 bar"), ("--gross", "70 kg")),
    (("--pressure", "200 bar"), ("--tare", "60 kg")),
    (("--pressure", "60 bar"), ("--weight", "70 kg")),
    (("--start", "152 bar"), ("--log", str(ROOT / "examples" / "hold-log.csv"))),
    (("--duration", "14 h"), ("--log", str(ROOT / "examples" / "hold-log.csv"))),
    (("--leak", "5 slpm"), ("--release", "9 m3")),
]


def _accepts(cmd: str, opt: str) -> bool:
    from benchwarden.cli import build_parser

    parser = build_parser([cmd])
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction)).choices[cmd]
    return any(opt in a.option_strings for a in sub._actions)


CONFLICTS = [(cmd, a, b) for cmd in VALID for a, b in EXCLUSIVE if _accepts(cmd, a[0]) and _accepts(cmd, b[0])]


@pytest.mark.parametrize("cmd, a, b", CONFLICTS, ids=[f"{c}{a[0]}{b[0]}" for c, a, b in CONFLICTS])
def test_generated_conflicting_options_are_refused_naming_both(cmd, a, b, capsys, workdir):
    argv = [x for x in VALID[cmd]]
    for opt, value in (a, b):
        if opt in argv:
            argv[argv.index(opt) + 1] = value
        else:
            argv += [opt, value]
    journal = Path(os.environ["BENCHWARDEN_JOURNAL"])
    _check(argv, capsys, workdir, journal.read_bytes() if journal.exists() else None)
    assert a[0] in LAST_ERR[0] and b[0] in LAST_ERR[0], LAST_ERR[0]


def _date_cases() -> list[tuple[str, str]]:
    import datetime as dt

    far = dt.date.today().year + 16
    years = [1, 1000, 1899, 1900, 1969, 1970, 1989]
    out = [("--at", f"{y:04d}-01-01T00:00") for y in years] + [("--at", f"{y:04d}-06-30") for y in years[::2]]
    out += [("--retest", f"{y:04d}-01-01") for y in years + [far, 2200, 9999]]
    out += [("--at", f"{far}-01-01T00:00"), ("--at", "9999-12-31T23:59")]
    return out


DATES = _date_cases()


@pytest.mark.parametrize("opt, value", DATES, ids=[f"{o}-{v}" for o, v in DATES])
def test_generated_dates_out_of_range_are_refused(opt, value, capsys, workdir):
    cmd = "reading" if opt == "--at" else "swap"
    argv = list(VALID[cmd])
    argv[argv.index(opt) + 1] = value
    journal = Path(os.environ["BENCHWARDEN_JOURNAL"])
    _check(argv, capsys, workdir, journal.read_bytes() if journal.exists() else None)


def _string_lines() -> list[tuple[int, str]]:
    lines = Path(DEMO).read_text().splitlines()
    return [(i, line) for i, line in enumerate(lines) if re.match(r'^\s*[a-z_]+\s*=\s*"', line)]


PROFILE_TEXT = [(i, line, INVISIBLE[n % len(INVISIBLE)]) for n, (i, line) in enumerate(_string_lines())]


@pytest.mark.parametrize("index, line, char", PROFILE_TEXT, ids=[f"line{i + 1}" for i, _, _ in PROFILE_TEXT])
def test_generated_invisible_characters_in_profile_text_are_refused_with_the_line(index, line, char, tmp_path,
                                                                                   capsys):
    lines = Path(DEMO).read_text().splitlines()
    quote = line.index('"')
    lines[index] = line[:quote + 1] + char + line[quote + 1:]
    prof = tmp_path / "b.toml"
    prof.write_text("\n".join(lines) + "\n")
    code, out, err = _run(["plan", str(prof)], capsys)
    assert code == 2 and not out and len(err.splitlines()) == 1, err
    assert f"b.toml:{index + 1}:" in err and f"U+{ord(char):04X}" in err and char not in err, err


def _foreign_shapes() -> list[tuple[str, bytes | None, frozenset[str], int, int]]:
    """Databases that are not ours: random table sets (application id 0) that are not exactly a
    pre-id journal's, other programs' application ids, and files that are not SQLite at all."""
    import random

    from benchwarden.storage.journal_file import PRE_ID_TABLES

    rnd = random.Random(27)
    vocabulary = ["sessions", "readings", "notes", "hold_tests", "changes", "contacts", "streams", "alarms", "log"]
    shapes = []
    while len(shapes) < 16:
        tables = frozenset(rnd.sample(vocabulary, rnd.randint(1, 5)))
        version = rnd.randint(0, 4)
        if PRE_ID_TABLES.get(version) != tables:
            shapes.append((f"tables-{len(shapes)}", None, tables, 0, version))
    for app_id in (1, 0x5053514C, 0x4753424B, 0x7FFFFFFF):
        shapes.append((f"app-id-{app_id:x}", None, frozenset({"sessions", "readings", "notes"}), app_id, 3))
    shapes.append(("not-sqlite", b"name,pressure\nA,200\n" * 20, frozenset(), 0, 0))
    shapes.append(("short-header", b"SQLite format 3\x00" + b"\x00" * 30, frozenset(), 0, 0))
    shapes.append(("random-bytes", bytes(rnd.randrange(256) for _ in range(4096)), frozenset(), 0, 0))
    return shapes


FOREIGN = _foreign_shapes()
JOURNAL_COMMANDS = [["reading", DEMO, "n2-A", "--pressure", "60 bar", "--at", "2026-12-01T09:00"], ["sessions"],
                    ["status", DEMO], ["plan", DEMO], ["export", "1"], ["checklist", DEMO]]


@pytest.mark.parametrize("name, raw, tables, app_id, version", FOREIGN, ids=[f[0] for f in FOREIGN])
def test_generated_foreign_databases_are_never_written(name, raw, tables, app_id, version, tmp_path, capsys):
    import sqlite3

    path = tmp_path / "other.db"
    if raw is not None:
        path.write_bytes(raw)
    else:
        db = sqlite3.connect(path)
        for t in sorted(tables):
            db.execute(f"CREATE TABLE {t} (id INTEGER PRIMARY KEY, x TEXT)")
        db.execute(f"PRAGMA application_id = {app_id}")
        db.execute(f"PRAGMA user_version = {version}")
        db.commit()
        db.close()
    before = path.read_bytes()
    for argv in JOURNAL_COMMANDS:
        code, out, err = _run([*argv, "--journal", str(path)], capsys)
        assert code == 2 and len(err.splitlines()) == 1 and "untouched" in err, (argv, err)
        assert path.read_bytes() == before
        assert sorted(p.name for p in tmp_path.iterdir()) == ["other.db"]


def _side_paths(tmp: Path, target: Path) -> list[str]:
    """One file spelt every way we know: absolute, relative, ./, through .., doubled slashes, a
    symlink to it, a symlink to its folder (a hard link is tested with the journal itself)."""
    (tmp / "sub").mkdir(exist_ok=True)
    link, folder = tmp / f"l{target.name}", tmp / "folder"
    if not link.is_symlink():
        link.symlink_to(target)
    if not folder.is_symlink():
        folder.symlink_to(tmp)
    rel = os.path.relpath(target, tmp)
    return [str(target), rel, "./" + rel, f"sub/../{rel}", str(tmp) + "//" + target.name, str(link),
            str(folder / target.name), f"folder/sub/../{rel}"]


SUFFIXES = ["", "-wal", "-shm", "-journal"]


@pytest.mark.parametrize("suffix", SUFFIXES)
@pytest.mark.parametrize("cmd", ["checklist", "export"])
def test_generated_side_file_paths_are_never_outputs(suffix, cmd, tmp_path, capsys, monkeypatch):
    from benchwarden.storage.journal import Journal

    monkeypatch.chdir(tmp_path)
    journal = tmp_path / "j.sqlite3"
    with Journal(journal) as j:
        sid = j.start_session("b", None, "2026-12-01T09:00:00+00:00")
        j.add_reading(sid, "s", "2026-12-01T09:05:00+00:00", 15e6, "149 bar", 293.15, "2026-12-01T09:05:00+00:00")
        target = Path(str(journal) + suffix)
        for spelt in _side_paths(tmp_path, target):
            argv = ["checklist", DEMO] if cmd == "checklist" else ["export", str(sid)]
            TRIED[0] += 1
            code, out, err = _run([*argv, "--output", spelt, "--force", "--journal", str(journal)], capsys)
            assert code == 2 and "-wal/-shm/-journal" in err and len(err.splitlines()) == 1, (spelt, err)
    with Journal(journal) as j:
        assert [r.pressure_text for r in j.readings(sid)] == ["149 bar"]


def _bad_files(tmp: Path) -> list[tuple[str, str]]:
    """Files that are not a text file of sane size: devices, a pipe, a folder, sparse huge files, a
    symlink to a device."""
    fifo, folder, huge, link = tmp / "pipe", tmp / "folder.toml", tmp / "huge.toml", tmp / "link.toml"
    os.mkfifo(fifo)
    folder.mkdir()
    with open(huge, "wb") as fh:
        fh.truncate(50_000_000)  # sparse: costs no disk
    link.symlink_to("/dev/zero")
    return [("dev-zero", "/dev/zero"), ("dev-null", "/dev/null"), ("dev-urandom", "/dev/urandom"),
            ("fifo", str(fifo)), ("folder", str(folder)), ("huge", str(huge)), ("link-to-dev-zero", str(link))]


FILE_USES = ["plan", "checklist", "status", "items", "log"]


@pytest.mark.parametrize("use", FILE_USES)
def test_generated_huge_and_non_regular_files_are_refused(use, tmp_path, capsys):
    for kind, path in _bad_files(tmp_path):
        if use == "items":
            prof = tmp_path / f"b-{kind}.toml"
            prof.write_text(Path(DEMO).read_text() + f'\n[checklist]\nitems = "{path}"\n')
            argv = ["checklist", str(prof)]
        elif use == "log":
            argv = ["hold", "--gas", "n2", "--volume", "50 L", "--log", path]
        else:
            argv = [use, path]
        TRIED[0] += 1
        code, out, err = _run(argv, capsys)
        assert code == 2 and not out and len(err.splitlines()) == 1, (kind, use, err)
        assert Path(path).name in err or path in err, (kind, use, err)


def test_zz_report_counts():
    """Prints the counts for the closing note (runs last in this module)."""
    print(f"\ngenerated bad-input suite: {TRIED[0]} cases tried, {len(MISBEHAVED)} misbehaved")
    assert not MISBEHAVED


# ----------------------------------------------------------------------------- the numbered items


def test_output_never_overwrites_without_force_and_never_the_journal_or_profile(tmp_path, capsys):
    # regression: `export 1 --output JOURNAL` turned the journal into CSV; `checklist bench.toml
    # --output bench.toml` overwrote the profile
    from benchwarden.storage.journal import Journal

    journal = tmp_path / "j.sqlite3"
    with Journal(journal) as j:
        sid = j.start_session("b", None, "2026-12-01T09:00:00+00:00")
        j.add_reading(sid, "s", "2026-12-01T09:05:00+00:00", 15e6, "149 bar", 293.15, "2026-12-01T09:05:00+00:00")
    before = journal.read_bytes()
    code, out, err = _run(["export", str(sid), "--output", str(journal), "--journal", str(journal)], capsys)
    assert code == 2 and "the journal, its -wal/-shm/-journal file or the profile" in err and journal.read_bytes() == before
    prof = tmp_path / "bench.toml"
    prof.write_text(Path(DEMO).read_text())
    code, out, err = _run(["checklist", str(prof), "--output", str(prof), "--force"], capsys)
    assert code == 2 and prof.read_text() == Path(DEMO).read_text()
    target = tmp_path / "c.txt"
    target.write_text("keep me")
    code, out, err = _run(["checklist", str(prof), "--output", str(target)], capsys)
    assert code == 2 and "--force" in err and target.read_text() == "keep me"
    assert _run(["checklist", str(prof), "--output", str(target), "--force"], capsys)[0] == 0
    assert "PRE-SESSION CHECKLIST" in target.read_text()


def test_foreign_and_newer_databases_are_refused_untouched(tmp_path, capsys):
    import sqlite3

    foreign = tmp_path / "contacts.db"
    db = sqlite3.connect(foreign)
    db.execute("CREATE TABLE contacts (name TEXT)")
    db.commit()
    db.close()
    before = foreign.read_bytes()
    code, _, err = _run(["sessions", "--journal", str(foreign)], capsys)
    assert code == 2 and "not a benchwarden journal" in err and foreign.read_bytes() == before
    newer = tmp_path / "newer.sqlite3"
    db = sqlite3.connect(newer)
    db.execute("CREATE TABLE sessions (id INTEGER)")
    db.execute("PRAGMA user_version = 99")
    db.commit()
    db.close()
    before = newer.read_bytes()
    code, _, err = _run(["sessions", "--journal", str(newer)], capsys)
    assert code == 2 and "newer" in err and newer.read_bytes() == before
    assert not Path(str(newer) + "-wal").exists()


def test_tilde_in_the_journal_path_is_the_home_folder(tmp_path, monkeypatch):
    from benchwarden.storage.journal import default_path

    monkeypatch.setenv("HOME", str(tmp_path))
    monkeypatch.setenv("BENCHWARDEN_JOURNAL", "~/j.sqlite3")
    assert default_path() == tmp_path / "j.sqlite3"
    assert default_path("~/other.sqlite3") == tmp_path / "other.sqlite3"


def test_damaged_journal_is_refused_with_how_to_recover(tmp_path, capsys):
    from benchwarden.storage.journal import Journal

    journal = tmp_path / "j.sqlite3"
    with Journal(journal) as j:
        for i in range(300):
            j.add_note(j.start_session("b", None, f"2026-12-01T09:{i % 60:02d}:00"), "2026-12-01T10:00", "x" * 200)
    data = bytearray(journal.read_bytes())
    data[4096 * 3: 4096 * 3 + 200] = b"\xff" * 200  # a corrupt page
    journal.write_bytes(bytes(data))
    code, _, err = _run(["sessions", "--journal", str(journal)], capsys)
    assert code == 2 and (".recover" in err or "not a benchwarden journal" in err or "damaged" in err)


def test_control_characters_never_reach_the_terminal_or_a_spreadsheet(tmp_path, capsys):
    from benchwarden.render.files import clean, csv_cell

    text = Path(DEMO).read_text().replace('name = "Demo: Larkfield teaching lab, bench 2 (N2 laser)"',
                                          'name = "bench\\u001b]0;owned\\u0007"')
    prof = tmp_path / "b.toml"
    prof.write_text(text)
    code, out, err = _run(["plan", str(prof)], capsys)
    assert code == 2 and "\x1b" not in err and "control characters" in err
    assert clean("a\x1b[2Jb") == "ab" and csv_cell("=1+1") == "'=1+1"


def test_a_read_only_journal_does_not_lose_a_computed_hold_test(tmp_path, capsys, monkeypatch):
    from benchwarden.errors import JournalError
    from benchwarden.workflows import holds

    def refuse(*a, **k):
        raise JournalError("journal is read-only")

    monkeypatch.setattr(holds, "store", refuse)
    (tmp_path / "j.sqlite3").write_bytes(b"")
    from benchwarden.storage.journal import Journal

    Journal(tmp_path / "j2.sqlite3").close()
    code, out, err = _run(["hold", "--gas", "n2", "--volume", "50 L", "--start", "152 bar", "--end", "150 bar",
                           "--duration", "14 h", "--journal", str(tmp_path / "j2.sqlite3"), "--json"], capsys)
    assert code == 0 and "leak_rate_sccm" in out and "not stored" in err


def test_three_identical_readings_and_a_tiny_draw_do_not_crash():
    # regression: OverflowError in the observed draw, "date value out of range"
    import datetime as dt

    from benchwarden.core import gas as g
    from benchwarden.workflows.build import observed_draw

    t0 = dt.datetime(2026, 12, 1, 9, 0, tzinfo=dt.UTC)
    rs = [(t0 + dt.timedelta(minutes=10 * i), 61e5, 293.15) for i in range(3)]
    ob = observed_draw(g.parse_gas("nitrogen"), 0.05, 16e5, 1e-4, rs)
    assert ob is not None and ob.reserve_at is None
    rs = [(t0, 61e5, 293.15), (t0 + dt.timedelta(hours=1), 61e5 - 0.1, 293.15)]
    ob = observed_draw(g.parse_gas("nitrogen"), 0.05, 16e5, 1e-4, rs)
    assert ob is not None and ob.reserve_at is None


def test_room_that_starts_below_19_5_percent_does_not_crash(capsys):
    code, out, err = _run(["room", "--gas", "n2", "--room-volume", "30 m3", "--leak", "10 slpm", "--ventilation",
                           "2/h", "--oxygen", "19"], capsys)
    assert code == 0, err
    code, out, err = _run(["room", "--gas", "n2", "--room-volume", "30 m3", "--release", "5 m3", "--oxygen",
                           "19"], capsys)
    assert code == 0, err


def test_dumb_terminal_gets_a_message_not_the_full_screen_app(monkeypatch, capsys):
    monkeypatch.setenv("TERM", "dumb")
    code, out, err = _run([], capsys)
    assert code == 2 and "terminal" in err


def test_zero_rating_and_numbers_in_item_files_are_refused(tmp_path, capsys):
    text = Path(DEMO).read_text()
    assert 'rating = "25 kV"' in text
    prof = tmp_path / "b.toml"
    prof.write_text(text.replace('rating = "25 kV"', 'rating = "0 kV"', 1))
    code, _, err = _run(["plan", str(prof)], capsys)
    assert code == 2 and "rating" in err
    items = tmp_path / "items.toml"
    items.write_text('[[sections]]\nid = "x"\nitems = [{ id = "a", text = 5 }]\n')
    prof.write_text(text + f'\n[checklist]\nitems = "{items}"\n')
    code, _, err = _run(["checklist", str(prof)], capsys)
    assert code == 2 and "must be text" in err
