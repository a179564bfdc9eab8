"""A generated bad-input suite: every option of every sub-command that takes a value is given
values from a grammar of wrong ones (no number, no unit, the wrong unit, NaN, infinities,
negative, huge, thousands separators and decimal commas, control characters and escape
sequences, a 100 kB string). Each case must exit with status 2, print exactly one line under
200 characters on stderr that names the option's value or quantity, print nothing on stdout,
raise no traceback and write nothing. A hypothesis part adds random text with a fixed seed.

The counts are printed at the end of the run (cases tried, misbehaved)."""

from __future__ import annotations

import os
import tempfile
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
