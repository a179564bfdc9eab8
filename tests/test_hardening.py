"""Hardening, third pass (issue 27): each numbered problem pinned by a regression test named after
it. The generated classes of the same problems are in tests/test_generated_bad_input.py."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

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
