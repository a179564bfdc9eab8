"""Sessions from the command line and scripts that can see a STOP (issue 23 contract)."""

import json
from pathlib import Path

import pytest
from clitools import run

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "profiles" / "demo-teaching-bench.toml")


def _uncontrolled(tmp_path: Path) -> str:
    p = tmp_path / "uncontrolled.toml"
    p.write_text(Path(DEMO).read_text().replace("oxygen_monitor = true", "oxygen_monitor = false"))
    return str(p)




@pytest.mark.parametrize("command", ["plan", "status", "checklist"])
def test_fail_on_exits_3_with_the_output_written(capsys, tmp_path, command):
    prof = _uncontrolled(tmp_path)
    journal = ["--journal", str(tmp_path / "j.sqlite")]
    code, out, _ = run(capsys, *journal, command, prof, "--fail-on", "stop")
    assert code == 3 and out.strip()
    code, _, _ = run(capsys, *journal, command, prof)
    assert code == 0  # without --fail-on: 0 whatever it finds
    # the shipped demo has no STOP: --fail-on stop passes, --fail-on attention does not
    assert run(capsys, *journal, command, DEMO, "--fail-on", "stop")[0] == 0
    assert run(capsys, *journal, command, DEMO, "--fail-on", "attention")[0] == 3


def test_fail_on_refuses_an_unknown_severity(capsys):
    code, _, err = run(capsys, "plan", DEMO, "--fail-on", "panic")
    assert code == 2 and "--fail-on" in err


def test_session_start_refuses_over_a_stop_and_lists_it(capsys, tmp_path):
    prof, j = _uncontrolled(tmp_path), str(tmp_path / "j.sqlite")
    code, out, err = run(capsys, "--journal", j, "session", "start", prof, "--operator", "R. Okafor")
    assert code == 2 and "STOP" in err and "room-release" in err and "Traceback" not in err
    assert json.loads(run(capsys, "--journal", j, "sessions", "--json")[1])["sessions"] == []


def test_session_start_with_accept_stop_records_who_which_and_why(capsys, tmp_path):
    prof, j = _uncontrolled(tmp_path), str(tmp_path / "j.sqlite")
    code, out, _ = run(capsys, "--journal", j, "session", "start", prof, "--operator", "R. Okafor",
                       "--at", "2026-12-01T09:30", "--accept-stop", "cylinder valve closed; door open")
    assert code == 0 and "accepted STOP room-release" in out
    code, out, _ = run(capsys, "--journal", j, "session", "stop", prof, "--shots", "14400", "--note",
                       "gap 2 re-shimmed", "--at", "2026-12-01T11:00")
    assert code == 0
    (s,) = json.loads(run(capsys, "--journal", j, "sessions", "--json")[1])["sessions"]
    assert s["operator"] == "R. Okafor" and s["shots"] == 14400 and s["note"] == "gap 2 re-shimmed"
    assert s["started_at"].startswith("2026-12-01T09:30") and s["stopped_at"].startswith("2026-12-01T11:00")
    (acc,) = s["accepted_stops"]
    assert acc["code"] == "room-release" and acc["reason"] == "cylinder valve closed; door open"
    assert acc["operator"] == "R. Okafor"


@pytest.mark.parametrize(("argv", "fragment"), [
    (["session", "stop", DEMO], "no session"),
    (["session", "start", DEMO, "--at", "2999-01-01T00:00"], "future"),
])
def test_session_bad_input_exits_2_with_one_line(capsys, tmp_path, argv, fragment):
    code, _, err = run(capsys, "--journal", str(tmp_path / "j.sqlite"), *argv)
    assert code == 2 and fragment in err and len(err.strip().splitlines()) == 1


def test_session_stop_shots_must_be_a_whole_number(capsys, tmp_path):
    j = str(tmp_path / "j.sqlite")
    assert run(capsys, "--journal", j, "session", "start", DEMO)[0] == 0
    code, _, err = run(capsys, "--journal", j, "session", "stop", DEMO, "--shots", "1,000")
    assert code == 2 and "--shots" in err
    assert run(capsys, "--journal", j, "session", "stop", DEMO, "--shots", "1000")[0] == 0
