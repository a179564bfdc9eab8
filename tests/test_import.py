"""Bulk import of readings (issue 28): checked like typed readings, all or nothing, idempotent."""

import json
from pathlib import Path

import pytest
from clitools import run

from benchwarden.storage.journal import Journal

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "profiles" / "demo-teaching-bench.toml")
BENCH = "Demo: Larkfield teaching lab, bench 2 (N2 laser)"




def _imp(capsys, tmp_path, text, *extra):
    f = tmp_path / "log.csv"
    f.write_text(text)
    return run(capsys, "--journal", str(tmp_path / "j.sqlite"), "reading", DEMO, "n2-A", "--from", str(f),
               "--json", *extra)


def _readings(tmp_path):
    with Journal(tmp_path / "j.sqlite") as j:
        return j.supply_readings(BENCH, "n2-A")


def test_import_records_every_row_with_its_units_and_twice_adds_nothing(capsys, tmp_path):
    text = ("time,pressure,temperature,note\n"
            "2026-11-20T09:00,150 bar,20 degC,from the paper log\n"
            "2026-11-21 09:00,2170 psi,68 degF,\n"          # psi and °F honoured
            "2026-11-22T09:00+01:00,149.5 bar(a),,\n")      # absolute, the ambient temperature
    code, out, _ = _imp(capsys, tmp_path, text)
    assert code == 0 and json.loads(out) == {"recorded": 3, "skipped": 0, "refused": []}
    rows = _readings(tmp_path)
    # 2170 psi = 149.62 bar (1 psi = 6894.757 Pa, exact by definition of the pound and inch)
    assert rows[1].pressure_abs_pa - rows[1].ambient_pa == pytest.approx(2170 * 6894.757293168361)
    assert rows[1].temperature_k == pytest.approx(293.15)  # 68 °F = 20 °C exactly
    assert rows[2].pressure_abs_pa == pytest.approx(149.5e5)
    assert rows[0].note == "from the paper log" and rows[1].note is None
    code, out, _ = _imp(capsys, tmp_path, text)
    assert code == 0 and json.loads(out) == {"recorded": 0, "skipped": 3, "refused": []}
    assert len(_readings(tmp_path)) == 3


def test_a_refused_row_records_nothing_and_names_its_line(capsys, tmp_path):
    text = ("time,pressure\n"
            "2026-11-20T09:00,150 bar\n"
            "2026-11-21T09:00,63.75\n"          # no unit
            "2026-11-22T09:00,\"63,75 bar\"\n")  # decimal comma
    code, out, _ = _imp(capsys, tmp_path, text)
    d = json.loads(out)
    assert code == 2 and d["recorded"] == 0 and [r["line"] for r in d["refused"]] == [3, 4]
    assert _readings(tmp_path) == []


def test_implausible_rows_are_listed_and_recorded_only_when_confirmed(capsys, tmp_path):
    text = "time,pressure\n2026-11-20T09:00,150 bar\n2026-11-21T09:00,175 bar\n"
    code, out, _ = _imp(capsys, tmp_path, text)
    d = json.loads(out)
    assert code == 2 and d["recorded"] == 0 and d["refused"][0]["line"] == 3
    assert "higher than the last reading" in d["refused"][0]["reason"]
    code, out, _ = _imp(capsys, tmp_path, text, "--confirm")
    assert code == 0 and json.loads(out)["recorded"] == 2


@pytest.mark.parametrize(("text", "fragment"), [
    ("", "empty"),
    ("when,pressure\n2026-11-20T09:00,150 bar\n", "not one of"),
    ("time,pressure,weight\n", "one of"),
    ("time,pressure\n09:00,150 bar\n", "needs a date"),
    ("time,pressure\n2999-01-01T09:00,150 bar\n", "future"),
])
def test_bad_files_say_why(capsys, tmp_path, text, fragment):
    code, out, err = _imp(capsys, tmp_path, text)
    assert code == 2 and fragment in (out + err) and "Traceback" not in err


def test_from_refuses_a_non_regular_file(capsys, tmp_path):
    code, _, err = run(capsys, "--journal", str(tmp_path / "j.sqlite"), "reading", DEMO, "n2-A", "--from", "/dev/zero")
    assert code == 2 and "not a regular file" in err


def test_a_refused_row_is_worded_in_the_display_unit(capsys, tmp_path):
    # the demo's n2-A cylinder is tested at 300 bar; 320 bar is refused and the reason is worded
    # from the row's error data in the unit asked for: 300 bar = 4351 psi (1 psi = 6894.757 Pa)
    text = "time,pressure\n2026-11-20T09:00,320 bar\n"
    code, out, _ = _imp(capsys, tmp_path, text, "--pressure-unit", "psi")
    d = json.loads(out)
    assert code == 2 and d["refused"][0]["line"] == 2
    assert "at most the cylinder's test pressure 4351 psig" in d["refused"][0]["reason"]
    assert _readings(tmp_path) == []
